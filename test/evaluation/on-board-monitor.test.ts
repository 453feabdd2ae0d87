import { describe, expect, it } from 'vitest';
import {
  MONITOR_OVER_TEMPERATURE,
  MONITOR_SENSOR_CIRCUIT,
  MONITOR_THERMOSTAT,
  OnBoardMonitor,
  THERMOSTAT_CRITERION_C,
} from '../../services/evaluation/on-board-monitor.js';
import { HOUR_MS } from '../../services/time/durations.js';

const T0 = Date.UTC(2026, 0, 5, 7);

/** One trip of 40 min at 10 s samples: coolant from `startC` rising `perMinC` per minute up to `capC`, driving unless idle. */
function trip(
  m: OnBoardMonitor,
  startMs: number,
  o: { startC: number; perMinC: number; capC: number; ambientC?: number; idle?: boolean; minutes?: number },
): void {
  const minutes = o.minutes ?? 40;
  for (let s = 0; s <= minutes * 60; s += 10) {
    m.push(startMs + s * 1000, Math.min(o.capC, o.startC + (o.perMinC * s) / 60), o.ambientC ?? 5, o.idle ? 0 : 50);
  }
}

describe('on-board-monitor baseline', () => {
  it('uses the 20 °F thermostat criterion of the California OBD-II monitor, 11.1 °C', () => {
    // 13 CCR 1968.2 (e)(10), as quoted by secondary sources: within 20 °F of the regulating temperature.
    expect(THERMOSTAT_CRITERION_C).toBeCloseTo((20 * 5) / 9, 1);
  });

  it('lights the thermostat lamp after two failing cold-start trips in a row, not after one', () => {
    const m = new OnBoardMonitor(88, false);
    trip(m, T0, { startC: 5, perMinC: 2, capC: 70 });
    expect(m.alarms).toEqual([]);
    trip(m, T0 + 24 * HOUR_MS, { startC: 5, perMinC: 2, capC: 70 });
    expect(m.alarms.map((a) => a.kind)).toEqual([MONITOR_THERMOSTAT]);
    expect(m.alarms[0]!.severity).toBe('warning');
  });

  it('resets the trip count when a warm-up passes between two failing ones', () => {
    const m = new OnBoardMonitor(88, false);
    trip(m, T0, { startC: 5, perMinC: 2, capC: 70 });
    trip(m, T0 + 24 * HOUR_MS, { startC: 5, perMinC: 8, capC: 90 });
    trip(m, T0 + 48 * HOUR_MS, { startC: 5, perMinC: 2, capC: 70 });
    expect(m.alarms).toEqual([]);
  });

  it('does not judge warm-ups spent mostly idling, or started below 20 °F (−6.7 °C) ambient', () => {
    const m = new OnBoardMonitor(88, false);
    for (let d = 0; d < 3; d++) trip(m, T0 + d * 24 * HOUR_MS, { startC: 5, perMinC: 2, capC: 70, idle: true });
    for (let d = 3; d < 6; d++) trip(m, T0 + d * 24 * HOUR_MS, { startC: -10, perMinC: 2, capC: 60, ambientC: -12 });
    expect(m.alarms).toEqual([]);
  });

  it('raises over-temperature after a minute at the rating + 25 °C, and a circuit fault on three readings at the channel limit in a trip', () => {
    const hot = new OnBoardMonitor(88, true);
    trip(hot, T0, { startC: 80, perMinC: 10, capC: 114, minutes: 10 });
    expect(hot.alarms.map((a) => [a.kind, a.severity])).toEqual([[MONITOR_OVER_TEMPERATURE, 'critical']]);
    const sensor = new OnBoardMonitor(88, false);
    for (let i = 0; i < 10; i++) sensor.push(T0 + i * 10_000, i % 3 === 0 ? -40 : 80, 5, 40);
    expect(sensor.alarms.map((a) => a.kind)).toEqual([MONITOR_SENSOR_CIRCUIT]);
  });
});
