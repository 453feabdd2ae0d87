import { sql, type Kysely } from 'kysely';

/** Month index since 1970-01 (UTC) of an epoch-ms instant: 2026-10 → 681. */
export function monthIndexOf(epochMs: number): number {
  const d = new Date(epochMs);
  return (d.getUTCFullYear() - 1970) * 12 + d.getUTCMonth();
}

function monthStartIso(monthIndex: number): string {
  const year = 1970 + Math.floor(monthIndex / 12);
  const month = monthIndex % 12;
  return new Date(Date.UTC(year, month, 1)).toISOString();
}

/** `readings_y2026m10` for 2026-10. */
export function partitionName(monthIndex: number): string {
  const year = 1970 + Math.floor(monthIndex / 12);
  const month = (monthIndex % 12) + 1;
  return `readings_y${year}m${String(month).padStart(2, '0')}`;
}

// An arbitrary constant: serialises partition creation across processes so two ingest requests
// for a new month never race on CREATE TABLE.
const PARTITION_LOCK_KEY = 7_061_001;

/**
 * Keeps the monthly partitions of `readings` in existence. Remembers what it has made or seen so
 * the ingest hot path asks the database only for months it has not met before.
 */
export class PartitionKeeper {
  private readonly known = new Set<number>();

  /**
   * Creates the partitions for `monthIndexes` that do not exist yet, in one transaction under an
   * advisory lock (or in the given transaction).
   */
  async ensure(db: Kysely<any>, monthIndexes: Iterable<number>): Promise<number> {
    const missing = [...new Set(monthIndexes)].filter((m) => !this.known.has(m)).sort((a, b) => a - b);
    if (missing.length === 0) return 0;
    let created = 0;
    const work = async (trx: Kysely<any>) => {
      await sql`select pg_advisory_xact_lock(${PARTITION_LOCK_KEY})`.execute(trx);
      const existing = await sql<{ relname: string }>`
        select c.relname from pg_inherits i
        join pg_class c on c.oid = i.inhrelid
        join pg_class p on p.oid = i.inhparent
        where p.relname = 'readings' and p.relnamespace = current_schema()::regnamespace`.execute(trx);
      const names = new Set(existing.rows.map((r) => r.relname));
      for (const m of missing) {
        const name = partitionName(m);
        if (!names.has(name)) {
          // CREATE + ATTACH rather than CREATE … PARTITION OF: attaching takes only a SHARE UPDATE
          // EXCLUSIVE lock on the parent, which does not wait for (or block) ingest transactions
          // that are writing readings at the same time.
          await sql`create table ${sql.id(name)} (like readings including defaults including constraints)`.execute(trx);
          await sql`alter table readings attach partition ${sql.id(name)} for values from (${sql.lit(monthStartIso(m))}) to (${sql.lit(monthStartIso(m + 1))})`.execute(
            trx,
          );
          created++;
        }
      }
    };
    if (db.isTransaction) {
      // Inside a caller's transaction (PGlite's ingest) the partitions exist only if it commits:
      // remember nothing, or a rolled-back body would leave a month "known" that is not there.
      await work(db);
      return created;
    }
    await db.transaction().execute(work);
    for (const m of missing) this.known.add(m);
    return created;
  }

  /** Creates this month's partition and the next `monthsAhead` months'. */
  async ensureAhead(db: Kysely<any>, nowMs: number, monthsAhead = 3): Promise<number> {
    const first = monthIndexOf(nowMs);
    return this.ensure(
      db,
      Array.from({ length: monthsAhead + 1 }, (_, i) => first + i),
    );
  }
}
