import { describe, expect, it } from 'vitest';
import { EXPECTED_FINDINGS } from '../../services/evaluation/expected-findings.js';
import { detectionTable, formatDetectionTable } from '../analysis/detection-table.js';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import { FAULT_KINDS, planFleet } from '../../services/simulator/index.js';
import { evaluateFleet, simulateToArrays } from '../analysis/evaluation-fleet.js';
import { useTestApp } from '../helpers/test-app.js';
import { testDatabaseKind } from '../helpers/test-database.js';
import { analyseNow, postReadings, putProfile, readingItems } from '../helpers/worker-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

/** The smallest evaluation fleet with every fault kind once and every healthy group (see evaluation-scenario.ts). */
const OPTS = { vehicles: 13, days: 36, seed: 5, startMs: Date.UTC(2026, 8, 7) };

const t = useTestApp();

describe('detection quality through the HTTP API', () => {
  it("reproduces the analysis library's detection table when a fleet is ingested, analysed and read back day by day", async () => {
    const key = await t.createKey('evaluation', ['ingest', 'read']);
    const fleet = planFleet({ ...OPTS, scenario: 'evaluation' });
    const arrays = new Map<string, SampleArrays>(fleet.map((v) => [v.vehicleId, simulateToArrays(v, OPTS)]));
    for (const v of fleet) await putProfile(t, key, v);

    const raised = new Map<string, Map<string, number>>(fleet.map((v) => [v.vehicleId, new Map()]));
    for (let d = 1; d <= OPTS.days; d++) {
      const dayEnd = OPTS.startMs + d * DAY_MS;
      const items = fleet.flatMap((v) => readingItems(v.vehicleId, arrays.get(v.vehicleId)!, dayEnd - DAY_MS, dayEnd));
      await postReadings(t, key, items);
      await analyseNow(t, key);
      const res = await t.app.inject({ method: 'GET', url: '/v1/fleet/at-risk?limit=1000', headers: t.auth(key) });
      expect(res.statusCode).toBe(200);
      for (const v of res.json().vehicles as Array<{
        vehicleId: string;
        findings: Array<{ id: string; kind: string }>;
      }>) {
        for (const f of v.findings) if (!raised.get(v.vehicleId)!.has(f.id)) raised.get(v.vehicleId)!.set(f.id, dayEnd);
      }
    }

    // Ground truth (groups, onsets, whether each fault shows at all) as the analysis team's evaluation has it.
    const lib = evaluateFleet(OPTS);
    const alarms = new Map<string, Array<{ kind: string; atMs: number }>>();
    for (const v of fleet) {
      const res = await t.app.inject({
        method: 'GET',
        url: `/v1/vehicles/${v.vehicleId}/findings`,
        headers: t.auth(key),
      });
      const findings = res.json().findings as Array<{
        id: string;
        kind: string;
        evidence: unknown[];
        recommendedCheck: string;
      }>;
      for (const f of findings) {
        expect(f.evidence.length).toBeGreaterThan(0);
        expect(f.recommendedCheck).toMatch(/Never open a hot pressurised cooling system/);
      }
      const kindOf = new Map(findings.map((f) => [f.id, f.kind]));
      alarms.set(
        v.vehicleId,
        [...raised.get(v.vehicleId)!].map(([id, atMs]) => ({ kind: kindOf.get(id)!, atMs })),
      );
    }
    const http = detectionTable(
      lib.ours.map((v) => ({ ...v, alarms: alarms.get(v.vehicleId)! })),
      EXPECTED_FINDINGS,
    );
    const library = detectionTable(lib.ours, EXPECTED_FINDINGS);
    console.log(
      `${formatDetectionTable(`through HTTP (${testDatabaseKind()})`, http)}\n\n${formatDetectionTable('analysis library, replayed daily', library)}`,
    );

    expect(http.faults.map((f) => f.faultKind).sort()).toEqual([...FAULT_KINDS].sort());
    expect(http.healthy.map((h) => h.group)).toEqual([
      'healthy-cold',
      'healthy-heavy-load',
      'healthy-hot',
      'healthy-temperate',
    ]);
    for (const line of library.faults) {
      const got = http.faults.find((f) => f.faultKind === line.faultKind)!;
      expect(got.rightKind, line.faultKind).toBe(line.rightKind);
      if (line.medianDelayDays !== null)
        expect(Math.abs(got.medianDelayDays! - line.medianDelayDays), line.faultKind).toBeLessThanOrEqual(1);
    }
    for (const line of library.healthy)
      expect(http.healthy.find((h) => h.group === line.group)!.falseAlarms, line.group).toBe(line.falseAlarms);
  });
});
