import type { SampleArrays } from '../../services/analysis/sample-arrays.js';

export interface DriveSpec {
  startMs?: number;
  ambientC: number;
  startCoolantC: number;
  /** Newton curve of the closed-thermostat warm-up. */
  tauS?: number;
  tInfC?: number;
  /** Thermostat regulation: the curve is capped here (none when undefined). */
  regulatedC?: number;
  /** Idling at the start, s. */
  idleS?: number;
  durationS?: number;
  periodS?: number;
  /** Quantise coolant to whole degrees (1 °C/bit channel). */
  quantise?: boolean;
}

/** One hand-made engine run for unit tests (not a simulator: exact curves only). */
export function syntheticDrive(spec: DriveSpec): SampleArrays {
  const {
    startMs = Date.UTC(2026, 9, 5, 6),
    ambientC,
    startCoolantC,
    tauS = 500,
    tInfC = 115,
    regulatedC = 90,
    idleS = 0,
    durationS = 3600,
    periodS = 10,
    quantise = false,
  } = spec;
  const n = Math.floor(durationS / periodS) + 1;
  const s: SampleArrays = {
    ts: new Float64Array(n),
    coolant: new Float64Array(n),
    ambient: new Float64Array(n),
    speedKph: new Float64Array(n),
    rpm: new Float64Array(n),
  };
  for (let i = 0; i < n; i++) {
    const t = i * periodS;
    const c = Math.min(tInfC - (tInfC - startCoolantC) * Math.exp(-t / tauS), Math.max(regulatedC, startCoolantC));
    s.ts[i] = startMs + t * 1000;
    s.coolant[i] = quantise ? Math.round(c) : c;
    s.ambient[i] = ambientC;
    s.speedKph[i] = t < idleS ? 0 : 60;
    s.rpm[i] = t < idleS ? 750 : 1600;
  }
  return s;
}

/** Concatenates sample arrays (in time order). */
export function concatSamples(parts: SampleArrays[]): SampleArrays {
  const cat = (key: 'ts' | 'coolant' | 'ambient' | 'speedKph' | 'rpm') => {
    const out = new Float64Array(parts.reduce((n, p) => n + p[key].length, 0));
    let o = 0;
    for (const p of parts) {
      out.set(p[key], o);
      o += p[key].length;
    }
    return out;
  };
  return {
    ts: cat('ts'),
    coolant: cat('coolant'),
    ambient: cat('ambient'),
    speedKph: cat('speedKph'),
    rpm: cat('rpm'),
  };
}
