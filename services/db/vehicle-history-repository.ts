import { sql, type Kysely } from 'kysely';
import {
  afterKeySql,
  epochMs,
  keySelections,
  orderBySql,
  pageOf,
  type Page,
  type PageRequest,
  type SortColumn,
} from './keyset.js';
import type { Database } from './schema.js';

/** An engine run as the API shows it. */
export interface RunView {
  startTs: string;
  endTs: string;
  startKind: string;
  open: boolean;
  metrics: Record<string, number | boolean | string | null>;
}

/** A vehicle-day as the API shows it. */
export interface DayView {
  day: string;
  metrics: Record<string, unknown>;
}

/** Runs newest first (the start is unique per vehicle). */
export const RUN_ORDER: readonly SortColumn[] = [{ sql: epochMs('start_ts'), dir: 'desc', type: 'number' }];
/** Days newest first. */
export const DAY_ORDER: readonly SortColumn[] = [{ sql: sql`to_char(day, 'YYYY-MM-DD')`, dir: 'desc', type: 'text' }];

/** A vehicle's analysed history for the API: engine runs and vehicle-days, a page at a time. */
export function createVehicleHistoryRepository(db: Kysely<Database>) {
  return {
    /** Runs starting in [fromMs, toMs) (either open-ended when null), newest first. */
    async runs(
      vehicleId: string,
      range: { fromMs: number | null; toMs: number | null },
      pageRequest: PageRequest,
    ): Promise<Page<RunView>> {
      let q = db
        .selectFrom('engine_runs')
        .select(['start_ts', 'end_ts', 'start_kind', 'open', 'metrics'])
        .select(keySelections(RUN_ORDER))
        .where('vehicle_id', '=', vehicleId);
      if (range.fromMs !== null) q = q.where('start_ts', '>=', new Date(range.fromMs));
      if (range.toMs !== null) q = q.where('start_ts', '<', new Date(range.toMs));
      const rows = await q
        .where(afterKeySql(RUN_ORDER, pageRequest.after))
        .orderBy(orderBySql(RUN_ORDER))
        .limit(pageRequest.limit + 1)
        .execute();
      return pageOf(rows, pageRequest.limit, RUN_ORDER.length, (r) => ({
        startTs: r.start_ts.toISOString(),
        endTs: r.end_ts.toISOString(),
        startKind: r.start_kind,
        open: r.open,
        metrics: r.metrics as Record<string, number | boolean | string | null>,
      }));
    },

    /** Vehicle-days with from ≤ day ≤ to (YYYY-MM-DD, either open-ended when null), newest first. */
    async days(
      vehicleId: string,
      range: { from: string | null; to: string | null },
      pageRequest: PageRequest,
    ): Promise<Page<DayView>> {
      let q = db
        .selectFrom('vehicle_days')
        .select([sql<string>`to_char(day, 'YYYY-MM-DD')`.as('day_text'), 'metrics'])
        .select(keySelections(DAY_ORDER))
        .where('vehicle_id', '=', vehicleId);
      if (range.from !== null) q = q.where('day', '>=', range.from);
      if (range.to !== null) q = q.where('day', '<=', range.to);
      const rows = await q
        .where(afterKeySql(DAY_ORDER, pageRequest.after))
        .orderBy(orderBySql(DAY_ORDER))
        .limit(pageRequest.limit + 1)
        .execute();
      return pageOf(rows, pageRequest.limit, DAY_ORDER.length, (r) => ({
        day: r.day_text,
        metrics: r.metrics as Record<string, unknown>,
      }));
    },
  };
}
