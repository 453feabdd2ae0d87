import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PartitionKeeper, monthIndexOf, partitionName } from '../../services/db/partitions.js';
import { migrateToLatest } from '../../services/db/migrator.js';
import { createTestDatabase, type TestDatabase } from '../helpers/test-database.js';

let tdb: TestDatabase;
beforeAll(async () => {
  tdb = await createTestDatabase();
});
afterAll(async () => {
  await tdb.drop();
});

describe('readings partitions', () => {
  it('names a month by calendar year and month', () => {
    expect(partitionName(monthIndexOf(Date.parse('2026-10-31T23:59:59Z')))).toBe('readings_y2026m10');
    expect(partitionName(monthIndexOf(Date.parse('2000-01-01T00:00:00Z')))).toBe('readings_y2000m01');
  });

  it('creates partitions ahead and for a back-filled old month, once', async () => {
    const keeper = new PartitionKeeper();
    const now = Date.parse('2026-12-01T10:00:00Z');
    expect(await keeper.ensureAhead(tdb.handle.db, now, 2)).toBe(3);
    // A second keeper (another process) finds them already there.
    expect(await new PartitionKeeper().ensureAhead(tdb.handle.db, now, 2)).toBe(0);
    expect(await keeper.ensure(tdb.handle.db, [monthIndexOf(Date.parse('2003-02-14T00:00:00Z'))])).toBe(1);
    await sql`insert into readings (vehicle_id, ts, coolant_c) values ('V1', '2003-02-14T00:00:00Z', 20), ('V1', '2027-02-28T23:00:00Z', 90)`.execute(
      tdb.handle.db,
    );
    const rows = await sql<{ part: string }>`select tableoid::regclass::text as part from readings order by ts`.execute(
      tdb.handle.db,
    );
    expect(rows.rows.map((r) => r.part)).toEqual(['readings_y2003m02', 'readings_y2027m02']);
  });

  it('rejects a reading for a month without a partition rather than losing it silently', async () => {
    await expect(
      sql`insert into readings (vehicle_id, ts, coolant_c) values ('V1', '2011-05-01T00:00:00Z', 20)`.execute(
        tdb.handle.db,
      ),
    ).rejects.toThrow(/partition/);
  });

  it('running the migrations again changes nothing', async () => {
    expect(await migrateToLatest(tdb.handle.db)).toEqual([]);
  });
});
