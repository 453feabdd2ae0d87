import { sql, type RawBuilder, type SqlBool } from 'kysely';

/**
 * Keyset paging, the one paging style of the list endpoints: each list has a fixed sort order
 * ending in a unique column, a page is "the next `limit` rows after the key of the last row
 * served", and the key is handed out as an opaque cursor (services/api/schemas/paging.ts). Rows
 * inserted while a client walks the pages never make it see a row twice or miss one.
 */

/** How a key part is compared: text, or a number (float8: epoch ms, risk, ranks). */
export type KeyType = 'text' | 'number';

/** One column of a list's sort order. Times are keyed as epoch ms (`epochMs`) so the key survives JSON. */
export interface SortColumn {
  sql: RawBuilder<unknown>;
  dir: 'asc' | 'desc';
  type: KeyType;
  /** A `real` column compared as itself (so an index on it serves the order); numbers are float8 otherwise. */
  real?: boolean;
}

export type PageKey = ReadonlyArray<string | number>;

/** The types of a sort order's key, to check a cursor against. */
export const keyTypes = (cols: readonly SortColumn[]): KeyType[] => cols.map((c) => c.type);

/** A page of rows and the key after its last row (null: the last page). */
export interface Page<T> {
  items: T[];
  nextKey: PageKey | null;
}

export interface PageRequest {
  limit: number;
  /** The key of the last row of the previous page. */
  after?: PageKey | undefined;
}

/** A timestamp column as whole epoch milliseconds (the key of a time-ordered list). */
export const epochMs = (column: string): RawBuilder<unknown> =>
  sql`floor(extract(epoch from ${sql.ref(column)}) * 1000)::float8`;

const typed = (c: SortColumn, v: string | number) =>
  c.type === 'text' ? sql`${String(v)}::text` : c.real ? sql`${v}::real` : sql`${v}::float8`;

/** `order by` items of the sort order. */
export function orderBySql(cols: readonly SortColumn[]): RawBuilder<unknown> {
  return sql.join(cols.map((c) => sql`${c.sql} ${sql.raw(c.dir)}`));
}

/**
 * The rows after `key` in the sort order: (a > ka) or (a = ka and b < kb) or …, with the
 * comparison of each column following its direction. Always true without a key.
 */
export function afterKeySql(cols: readonly SortColumn[], key: PageKey | undefined): RawBuilder<SqlBool> {
  if (key === undefined) return sql<SqlBool>`true`;
  const alternatives = cols.map((c, i) => {
    const equal = cols.slice(0, i).map((p, j) => sql`${p.sql} = ${typed(p, key[j]!)}`);
    const beyond = sql`${c.sql} ${sql.raw(c.dir === 'asc' ? '>' : '<')} ${typed(c, key[i]!)}`;
    return sql`(${sql.join([...equal, beyond], sql` and `)})`;
  });
  return sql<SqlBool>`(${sql.join(alternatives, sql` or `)})`;
}

/** The sort key columns to select beside a row (raw SQL), named k0, k1, …, read back by `pageOf`. */
export function keyColumnsSql(cols: readonly SortColumn[]): RawBuilder<unknown> {
  return sql.join(cols.map((c, i) => sql`${c.sql} as ${sql.ref(`k${i}`)}`));
}

/** The same for the query builder: `.select(keySelections(cols))`. */
export const keySelections = (cols: readonly SortColumn[]) => cols.map((c, i) => c.sql.as(`k${i}`));

/**
 * The page of `rows` (fetched with limit + 1, each with its k0… key columns), mapped by `view`.
 * @example pageOf(rows, 50, FINDING_ORDER.length, toFindingView)
 */
export function pageOf<R extends Record<string, unknown>, T>(
  rows: readonly R[],
  limit: number,
  width: number,
  view: (row: R) => T,
): Page<T> {
  const kept = rows.slice(0, limit);
  const last = kept[kept.length - 1];
  const nextKey =
    rows.length > limit && last !== undefined
      ? Array.from({ length: width }, (_, i) => {
          const v = last[`k${i}`];
          return typeof v === 'number' ? v : String(v);
        })
      : null;
  return { items: kept.map(view), nextKey };
}
