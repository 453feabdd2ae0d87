import { sql, type Kysely } from 'kysely';
import { buildPeerBaseline, type PeerBaseline } from '../analysis/peer-baseline.js';
import type { RunMetrics } from '../analysis/run-metrics.js';
import type { Database } from './schema.js';
import { utcWeekStartMs } from '../time/iso-week.js';
import { DAY_MS } from '../time/durations.js';

/** A family's baseline learns from its closed runs of this many days before the week starts. */
export const PEER_WINDOW_DAYS = 56;
/** At most this many runs (the latest) feed one rebuild: bounds its memory and time. */
export const PEER_MAX_RUNS = 20_000;

/** A stored baseline: the library's PeerBaseline plus the week it was built for. */
export type StoredPeerBaseline = PeerBaseline & { weekStartMs: number };

/**
 * Engine-family peer baselines, rebuilt at most once per analysis week: when a vehicle's
 * analysis time enters a week newer than the stored baseline's, the baseline is rebuilt from
 * the family's closed runs that ended before that week began (so a vehicle's own current week
 * never feeds the yardstick it is judged by). Between rebuilds every pass sees the same
 * baseline, so re-running a vehicle gives identical findings. Cached per worker.
 */
export class PeerBaselines {
  private readonly cache = new Map<string, StoredPeerBaseline | null>();

  constructor(private readonly db: Kysely<Database>) {}

  /** The family's baseline for analysis time `asOfMs`, rebuilt first if a new week began. */
  async forAnalysis(family: string, asOfMs: number): Promise<StoredPeerBaseline | null> {
    const week = utcWeekStartMs(asOfMs);
    let stored = this.cache.get(family);
    if (stored === undefined || (stored?.weekStartMs ?? -Infinity) < week) {
      stored = await this.load(family);
      this.cache.set(family, stored);
    }
    if ((stored?.weekStartMs ?? -Infinity) >= week) return stored;
    const rebuilt = await this.rebuild(family, week);
    this.cache.set(family, rebuilt);
    return rebuilt;
  }

  private async load(family: string): Promise<StoredPeerBaseline | null> {
    const row = await this.db
      .selectFrom('peer_baselines')
      .select('baseline')
      .where('engine_family', '=', family)
      .executeTakeFirst();
    return row ? (row.baseline as unknown as StoredPeerBaseline) : null;
  }

  private async rebuild(family: string, week: number): Promise<StoredPeerBaseline> {
    const rows = await sql<{ vehicle_id: string; metrics: RunMetrics }>`
      select r.vehicle_id, r.metrics from engine_runs r join vehicles v on v.vehicle_id = r.vehicle_id
      where v.engine_family = ${family} and not r.open
        and r.end_ts <= to_timestamp(${week}::float8 / 1000) and r.start_ts >= to_timestamp(${week - PEER_WINDOW_DAYS * DAY_MS}::float8 / 1000)
      order by r.start_ts desc, r.vehicle_id
      limit ${PEER_MAX_RUNS}`.execute(this.db);
    const vehicles = new Set(rows.rows.map((r) => r.vehicle_id)).size;
    const runs = rows.rows.map((r) => r.metrics).reverse();
    const baseline: StoredPeerBaseline = { ...buildPeerBaseline(runs, family, vehicles), weekStartMs: week };
    // Another worker may have built the same week meanwhile: keep whichever is newer.
    await sql`
      insert into peer_baselines (engine_family, baseline, vehicles, updated_at)
      values (${family}, ${JSON.stringify(baseline)}::jsonb, ${vehicles}, now())
      on conflict (engine_family) do update set baseline = excluded.baseline, vehicles = excluded.vehicles, updated_at = now()
      where (peer_baselines.baseline->>'weekStartMs')::float8 is null
         or (peer_baselines.baseline->>'weekStartMs')::float8 < ${week}`.execute(this.db);
    return (await this.load(family)) ?? baseline;
  }
}
