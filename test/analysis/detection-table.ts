import { DAY_MS } from '../../services/time/durations.js';
/**
 * Detection-quality tables: how well alarms (findings, or a naive rule's hits) match ground
 * truth. Pure; the alarms may come from the library directly or from the service over HTTP.
 */

/** One vehicle's ground truth and the alarms raised on it. */
export interface EvaluatedVehicle {
  vehicleId: string;
  /** 'fault' or a healthy group such as 'healthy-cold'. */
  group: string;
  /**
   * `visible`: whether the fault changed what could be measured at all (decided on the
   * ground-truth side, e.g. against the same vehicle simulated without the fault);
   * omitted means visible.
   */
  faults: ReadonlyArray<{ kind: string; onsetMs: number; visible?: boolean }>;
  /** When an alarm of `kind` was first raised (detection time, not dated onset), any order. */
  alarms: ReadonlyArray<{ kind: string; atMs: number }>;
}

export interface FaultLine {
  faultKind: string;
  n: number;
  /** Faults that were visible; detected, rightKind and the delay count only these. */
  visible: number;
  /** Vehicles with any alarm raised at or after onset. */
  detected: number;
  /** Vehicles with an alarm of an expected kind raised at or after onset. */
  rightKind: number;
  /** Median days from onset to the first right-kind alarm, over right-kind detections; null if none. */
  medianDelayDays: number | null;
}

export interface HealthyLine {
  group: string;
  n: number;
  /** Vehicles with any alarm at all. */
  falseAlarms: number;
  rate: number;
}

export interface DetectionTable {
  faults: FaultLine[];
  healthy: HealthyLine[];
}

/** The naive rules' alarm kinds and what they stand for. */
export const NAIVE_OVERHEAT = 'naive-above-105';
export const NAIVE_COLD = 'naive-cold-after-15-min';
export const NAIVE_EXPECTED: Readonly<Record<string, readonly string[]>> = Object.freeze({
  'thermostat-stuck-open': [NAIVE_COLD],
  'thermostat-sticking': [],
  'radiator-fouling': [NAIVE_OVERHEAT],
  'fan-failure': [NAIVE_OVERHEAT],
  'coolant-loss': [NAIVE_OVERHEAT],
  'sensor-stuck': [],
  'sensor-spikes': [],
  'sensor-dropouts': [],
  'sensor-bias': [],
});

function medianOf(values: number[]): number | null {
  if (values.length === 0) return null;
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

/**
 * Builds the detection table: per fault kind n, visible, detected, right kind and median delay;
 * per healthy group the false-alarm rate.
 * @example detectionTable(vehicles, EXPECTED_FINDINGS).faults[0]?.rightKind
 */
export function detectionTable(
  vehicles: readonly EvaluatedVehicle[],
  expectedKinds: Readonly<Record<string, readonly string[]>>,
): DetectionTable {
  const faults = new Map<string, { n: number; visible: number; detected: number; right: number; delays: number[] }>();
  const healthy = new Map<string, { n: number; alarms: number }>();
  for (const v of vehicles) {
    if (v.faults.length === 0) {
      const h = healthy.get(v.group) ?? { n: 0, alarms: 0 };
      h.n++;
      if (v.alarms.length > 0) h.alarms++;
      healthy.set(v.group, h);
      continue;
    }
    for (const f of v.faults) {
      const line = faults.get(f.kind) ?? { n: 0, visible: 0, detected: 0, right: 0, delays: [] as number[] };
      line.n++;
      if (f.visible === false) {
        faults.set(f.kind, line);
        continue;
      }
      line.visible++;
      const after = v.alarms.filter((a) => a.atMs >= f.onsetMs);
      if (after.length > 0) line.detected++;
      const right = after.filter((a) => (expectedKinds[f.kind] ?? []).includes(a.kind));
      if (right.length > 0) {
        line.right++;
        line.delays.push((Math.min(...right.map((a) => a.atMs)) - f.onsetMs) / DAY_MS);
      }
      faults.set(f.kind, line);
    }
  }
  return {
    faults: [...faults.entries()]
      .sort(([a], [b]) => a.localeCompare(b))
      .map(([faultKind, l]) => ({
        faultKind,
        n: l.n,
        visible: l.visible,
        detected: l.detected,
        rightKind: l.right,
        medianDelayDays: medianOf(l.delays),
      })),
    healthy: [...healthy.entries()]
      .sort(([a], [b]) => a.localeCompare(b))
      .map(([group, h]) => ({
        group,
        n: h.n,
        falseAlarms: h.alarms,
        rate: h.n > 0 ? h.alarms / h.n : 0,
      })),
  };
}

/** Plain-text rendering of a table (for test output and notes). */
export function formatDetectionTable(title: string, t: DetectionTable): string {
  const pad = (s: string | number, w: number) => String(s).padEnd(w);
  const lines = [
    title,
    `${pad('fault kind', 24)}${pad('n', 4)}${pad('visible', 9)}${pad('detected', 10)}${pad('right kind', 12)}median delay (days)`,
  ];
  for (const f of t.faults) {
    lines.push(
      `${pad(f.faultKind, 24)}${pad(f.n, 4)}${pad(f.visible, 9)}${pad(f.detected, 10)}${pad(f.rightKind, 12)}${f.medianDelayDays === null ? '—' : f.medianDelayDays.toFixed(1)}`,
    );
  }
  lines.push(`${pad('healthy group', 24)}${pad('n', 4)}${pad('alarms', 10)}false-alarm rate`);
  for (const h of t.healthy)
    lines.push(`${pad(h.group, 24)}${pad(h.n, 4)}${pad(h.falseAlarms, 10)}${(100 * h.rate).toFixed(1)} %`);
  return lines.join('\n');
}

/** One line of the comparison with a baseline rule. */
export interface LineComparison {
  line: string;
  better: boolean;
  reason: string;
}

/**
 * Compares two tables line by line. A fault line is better when it finds more vehicles of
 * the right kind, or as many (at least one) sooner; a healthy line when it raises fewer
 * false alarms, or none when the other raises none either (equal at zero is reported
 * as such in `reason`).
 */
export function compareTables(ours: DetectionTable, other: DetectionTable): LineComparison[] {
  const out: LineComparison[] = [];
  for (const f of ours.faults) {
    const o = other.faults.find((x) => x.faultKind === f.faultKind);
    const oRight = o?.rightKind ?? 0;
    const oDelay = o?.medianDelayDays ?? Infinity;
    const fDelay = f.medianDelayDays ?? Infinity;
    const better = f.rightKind > oRight || (f.rightKind === oRight && f.rightKind > 0 && fDelay < oDelay);
    out.push({
      line: f.faultKind,
      better,
      reason: `right kind ${f.rightKind} vs ${oRight}, delay ${fDelay.toFixed(1)} vs ${oDelay.toFixed(1)} d`,
    });
  }
  for (const h of ours.healthy) {
    const o = other.healthy.find((x) => x.group === h.group);
    const oRate = o?.rate ?? 0;
    const better = h.rate < oRate || (h.rate === 0 && oRate === 0);
    out.push({
      line: h.group,
      better,
      reason: `false alarms ${h.falseAlarms}/${h.n} vs ${o?.falseAlarms ?? 0}/${o?.n ?? 0}${h.rate === 0 && oRate === 0 ? ' (both none)' : ''}`,
    });
  }
  return out;
}
