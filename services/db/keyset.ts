import { sql, type RawBuilder, type SqlBool } from 'kysely';

/**
 * Keyset paging, the one paging style of the list endpoints: each list has a fixed sort order
 * ending in a unique column, a page is "the next `limit` rows after the key of the last row
 * served", and the key is handed out as an opaque cursor (services/api/schemas/paging.ts). Rows
 * inserted while a client walks the pages never make it see a row twice or miss one.
 */

/** How a key part is compared: text, or a number (float8: epoch ms, risk, ranks; `real` for a real column). */
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

/**
 * Bounds of a number a key may hold: every number key is an epoch-ms time, a rank or a risk, all
 * within the range of a JavaScript Date (±8.64e15 ms). Beyond it a forged key is refused before the
 * database sees it (a `real` overflows past 3.4e38 and Postgres answers "value out of range").
 */
const KEY_NUMBER_MAX = 8.64e15;
/** Smallest magnitude of a non-zero key number, per column type: below it Postgres underflows (float4/float8 normal minimum). */
const REAL_MIN_NORMAL = 1.1754943508222875e-38;
const FLOAT8_MIN_NORMAL = 2.2250738585072014e-308;
/** Longest text part of a key (ids, names and ISO weeks are far shorter; the cursor itself is at most 500 characters). */
const KEY_TEXT_MAX = 300;
/** A UTF-16 surrogate without its pair: no text Postgres holds. */
const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

/** Whether `v` may be compared against column `c`: the right type, and a value Postgres accepts for it. */
function partFits(c: SortColumn, v: unknown): v is string | number {
  if (c.type === 'text')
    return typeof v === 'string' && v.length <= KEY_TEXT_MAX && !v.includes('\u0000') && !LONE_SURROGATE.test(v);
  if (typeof v !== 'number' || !Number.isFinite(v)) return false;
  const a = Math.abs(v);
  return a === 0 || (a <= KEY_NUMBER_MAX && a >= (c.real ? REAL_MIN_NORMAL : FLOAT8_MIN_NORMAL));
}

/**
 * `parts` as a key of the sort order `cols`, or null when it is not one: the wrong length, a part of
 * the wrong type, a text part with a NUL byte or a lone surrogate (Postgres text cannot hold them),
 * a number out of its column's range. The one check of every key a client sends.
 *
 * @example checkedKey(AT_RISK_ORDER, [42.5, 'V-1']) // [42.5, 'V-1']; checkedKey(AT_RISK_ORDER, [1e39, 'V-1']) // null
 */
export function checkedKey(cols: readonly SortColumn[], parts: unknown): PageKey | null {
  if (!Array.isArray(parts) || parts.length !== cols.length) return null;
  return cols.every((c, i) => partFits(c, parts[i])) ? (parts as PageKey) : null;
}

const BASE64URL = /^[A-Za-z0-9_-]+$/;
const utf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * The opaque cursor of a key: base64url of the JSON array `[tag?, ...key]`. A list with several
 * orders (the fleet page's sorts) tags its cursors with the order, so a cursor of one sort is
 * refused by another.
 */
export function encodeCursorKey(key: PageKey, tag?: string): string {
  return Buffer.from(JSON.stringify(tag === undefined ? key : [tag, ...key]), 'utf8').toString('base64url');
}

/**
 * The key in a cursor made by `encodeCursorKey(key, tag)` for the order `cols`, or null for anything
 * else: not canonical base64url, not UTF-8, not JSON, another tag, or a key `checkedKey` refuses.
 * Never throws.
 *
 * @example decodeCursorKey(encodeCursorKey([42.5, 'V-1']), AT_RISK_ORDER) // [42.5, 'V-1']
 */
export function decodeCursorKey(cursor: string, cols: readonly SortColumn[], tag?: string): PageKey | null {
  if (!BASE64URL.test(cursor)) return null;
  const bytes = Buffer.from(cursor, 'base64url');
  // Buffer skips what is not base64url; only the canonical spelling of the bytes is a cursor we gave out.
  if (bytes.toString('base64url') !== cursor) return null;
  let parts: unknown;
  try {
    parts = JSON.parse(utf8.decode(bytes));
  } catch {
    return null;
  }
  if (tag !== undefined) {
    if (!Array.isArray(parts) || parts[0] !== tag) return null;
    parts = parts.slice(1);
  }
  return checkedKey(cols, parts);
}

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
 * The rows after `key` in the sort order. With every column in one direction it is the row
 * comparison (a, b, …) > (ka, kb, …) (< for desc), which an index on the order takes as the start
 * of its scan. With mixed directions it is a ≥ ka and ((a > ka) or (a = ka and b < kb) or …), the
 * comparison of each column following its direction; the leading a ≥ ka says nothing new but is a
 * plain range bound, so an index still starts at the key's first column (the `or` alone is only a
 * filter, and a deep page would read every row before it). Always true without a key.
 */
export function afterKeySql(cols: readonly SortColumn[], key: PageKey | undefined): RawBuilder<SqlBool> {
  if (key === undefined) return sql<SqlBool>`true`;
  const first = cols[0]!;
  if (cols.every((c) => c.dir === first.dir)) {
    const row = (parts: RawBuilder<unknown>[]) => (parts.length === 1 ? parts[0]! : sql`(${sql.join(parts)})`);
    return sql<SqlBool>`${row(cols.map((c) => c.sql))} ${sql.raw(first.dir === 'asc' ? '>' : '<')} ${row(cols.map((c, i) => typed(c, key[i]!)))}`;
  }
  const alternatives = cols.map((c, i) => {
    const equal = cols.slice(0, i).map((p, j) => sql`${p.sql} = ${typed(p, key[j]!)}`);
    const beyond = sql`${c.sql} ${sql.raw(c.dir === 'asc' ? '>' : '<')} ${typed(c, key[i]!)}`;
    return sql`(${sql.join([...equal, beyond], sql` and `)})`;
  });
  const bound = sql`${first.sql} ${sql.raw(first.dir === 'asc' ? '>=' : '<=')} ${typed(first, key[0]!)}`;
  return sql<SqlBool>`(${bound} and (${sql.join(alternatives, sql` or `)}))`;
}

/** The same order read backwards: every direction flipped (a list's `order=desc` as the reverse of its `asc`). */
export const reversed = (cols: readonly SortColumn[]): SortColumn[] =>
  cols.map((c) => ({ ...c, dir: c.dir === 'asc' ? 'desc' : 'asc' }));

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
