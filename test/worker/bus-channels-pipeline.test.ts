import { describe, expect, it } from 'vitest';
import { syntheticDrive } from '../analysis/synthetic-drive.js';
import { useTestApp } from '../helpers/test-app.js';
import { analyseNow, postReadings } from '../helpers/worker-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

const T0 = Date.UTC(2026, 10, 2, 7);
const t = useTestApp();

/** An hour's drive a day for `days` days, with the coolant level and pressure channels. */
function items(vehicleId: string, days: number, levelOnDay: (d: number) => number, hotPressureKpa: number): string[] {
  const out: string[] = [];
  for (let d = 0; d < days; d++) {
    const s = syntheticDrive({ startMs: T0 + d * DAY_MS, ambientC: 12, startCoolantC: 12, quantise: true });
    for (let i = 0; i < s.ts.length; i++) {
      const c = s.coolant[i]!;
      out.push(
        JSON.stringify({
          vehicleId,
          ts: s.ts[i],
          coolant: c,
          ambient: 12,
          speedKph: s.speedKph[i],
          rpm: s.rpm[i],
          coolantLevelPct: levelOnDay(d),
          coolantPressureKpa: c >= 88 ? hotPressureKpa : 10,
          barometricKpa: 88.5,
        }),
      );
    }
  }
  return out;
}

describe('the worker and the vehicle-bus channels', () => {
  it('reads coolant level and pressure with the readings and finds coolant loss in them', async () => {
    const key = await t.createKey('bus-pipeline', ['ingest', 'read']);
    await postReadings(
      t,
      key,
      items('LEAKY', 12, (d) => 96 - 0.8 * d, 70),
    );
    await postReadings(
      t,
      key,
      items('NO-CAP', 12, () => 96, 4),
    );
    await postReadings(
      t,
      key,
      items('SEALED', 12, () => 96, 70),
    );
    await analyseNow(t, key);
    const findings = async (id: string) =>
      (
        (await t.app.inject({ method: 'GET', url: `/v1/vehicles/${id}/findings`, headers: t.auth(key) })).json()
          .findings as Array<{ kind: string; subKind: string | null }>
      )
        .filter((f) => f.kind === 'coolant-loss')
        .map((f) => f.subKind);
    expect(await findings('LEAKY')).toEqual(['level-falling']);
    expect(await findings('NO-CAP')).toEqual(['no-pressure-when-hot']);
    expect(await findings('SEALED')).toEqual([]);
  });
});
