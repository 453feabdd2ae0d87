/**
 * Deterministic synthetic readings for the ingest benchmark: `vehicles` vehicles, one reading
 * every 10 s each, starting 2026-10-01. The values are plausible but carry no meaning.
 */
export interface SyntheticRow {
  vehicleId: string;
  tsMs: number;
  coolant: number;
  ambient: number;
  speedKph: number;
  rpm: number;
}

export const BENCH_START_MS = Date.UTC(2026, 9, 1);

export function syntheticRow(i: number, vehicles: number): SyntheticRow {
  const v = i % vehicles;
  const k = Math.floor(i / vehicles);
  return {
    vehicleId: `BENCH-${String(v).padStart(4, '0')}`,
    tsMs: BENCH_START_MS + k * 10_000,
    coolant: 20 + ((k * 7 + v) % 70),
    ambient: 5 + (v % 20),
    speedKph: (k * 13) % 100,
    rpm: 700 + ((k * 37) % 1800),
  };
}

export function ndjsonLine(r: SyntheticRow): string {
  return `{"vehicleId":"${r.vehicleId}","ts":${r.tsMs},"coolant":${r.coolant},"ambient":${r.ambient},"speedKph":${r.speedKph},"rpm":${r.rpm}}`;
}

export function csvLine(r: SyntheticRow): string {
  return `${r.vehicleId},${new Date(r.tsMs).toISOString()},${r.coolant},${r.ambient},${r.speedKph},${r.rpm}`;
}
