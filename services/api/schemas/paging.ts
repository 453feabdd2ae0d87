import { Type } from 'typebox';
import type { KeyType, Page, PageKey } from '../../db/keyset.js';
import { BadRequestError } from '../errors.js';

/**
 * The one paging style of every list endpoint: `?limit=&cursor=`, answered with `nextCursor`
 * (null on the last page). A cursor is the sort key of the last row served, opaque to clients
 * (base64url JSON), so a page never repeats or skips rows when rows are added meanwhile
 * (services/db/keyset.ts). A row whose sort key itself changes while a client walks the pages
 * (a finding's severity, a vehicle's risk) may move to a page already served.
 */
export const pageQuery = (defaultLimit: number, maxLimit: number) => ({
  limit: Type.Integer({
    minimum: 1,
    maximum: maxLimit,
    default: defaultLimit,
    description: `most items in one page (at most ${maxLimit})`,
  }),
  cursor: Type.Optional(
    Type.String({ minLength: 1, maxLength: 500, description: 'nextCursor of the previous page (opaque)' }),
  ),
});

export const NextCursor = Type.Union(
  [Type.String({ description: 'pass as ?cursor= for the next page' }), Type.Null()],
  { description: 'null: this is the last page' },
);

export type CursorKey = ReadonlyArray<string | number | null>;

/** The cursor after a row with this sort key. */
export function encodeCursor(key: CursorKey): string {
  return Buffer.from(JSON.stringify(key), 'utf8').toString('base64url');
}

const BAD_CURSOR = 'cursor is not one this endpoint gave out';

/**
 * The sort key in a cursor, checked to have `types.length` parts of those types (or, given a
 * length, string/number parts); 400 otherwise.
 */
export function decodeCursor(cursor: string | undefined, types: number | readonly KeyType[]): PageKey | undefined {
  if (cursor === undefined) return undefined;
  let key: unknown;
  try {
    key = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8'));
  } catch {
    key = undefined;
  }
  const length = typeof types === 'number' ? types : types.length;
  const fits = (v: unknown, i: number) => {
    const type = typeof types === 'number' ? undefined : types[i];
    if (type === 'number') return typeof v === 'number' && Number.isFinite(v);
    if (type === 'text') return typeof v === 'string';
    return typeof v === 'string' || (typeof v === 'number' && Number.isFinite(v));
  };
  if (!Array.isArray(key) || key.length !== length || !key.every(fits))
    throw new BadRequestError(BAD_CURSOR, 'validation_failed');
  return key as PageKey;
}

/** The reply's nextCursor for a page. */
export const nextCursorOf = (p: Page<unknown>): string | null => (p.nextKey === null ? null : encodeCursor(p.nextKey));
