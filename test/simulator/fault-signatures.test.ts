import { describe, expect, it } from 'vitest';
import type { Climate, Duty, FaultKind, SimVehicle } from '../../services/simulator/index.js';
import { Rng } from '../../services/simulator/prng.js';
import { buildVehicle } from '../../services/simulator/sim-vehicle.js';
import { coldStarts, collect, type Series } from './sample-series.js';

/**
 * Each fault against its healthy twin: the same vehicle, schedule, roads and weather (the
 * random streams are split by purpose), only the fault differs. Signatures are what a
 * technician would look for (common practice).
 */
const START_MS = Date.UTC(2026, 9, 5);
const DAYS = 42;
const ONSET_MS = START_MS + 14 * 86_400_000;
const SEVERITY = 0.9;
const LAST_WEEK_MS = START_MS + (DAYS - 7) * 86_400_000;

function pair(kind: FaultKind, climate: Climate, duty: Duty): { v: SimVehicle; faulty: Series; twin: Series } {
  const depot = { name: climate, climate, utcOffsetHours: 0 };
  const v = buildVehicle('F-1', 'test', depot, duty, new Rng(21), [{ kind, onsetMs: ONSET_MS, severity: SEVERITY }]);
  const h = buildVehicle('F-1', 'test', depot, duty, new Rng(21));
  const opts = { startMs: START_MS, days: DAYS, seed: 9 };
  return { v, faulty: collect(v, opts), twin: collect(h, opts) };
}

function quantile(values: number[], q: number): number {
  const s = [...values].sort((a, b) => a - b);
  return s[Math.floor(q * (s.length - 1))] as number;
}

function pick(
  s: Series,
  field: keyof Series,
  from: number,
  to: number,
  keep: (i: number) => boolean = () => true,
): number[] {
  const out: number[] = [];
  for (let i = 0; i < s.ts.length; i++)
    if ((s.ts[i] as number) >= from && (s.ts[i] as number) < to && keep(i)) out.push(s[field][i] as number);
  return out;
}

/** Samples taken at least 20 min after a cold start (a warmed-up engine, if it warms at all). */
function warmPhase(s: Series): (i: number) => boolean {
  const starts = coldStarts(s);
  return (i) => {
    let k = starts.length - 1;
    while (k >= 0 && (starts[k] as number) > i) k--;
    return k >= 0 && (s.ts[i] as number) - (s.ts[starts[k] as number] as number) >= 20 * 60_000;
  };
}

describe('fault signatures', () => {
  it('thermostat stuck open: the engine plateaus well below its rating in cold weather', () => {
    const { v, faulty, twin } = pair('thermostat-stuck-open', 'cold', 'urban-delivery');
    const after = quantile(pick(faulty, 'coolant', ONSET_MS, Infinity, warmPhase(faulty)), 0.5);
    const healthy = quantile(pick(twin, 'coolant', ONSET_MS, Infinity, warmPhase(twin)), 0.5);
    expect(after).toBeLessThan(v.thermostatOpenC - 11); // below the OBD warmed-up threshold (P0128)
    expect(healthy).toBeGreaterThan(v.thermostatOpenC - 11);
  });

  it('sticking thermostat: warm-ups overshoot well past the rating before the valve lets go', () => {
    const { v, faulty, twin } = pair('thermostat-sticking', 'temperate', 'service-van');
    const peaks = (s: Series): number[] =>
      coldStarts(s, ONSET_MS).map((i0) =>
        Math.max(...pick(s, 'coolantTrue', s.ts[i0] as number, (s.ts[i0] as number) + 40 * 60_000)),
      );
    const faultPeak = quantile(peaks(faulty), 0.5);
    const twinPeak = quantile(peaks(twin), 0.5);
    expect(faultPeak).toBeGreaterThan(v.thermostatOpenC + 12);
    expect(faultPeak - twinPeak).toBeGreaterThan(6);
  });

  for (const kind of ['radiator-fouling', 'coolant-loss'] as const) {
    it(`${kind}: peaks under load in warm weather rise over the weeks after onset`, () => {
      const { v, faulty, twin } = pair(kind, 'hot', 'long-haul');
      const before = quantile(pick(faulty, 'coolant', START_MS, ONSET_MS), 0.99);
      const last = quantile(pick(faulty, 'coolant', LAST_WEEK_MS, Infinity), 0.99);
      const twinLast = quantile(pick(twin, 'coolant', LAST_WEEK_MS, Infinity), 0.99);
      expect(last - before).toBeGreaterThan(5);
      expect(last).toBeGreaterThan(v.thermostatOpenC + 15);
      expect(last - twinLast).toBeGreaterThan(5);
      expect(twinLast).toBeLessThan(v.thermostatOpenC + 12);
    });
  }

  it('fan failure: the engine runs hot when standing or crawling in the heat', () => {
    const { v, faulty, twin } = pair('fan-failure', 'hot', 'bus');
    const slowHot = (s: Series): number =>
      pick(
        s,
        'coolant',
        ONSET_MS,
        Infinity,
        (i) => (s.speedKph[i] as number) < 10 && (s.coolant[i] as number) > v.thermostatOpenC + 15,
      ).length;
    expect(slowHot(faulty)).toBeGreaterThan(100); // > 15 min of 10 s samples
    expect(slowHot(twin)).toBe(0);
  });

  it('stuck sensor: the reading stays flat for a whole run while the engine warms', () => {
    const { faulty } = pair('sensor-stuck', 'temperate', 'urban-delivery');
    const flatWhileWarming = coldStarts(faulty, ONSET_MS).filter((i0) => {
      const t0 = faulty.ts[i0] as number;
      const reported = pick(faulty, 'coolant', t0, t0 + 20 * 60_000);
      const truth = pick(faulty, 'coolantTrue', t0, t0 + 20 * 60_000);
      return Math.max(...reported) === Math.min(...reported) && Math.max(...truth) - Math.min(...truth) > 30;
    });
    expect(flatWhileWarming.length).toBeGreaterThanOrEqual(3);
  });

  it('spiking sensor: jumps of tens of degrees between samples appear only after onset', () => {
    const { faulty } = pair('sensor-spikes', 'temperate', 'urban-delivery');
    let before = 0;
    let after = 0;
    for (let i = 1; i < faulty.ts.length; i++) {
      if ((faulty.ts[i] as number) - (faulty.ts[i - 1] as number) > 60_000) continue;
      if (Math.abs((faulty.coolant[i] as number) - (faulty.coolant[i - 1] as number)) < 25) continue;
      if ((faulty.ts[i] as number) < ONSET_MS) before++;
      else after++;
    }
    expect(before).toBe(0);
    expect(after).toBeGreaterThan(50);
  });

  it('intermittent sensor: open-circuit readings of −40 °C and missing samples after onset', () => {
    const { faulty, twin } = pair('sensor-dropouts', 'temperate', 'urban-delivery');
    expect(pick(faulty, 'coolant', START_MS, ONSET_MS, (i) => faulty.coolant[i] === -40)).toHaveLength(0);
    expect(pick(faulty, 'coolant', ONSET_MS, Infinity, (i) => faulty.coolant[i] === -40).length).toBeGreaterThan(50);
    expect(faulty.ts.length).toBeLessThan(twin.ts.length * 0.98);
  });

  it('biased sensor: readings sit a fixed offset away from the truth, also after a cold soak', () => {
    const { faulty } = pair('sensor-bias', 'cold', 'service-van');
    const reported = pick(faulty, 'coolant', ONSET_MS + 4 * 86_400_000, Infinity);
    const truth = pick(faulty, 'coolantTrue', ONSET_MS + 4 * 86_400_000, Infinity);
    const bias = quantile(
      reported.map((c, k) => c - (truth[k] as number)),
      0.5,
    );
    expect(Math.abs(bias)).toBeCloseTo(4 + 10 * SEVERITY, 0);
    const soaked = coldStarts(faulty, ONSET_MS + 4 * 86_400_000).map(
      (i) => (faulty.coolant[i] as number) - (faulty.ambient[i] as number),
    );
    expect(Math.abs(quantile(soaked, 0.5))).toBeGreaterThan(8);
  });
});
