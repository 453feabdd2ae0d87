import { sql, type Kysely } from 'kysely';
import { SAFETY_CAUTION, type Finding } from '../../services/analysis/findings/finding.js';
import { createFleetsRepository } from '../../services/db/fleets-repository.js';
import type { Database } from '../../services/db/schema.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { syncFindings } from '../../services/db/findings-sync.js';
import { DAY_MS } from '../../services/time/durations.js';

/** A made-up vehicle with stored findings, as the worker would leave it (findings synced, risk refreshed). */
export interface BoardVehicle {
  vehicleId: string;
  fleetId: string;
  label?: string;
  depot?: string;
  /** Latest analysed reading, ms; null: never analysed (no vehicle_analysis row). */
  lastReadingMs: number | null;
  findings: Array<{ kind: Finding['kind']; severity: Finding['severity']; confidence?: number; onsetMs: number }>;
}

/** Stores the vehicle, its analysis state and its findings through the worker's own sync and risk code. */
export async function seedBoardVehicle(db: Kysely<Database>, v: BoardVehicle): Promise<void> {
  await createFleetsRepository(db).ensure(v.fleetId);
  await sql`insert into vehicles (vehicle_id, fleet_id, label, depot) values (${v.vehicleId}, ${v.fleetId}, ${v.label ?? null}, ${v.depot ?? null})`.execute(
    db,
  );
  if (v.lastReadingMs === null) return;
  const asOfMs = v.lastReadingMs;
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values (${v.vehicleId}, ${v.fleetId}, to_timestamp(${asOfMs / 1000}))`.execute(
    db,
  );
  const derived: Finding[] = v.findings.map((f) => ({
    key: `${f.kind}@2026-01-01T00:00:00.000Z`,
    kind: f.kind,
    subKind: null,
    severity: f.severity,
    confidence: f.confidence ?? 0.8,
    firstSeen: f.onsetMs,
    lastSeen: asOfMs,
    summary: `${f.kind} seen on ${v.vehicleId}`,
    recommendedCheck: `Check the ${f.kind}. ${SAFETY_CAUTION}`,
    troubleCode: null,
    metrics: {},
    evidence: [{ at: f.onsetMs, scope: 'day', metric: 'peakCoolantC', value: 112, expected: 98, z: 3.5 }],
  }));
  await db.transaction().execute(async (trx) => {
    await syncFindings(trx, {
      vehicleId: v.vehicleId,
      fleetId: v.fleetId,
      asOfMs,
      derived,
      quietPeriodMs: 14 * DAY_MS,
    });
    await refreshVehicleRisk(trx, v.vehicleId);
  });
}
