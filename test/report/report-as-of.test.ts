import { beforeAll, describe, expect, it } from 'vitest';
import type { WeeklyReport } from '../../services/report/weekly-report-schema.js';
import { useTestApp } from '../helpers/test-app.js';
import { seedFleetThroughApi, type SeededFleet } from './analysed-fleet.js';

// The demo fleet's data runs to the end of 2026-W48; the report of the week before must not
// quote anything the analysis learnt in W48.
const t = useTestApp();
const PAST_WEEK = '2026-W47';
let seeded: SeededFleet;
let report: WeeklyReport;

beforeAll(async () => {
  seeded = await seedFleetThroughApi(t);
  const res = await t.app.inject({
    method: 'GET',
    url: `/v1/reports/weekly?week=${PAST_WEEK}`,
    headers: t.auth(seeded.key),
  });
  expect(res.statusCode, res.body).toBe(200);
  report = res.json() as WeeklyReport;
}, 300_000);

describe("a past week's report", () => {
  it('is built as of its week end: no finding of the work list has evidence after the week', () => {
    expect(report.asOf).toBe(report.week.end);
    expect(report.workList.length).toBeGreaterThan(0);
    for (const row of report.workList) {
      for (const f of row.findings) {
        expect(f.lastSeen <= report.week.lastDay, `${row.vehicleId} ${f.kind} lastSeen ${f.lastSeen}`).toBe(true);
        expect(f.why).not.toMatch(/2026-11-(2[4-9]|30)/);
      }
    }
  });

  it('ranks vehicles by their risk at the week end, not by the latest risk', async () => {
    const risks = report.workList.map((w) => w.riskScore);
    expect([...risks].sort((a, b) => b - a)).toEqual(risks);
    const latest = await t.tdb.handle.db.selectFrom('vehicle_analysis').select(['vehicle_id', 'risk_score']).execute();
    const differs = report.workList.some(
      (w) => latest.find((l) => l.vehicle_id === w.vehicleId)?.risk_score !== w.riskScore,
    );
    expect(differs).toBe(true);
  });

  it('quotes the same slope and days to boiling in the work-list sentence and the chart', () => {
    let compared = 0;
    for (const v of report.vehicles) {
      const row = report.workList.find((w) => w.vehicleId === v.vehicleId)!;
      const trend = row.findings.find((f) => f.kind === 'overheating-trend');
      const m = trend?.why.match(/rising (-?[\d.]+) °C a day \(boiling point [\d.]+ °C in about (\d+) days?/);
      if (!m || !v.peaks.trend || v.peaks.trend.daysToBoil === null) continue;
      expect(Number(m[1])).toBeCloseTo(v.peaks.trend.senSlopeCPerDay, 2);
      expect(Number(m[2])).toBe(Math.round(v.peaks.trend.daysToBoil));
      compared++;
    }
    expect(compared).toBeGreaterThan(0);
  });
});
