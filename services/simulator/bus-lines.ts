import { type BusReading, j1939Frames, obdResponse } from '../bus-decoding/bus-encoding.js';
import type { SampleChunk } from './simulate-vehicle.js';

/** How a simulated gateway forwards its samples: decoded readings, J1939 frames or OBD-II responses. */
export type GatewayEncoding = 'readings' | 'j1939' | 'obd';

/**
 * The samples of a chunk as NDJSON rows of `POST /v1/frames/j1939` (`{"vehicleId","ts","canId","data"}`,
 * one frame per parameter group the sample has) or `POST /v1/frames/obd` (one service 01 response
 * per sample carrying every PID). Each frame carries the sample's timestamp, so the frame ingest
 * forms the same readings (at the simulator's 10 s period: one sample per slot). J1939 frames
 * also carry the coolant level (SPN 111) where the chunk has it, which readings.ndjson leaves
 * out; OBD-II has no such PID. J1939 encodes
 * the simulator's values exactly (whole °C coolant, 1/32 °C ambient, whole rpm and km/h); OBD-II
 * rounds ambient to whole degrees (PID 0x46 has 1 °C resolution).
 * @example busLines('QP-101', chunk, 'j1939').split('\n')[0] // {"vehicleId":"QP-101","ts":…,"canId":"18FEEE00","data":"…"}
 */
export function busLines(vehicleId: string, chunk: SampleChunk, as: 'j1939' | 'obd'): string {
  const out: string[] = [];
  const head = `{"vehicleId":${JSON.stringify(vehicleId)},"ts":`;
  const r: BusReading = {
    coolantC: NaN,
    ambientC: NaN,
    speedKph: NaN,
    rpm: NaN,
    barometricKpa: NaN,
    coolantLevelPct: NaN,
    coolantPressureKpa: NaN,
  };
  for (let i = 0; i < chunk.length; i++) {
    r.coolantC = chunk.coolant[i]!;
    r.ambientC = chunk.ambient[i]!;
    r.speedKph = chunk.speedKph[i]!;
    r.rpm = chunk.rpm[i]!;
    r.coolantLevelPct = chunk.coolantLevelPct ? chunk.coolantLevelPct[i]! : NaN;
    const ts = chunk.ts[i]!;
    if (as === 'obd') out.push(`${head}${ts},"data":"${obdResponse(r)}"}`);
    else for (const f of j1939Frames(r)) out.push(`${head}${ts},"canId":"${f.canId}","data":"${f.data}"}`);
  }
  return out.length > 0 ? `${out.join('\n')}\n` : '';
}
