import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { describe, expect, it } from 'vitest';
import { FAULT_KINDS, groundTruth, planFleet, simulateVehicle } from '../../services/simulator/index.js';
import { DAY_MS } from '../../services/time/durations.js';

const START_MS = Date.UTC(2026, 9, 5);

describe('planFleet', () => {
  it('plans the demo company with several depots in different climates, mostly healthy, a handful of faults', () => {
    const fleet = planFleet({ startMs: START_MS, days: 49, seed: 1, vehicles: 36 });
    expect(new Set(fleet.map((v) => v.depot)).size).toBeGreaterThanOrEqual(3);
    expect(new Set(fleet.map((v) => v.climate))).toEqual(new Set(['cold', 'temperate', 'hot']));
    const faulty = fleet.filter((v) => v.faults.length > 0);
    expect(faulty.length).toBeGreaterThanOrEqual(5);
    expect(faulty.length).toBeLessThan(fleet.length / 4);
    expect(new Set(fleet.map((v) => v.vehicleId)).size).toBe(36);
  });

  it('plans an evaluation fleet with every fault kind at least six times after three weeks of healthy history', () => {
    const fleet = planFleet({ startMs: START_MS, days: 49, seed: 3, vehicles: 80, scenario: 'evaluation' });
    const truth = groundTruth(fleet);
    for (const kind of FAULT_KINDS)
      expect(truth.filter((t) => t.faults.some((f) => f.kind === kind)).length).toBeGreaterThanOrEqual(6);
    for (const group of ['healthy-cold', 'healthy-temperate', 'healthy-hot', 'healthy-heavy-load']) {
      expect(truth.filter((t) => t.group === group).length).toBeGreaterThanOrEqual(4);
    }
    for (const v of fleet)
      for (const f of v.faults) {
        expect(f.onsetMs - START_MS).toBeGreaterThanOrEqual(21 * DAY_MS);
        expect(f.onsetMs).toBeLessThanOrEqual(START_MS + (49 - 14) * DAY_MS);
      }
  });

  it('gives the same fleet and the same samples for the same seed, and different samples for another seed', () => {
    const opts = { startMs: START_MS, days: 3, seed: 5 };
    const a = planFleet({ ...opts, vehicles: 4 });
    expect(planFleet({ ...opts, vehicles: 4 })).toEqual(a);
    const v = a[0]!;
    const run = (seed: number): number[] =>
      [...simulateVehicle(v, { ...opts, seed })].flatMap((c) => [...c.coolant, ...c.ts]);
    expect(run(5)).toEqual(run(5));
    expect(run(6)).not.toEqual(run(5));
  });
});

describe('simulateVehicle streaming', () => {
  it('streams months of samples in fixed-size chunks without holding them', () => {
    const v = planFleet({ startMs: START_MS, days: 120, seed: 2, vehicles: 8 }).find((x) => x.duty === 'long-haul')!;
    const gen = simulateVehicle(v, { startMs: START_MS, days: 120, seed: 2 });
    // Retained memory, not garbage: collect before each look (under load the collector lags
    // and uncollected chunks once pushed the reading past the bound). Typed arrays live
    // outside the JS heap: count both.
    setFlagsFromString('--expose-gc');
    const gc = runInNewContext('gc') as () => void;
    const used = (): number => {
      gc();
      return process.memoryUsage().heapUsed + process.memoryUsage().arrayBuffers;
    };
    const before = used();
    let samples = 0;
    let chunks = 0;
    let peakHeap = 0;
    let lastTs = -Infinity;
    for (const c of gen) {
      chunks++;
      samples += c.length;
      expect(c.length).toBeLessThanOrEqual(4096);
      expect(c.ts[0]!).toBeGreaterThan(lastTs);
      lastTs = c.ts[c.length - 1]!;
      if (chunks % 50 === 0) peakHeap = Math.max(peakHeap, used() - before);
    }
    expect(samples).toBeGreaterThan(200_000);
    // Holding 200k+ samples × 6 channels would take over 10 MB; streaming stays well below.
    expect(peakHeap).toBeLessThan(8 * 1024 * 1024);
  });

  it('reports coolant in whole degrees within the SPN 110 range and ambient in SPN 171 steps', () => {
    const v = planFleet({ startMs: START_MS, days: 4, seed: 8, vehicles: 3 })[0]!;
    for (const c of simulateVehicle(v, { startMs: START_MS, days: 4, seed: 8 })) {
      for (let i = 0; i < c.length; i++) {
        expect(Number.isInteger(c.coolant[i])).toBe(true);
        expect(c.coolant[i]).toBeGreaterThanOrEqual(-40);
        expect(c.coolant[i]).toBeLessThanOrEqual(210);
        expect(Number.isInteger(c.ambient[i]! * 32)).toBe(true);
      }
    }
  });

  it('samples at the configured period while the engine runs', () => {
    const v = planFleet({ startMs: START_MS, days: 2, seed: 8, vehicles: 3 })[0]!;
    const [c] = simulateVehicle(v, { startMs: START_MS, days: 2, seed: 8, samplePeriodS: 5 });
    const steps = Array.from(c!.ts.subarray(1, 200), (t, i) => t - c!.ts[i]!);
    expect(steps.filter((d) => d === 5000).length).toBeGreaterThan(150);
  });
});
