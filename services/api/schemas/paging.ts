import { Type } from 'typebox';
import { decodeCursorKey, encodeCursorKey, type Page, type PageKey, type SortColumn } from '../../db/keyset.js';
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

const BAD_CURSOR = 'cursor is not one this endpoint gave out';

/**
 * The sort key in a cursor for the order `order` (and, for a list of several orders, its `tag`);
 * 400 for anything else: garbage, another list's or another sort's cursor, a forged key the
 * database would refuse (services/db/keyset.ts `decodeCursorKey`, the one check).
 */
export function decodeCursor(
  cursor: string | undefined,
  order: readonly SortColumn[],
  tag?: string,
): PageKey | undefined {
  if (cursor === undefined) return undefined;
  const key = decodeCursorKey(cursor, order, tag);
  if (key === null) throw new BadRequestError(BAD_CURSOR, 'validation_failed');
  return key;
}

/** The reply's nextCursor for a page (tagged as `decodeCursor` expects it). */
export const nextCursorOf = (p: Page<unknown>, tag?: string): string | null =>
  p.nextKey === null ? null : encodeCursorKey(p.nextKey, tag);
