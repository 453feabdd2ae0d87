import { randomUUID } from 'node:crypto';
import { sql } from 'kysely';
import { analyseSamples, type SampleAnalysis } from '../../services/analysis/analyse-samples.js';
import { resolveConfig } from '../../services/analysis/config.js';
import { deriveFindings } from '../../services/analysis/derive-findings.js';
import { buildPeerBaseline } from '../../services/analysis/peer-baseline.js';
import { riskScore } from '../../services/analysis/risk-score.js';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import type { DatabaseHandle } from '../../services/db/database.js';
import { createFleetsRepository } from '../../services/db/fleets-repository.js';
import { PartitionKeeper } from '../../services/db/partitions.js';
import { createReadingsRepository, type ReadingChunk } from '../../services/db/readings-repository.js';
import type { VehicleProfile } from '../../services/analysis/vehicle-profile.js';
import { DEMO_FLEET_ID, planFleet, type SimVehicle, simulateVehicle } from '../../services/simulator/index.js';

/**
 * A simulated demo fleet, analysed with the analysis library and stored the way the worker
 * stores it (engine_runs, vehicle_days, sensor_events, findings, vehicle_analysis), with the
 * raw readings of the last weeks. Seven weeks ending with 2026-W48 in Europe/Berlin.
 */
export const SEED_WEEK = '2026-W48';
export const SEED_TIME_ZONE = 'Europe/Berlin';
/** Monday 2026-10-12 00:00 UTC: seven weeks before the end of 2026-W48. */
export const SEED_START_MS = Date.UTC(2026, 9, 12);
export const SEED_DAYS = 49;
/** End of 2026-W48 in Europe/Berlin (UTC+1 in November): Monday 2026-11-30 00:00 local. */
export const SEED_WEEK_END_MS = Date.UTC(2026, 10, 29, 23);
/** The gateway of this vehicle goes quiet this long before the end of the week, h. */
export const SILENT_VEHICLE_H = 72;
/** Raw readings are stored from this many days before the week's end (enough for the warm-up curves). */
const READINGS_DAYS = 16;
const DAY_MS = 86_400_000;
const SEED = 7;
const CHUNK = 50_000;

export interface SeededFleet {
  fleetId: string;
  vehicles: SimVehicle[];
  silentVehicleId: string;
}

function sliceArrays(a: SampleArrays, from: number, to: number): SampleArrays {
  return { ts: a.ts.subarray(from, to), coolant: a.coolant.subarray(from, to), ambient: a.ambient.subarray(from, to), speedKph: a.speedKph.subarray(from, to), rpm: a.rpm.subarray(from, to) };
}

async function* chunksOf(vehicleId: string, a: SampleArrays): AsyncGenerator<ReadingChunk> {
  for (let i = 0; i < a.ts.length; i += CHUNK) {
    const s = sliceArrays(a, i, Math.min(a.ts.length, i + CHUNK));
    yield { length: s.ts.length, vehicleIds: new Array<string>(s.ts.length).fill(vehicleId), tsMs: s.ts, coolantC: s.coolant, ambientC: s.ambient, speedKph: s.speedKph, rpm: s.rpm };
  }
}

const json = (v: unknown) => JSON.stringify(v);
const CHANNELS = ['ts', 'coolant', 'ambient', 'speedKph', 'rpm'] as const;

function simulateToArrays(v: SimVehicle): SampleArrays {
  const chunks = [...simulateVehicle(v, { startMs: SEED_START_MS, days: SEED_DAYS, seed: SEED })].map((c) => {
    const part = {} as SampleArrays;
    for (const k of CHANNELS) part[k] = c[k].slice(0, c.length);
    return part;
  });
  const out = {} as SampleArrays;
  for (const k of CHANNELS) {
    out[k] = new Float64Array(chunks.reduce((n, c) => n + c.ts.length, 0));
    let o = 0;
    for (const c of chunks) { out[k].set(c[k], o); o += c.ts.length; }
  }
  return out;
}

const profileOf = (v: SimVehicle): VehicleProfile => ({
  engineFamily: v.engineFamily, thermostatOpenC: v.thermostatOpenC, capPressureKpa: v.capPressureKpa, glycolPercent: v.glycolPercent,
});

/** Seeds the fleet into an empty migrated database. */
export async function seedAnalysedFleet(handle: DatabaseHandle, vehicleCount = 12): Promise<SeededFleet> {
  const { db } = handle;
  const fleetId = DEMO_FLEET_ID;
  await createFleetsRepository(db).ensure(fleetId, 'Quillmoor Provisions', SEED_TIME_ZONE);
  const fleet = planFleet({ startMs: SEED_START_MS, days: SEED_DAYS, seed: SEED, vehicles: vehicleCount });
  const silent = fleet.find((v) => v.faults.length === 0)!;
  for (const v of fleet) {
    await db.insertInto('vehicles').values({
      vehicle_id: v.vehicleId, fleet_id: fleetId, engine_family: v.engineFamily, thermostat_open_c: v.thermostatOpenC,
      cap_pressure_kpa: v.capPressureKpa, glycol_percent: v.glycolPercent, label: v.label,
    }).execute();
  }
  const readings = createReadingsRepository(handle, new PartitionKeeper());
  const analyses = new Map<string, SampleAnalysis>();
  for (const v of fleet) {
    let arrays = simulateToArrays(v);
    if (v === silent) {
      const cut = SEED_WEEK_END_MS - SILENT_VEHICLE_H * 3_600_000;
      arrays = sliceArrays(arrays, 0, arrays.ts.findIndex((t) => t >= cut));
    }
    const keepFrom = arrays.ts.findIndex((t) => t >= SEED_WEEK_END_MS - READINGS_DAYS * DAY_MS);
    if (keepFrom >= 0) {
      await readings.ingest(fleetId, chunksOf(v.vehicleId, sliceArrays(arrays, keepFrom, arrays.ts.length)), {
        keyId: 'seed', contentType: 'application/octet-stream', bodyBytes: () => 0, rejected: () => 0,
      });
    }
    analyses.set(v.vehicleId, analyseSamples({ ...arrays, nowMs: SEED_WEEK_END_MS }, profileOf(v), resolveConfig(v.engineFamily)));
  }
  const families = new Set(fleet.map((v) => v.engineFamily));
  const peers = new Map([...families].map((family) => {
    const members = fleet.filter((v) => v.engineFamily === family);
    return [family, buildPeerBaseline(members.flatMap((v) => analyses.get(v.vehicleId)!.runs), family, members.length)];
  }));
  for (const v of fleet) {
    const a = analyses.get(v.vehicleId)!;
    const runs = a.runs.filter((r) => !r.truncatedStart);
    for (const r of runs) {
      await sql`insert into engine_runs (vehicle_id, start_ts, end_ts, start_kind, open, metrics)
        values (${v.vehicleId}, ${new Date(r.startMs)}, ${new Date(r.endMs)}, ${r.startKind}, ${r.open}, ${json(r)}::jsonb)`.execute(db);
    }
    for (const d of a.days) await sql`insert into vehicle_days (vehicle_id, day, metrics) values (${v.vehicleId}, ${d.day}::date, ${json(d)}::jsonb)`.execute(db);
    for (const e of a.sensorEvents) {
      await sql`insert into sensor_events (vehicle_id, run_start, kind, event) values (${v.vehicleId}, ${new Date(e.runStartMs)}, ${e.kind}, ${json(e)}::jsonb)`.execute(db);
    }
    const findings = deriveFindings({ runs, days: a.days, sensorEvents: a.sensorEvents }, profileOf(v),
      { now: SEED_WEEK_END_MS, peer: peers.get(v.engineFamily) ?? null }, resolveConfig(v.engineFamily));
    for (const f of findings) {
      await db.insertInto('findings').values({
        vehicle_id: v.vehicleId, finding_id: randomUUID(), fleet_id: fleetId, finding_key: f.key, kind: f.kind, sub_kind: f.subKind,
        severity: f.severity, confidence: f.confidence, first_seen: new Date(f.firstSeen), last_seen: new Date(f.lastSeen),
        summary: f.summary, recommended_check: f.recommendedCheck, trouble_code: f.troubleCode, metrics: json(f.metrics), evidence: json(f.evidence),
      }).execute();
    }
    await db.insertInto('vehicle_analysis').values({
      vehicle_id: v.vehicleId, fleet_id: fleetId, risk_score: riskScore(findings, SEED_WEEK_END_MS), open_findings: findings.length,
      max_severity: findings[0]?.severity ?? null, last_reading_at: new Date(a.days[a.days.length - 1]?.lastSampleMs ?? SEED_START_MS),
    }).execute();
  }
  return { fleetId, vehicles: fleet, silentVehicleId: silent.vehicleId };
}
