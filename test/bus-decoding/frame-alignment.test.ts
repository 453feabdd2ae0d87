import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  alignReadings,
  type DerivedReadings,
  emptyDerivedReadings,
} from '../../services/bus-decoding/align-readings.js';
import { j1939Identifier } from '../../services/bus-decoding/j1939-identifier.js';
import { FrameCollector } from '../../services/bus-decoding/frame-collector.js';
import {
  PGN_AMB,
  PGN_CCVS1,
  PGN_EEC1,
  PGN_EFLP1,
  PGN_ET1,
  PGN_ET3,
} from '../../services/bus-decoding/j1939-parameters.js';
import { applyIncoming, diffReadings, windowToLoad } from '../../services/bus-decoding/slot-update.js';
import { rollUp, VehicleSlots } from '../../services/bus-decoding/vehicle-slots.js';

const T0 = Date.UTC(2026, 10, 30, 6, 0, 0);
const PERIOD_MS = 10_000;
const OPTS = { ambientMinC: -90, ambientMaxC: 90 };

interface Frame {
  vehicleId: string;
  tsMs: number;
  canId: number;
  data: Uint8Array;
}

function frame(vehicleId: string, tsMs: number, pgn: number, bytes: Record<number, number>): Frame {
  const data = new Uint8Array(8).fill(0xff);
  for (const [k, v] of Object.entries(bytes)) data[Number(k)] = v;
  return { vehicleId, tsMs, canId: j1939Identifier(6, pgn, 0), data };
}

type Row = [number, number, number, number, number, number, number, number];
function rows(r: DerivedReadings): Row[] {
  return r.tsMs.map((t, i) => [
    t,
    r.coolantC[i]!,
    r.ambientC[i]!,
    r.speedKph[i]!,
    r.rpm[i]!,
    r.barometricKpa[i]!,
    r.coolantLevelPct[i]!,
    r.coolantPressureKpa[i]!,
  ]);
}

function collect(frames: readonly Frame[]): FrameCollector {
  const c = new FrameCollector(OPTS);
  for (const f of frames) expect(c.j1939(f.vehicleId, f.tsMs, f.canId, f.data, 8)).toBeNull();
  return c;
}

/** All frames in one request: the readings of every slot. */
function inOneRequest(frames: readonly Frame[]): Map<string, Row[]> {
  const out = new Map<string, Row[]>();
  for (const [id, pre] of collect(frames).vehicles)
    out.set(id, rows(alignReadings(rollUp(pre, PERIOD_MS), -Infinity, Infinity, emptyDerivedReadings())));
  return out;
}

/** Frames in several requests, each applied as the repository does: load the window, merge, write the diff. */
function inRequests(requests: readonly (readonly Frame[])[]): Map<string, Row[]> {
  const slotTable = new Map<string, VehicleSlots>();
  const readingTable = new Map<string, Map<number, Row>>();
  for (const frames of requests) {
    for (const [id, pre] of collect(frames).vehicles) {
      const incoming = rollUp(pre, PERIOD_MS);
      const table = slotTable.get(id) ?? new VehicleSlots(PERIOD_MS);
      slotTable.set(id, table);
      const { fromMs, toMs } = windowToLoad(incoming);
      const loaded = new VehicleSlots(PERIOD_MS);
      for (const [start, rec] of table.records) if (start >= fromMs && start <= toMs) loaded.mergeRecord(start, rec);
      const u = applyIncoming(loaded, incoming);
      for (const s of u.changedSlots) table.records.set(s, Float64Array.from(loaded.records.get(s)!));
      const d = diffReadings(u.before, u.after);
      const stored = readingTable.get(id) ?? new Map<number, Row>();
      readingTable.set(id, stored);
      for (const t of d.deletes) stored.delete(t);
      const after = rows(u.after);
      for (const i of d.upserts) stored.set(after[i]![0], after[i]!);
    }
  }
  const out = new Map<string, Row[]>();
  for (const [id, stored] of readingTable)
    out.set(
      id,
      [...stored.values()].sort((a, b) => a[0] - b[0]),
    );
  return out;
}

const frameArb = fc
  .record({
    vehicle: fc.constantFrom('A', 'B'),
    offsetMs: fc.integer({ min: 0, max: 6 * 60_000 }),
    kind: fc.constantFrom('coolant', 'coolant', 'hires', 'rpm', 'rpm', 'speed', 'ambient', 'fluid'),
    a: fc.integer({ min: 0, max: 250 }),
    b: fc.integer({ min: 0, max: 250 }),
  })
  .map(({ vehicle, offsetMs, kind, a, b }): Frame => {
    const t = T0 + offsetMs;
    switch (kind) {
      case 'coolant':
        return frame(vehicle, t, PGN_ET1, { 0: a });
      case 'hires':
        return frame(vehicle, t, PGN_ET3, { 2: a, 3: 0x2d });
      case 'rpm':
        return frame(vehicle, t, PGN_EEC1, { 3: a, 4: b % 0x40 });
      case 'speed':
        return frame(vehicle, t, PGN_CCVS1, { 1: a, 2: b % 0x40 });
      case 'ambient':
        return frame(vehicle, t, PGN_AMB, { 0: a, 3: a, 4: 0x24 });
      default:
        return frame(vehicle, t, PGN_EFLP1, { 6: a, 7: b });
    }
  });

describe('aligning bus frames into readings', () => {
  it('gives the same readings whether frames arrive in one request or in several, in any order', () => {
    fc.assert(
      fc.property(
        fc.array(frameArb, { minLength: 1, maxLength: 300 }),
        fc.array(fc.integer({ min: 0, max: 5 }), { minLength: 300, maxLength: 300 }),
        fc.integer({ min: 0, max: 2 ** 31 - 1 }),
        (frames, split, seed) => {
          const shuffled = fc.sample(
            fc.shuffledSubarray(frames, { minLength: frames.length, maxLength: frames.length }),
            { seed, numRuns: 1 },
          )[0]!;
          const requests: Frame[][] = [[], [], [], [], [], []];
          shuffled.forEach((f, i) => requests[split[i]!]!.push(f));
          expect(inRequests(requests)).toEqual(inOneRequest(frames));
        },
      ),
      { numRuns: 300 },
    );
  });

  it('keeps one reading per sample period at the earliest coolant frame, however dense the bus', () => {
    const frames: Frame[] = [];
    for (let ms = 0; ms < 30_000; ms += 10) frames.push(frame('A', T0 + ms, PGN_EEC1, { 3: 0xe0, 4: 0x2e }));
    for (let ms = 500; ms < 30_000; ms += 1000) frames.push(frame('A', T0 + ms, PGN_ET1, { 0: 123 }));
    const r = inOneRequest(frames).get('A')!;
    expect(r.map((x) => x[0] - T0)).toEqual([500, 10_500, 20_500]);
    expect(r.every((x) => x[1] === 83 && x[4] === 1500)).toBe(true);
  });

  it('prefers the high-resolution coolant temperature (SPN 1637) in a slot that has it', () => {
    const r = inOneRequest([
      frame('A', T0 + 100, PGN_ET1, { 0: 123 }),
      frame('A', T0 + 300, PGN_ET3, { 2: 0x28, 3: 0x2d }),
    ]).get('A')!;
    expect(r).toEqual([[T0 + 300, 88.25, NaN, NaN, NaN, NaN, NaN, NaN]]);
  });

  it('leaves a channel out of a reading when its latest value is older than its staleness', () => {
    const r = inOneRequest([
      frame('A', T0, PGN_EEC1, { 3: 0xe0, 4: 0x2e }),
      frame('A', T0 + 1000, PGN_ET1, { 0: 123 }),
      frame('A', T0 + 60_000, PGN_ET1, { 0: 124 }),
    ]).get('A')!;
    expect(r.map((x) => x[4])).toEqual([1500, NaN]);
  });
});
