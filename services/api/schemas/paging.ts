import { Type } from 'typebox';
import { BadRequestError } from '../errors.js';

/**
 * The one paging style of every list endpoint: `?limit=&cursor=`, answered with `nextCursor`
 * (null on the last page). A cursor is the sort key of the last row served, opaque to clients
 * (base64url JSON), so a page never repeats or skips rows when rows are added meanwhile.
 */
export const pageQuery = (defaultLimit: number, maxLimit: number) => ({
  limit: Type.Integer({ minimum: 1, maximum: maxLimit, default: defaultLimit, description: 'most items in one page' }),
  cursor: Type.Optional(Type.String({ minLength: 1, maxLength: 500, description: 'nextCursor of the previous page' })),
});

export const NextCursor = Type.Union([Type.String({ description: 'pass as ?cursor= for the next page' }), Type.Null()], { description: 'null: this is the last page' });

export type CursorKey = ReadonlyArray<string | number | null>;

/** The cursor after a row with this sort key. */
export function encodeCursor(key: CursorKey): string {
  return Buffer.from(JSON.stringify(key), 'utf8').toString('base64url');
}

/** The sort key in a cursor, checked to have `length` string/number parts; 400 otherwise. */
export function decodeCursor(cursor: string | undefined, length: number): CursorKey | undefined {
  if (cursor === undefined) return undefined;
  let key: unknown;
  try {
    key = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8'));
  } catch {
    key = undefined;
  }
  if (!Array.isArray(key) || key.length !== length || !key.every((v) => v === null || typeof v === 'string' || typeof v === 'number')) {
    throw new BadRequestError('cursor is not one this endpoint gave out', 'validation_failed');
  }
  return key as CursorKey;
}

/**
 * The page of `rows` (fetched with limit + 1) and the cursor after its last row.
 * @example page(await query(limit + 1), limit, (r) => [r.at, r.id])
 */
export function page<T>(rows: readonly T[], limit: number, keyOf: (row: T) => CursorKey): { items: T[]; nextCursor: string | null } {
  const items = rows.slice(0, limit);
  const last = items[items.length - 1];
  return { items, nextCursor: rows.length > limit && last !== undefined ? encodeCursor(keyOf(last)) : null };
}
