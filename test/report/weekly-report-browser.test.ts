import { mkdir, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { TheilSenRegression } from 'ml-regression-theil-sen';
import { type Browser, chromium } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type WrittenReport, writeWeeklyReport } from '../../services/report/weekly-report-files.js';
import { CHROMIUM_ARGS, requireChromium, skipBrowserChecks } from '../helpers/chromium.js';
import { useTestApp } from '../helpers/test-app.js';
import { testDatabaseKind } from '../helpers/test-database.js';
import { type SeededFleet, SEED_WEEK, SEED_WEEK_END_MS, seedFleetThroughApi } from './analysed-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

const SKIP = skipBrowserChecks('weekly-report-browser.test.ts');
const OUTPUT_DIR = 'test-output';
const suffix = testDatabaseKind() === 'postgres' ? '' : `-${testDatabaseKind()}`;

const t = useTestApp();
let seeded: SeededFleet;
let written: WrittenReport;
let browser: Browser;
let outDir: string;

beforeAll(async () => {
  seeded = await seedFleetThroughApi(t);
  outDir = await mkdtemp(join(tmpdir(), 'weekly-report-'));
  written = await writeWeeklyReport(t.tdb.handle.db, {
    fleetId: seeded.fleetId,
    week: SEED_WEEK,
    now: SEED_WEEK_END_MS + 6 * 3_600_000,
    outDir,
  });
}, 600_000);

afterAll(async () => {
  await browser?.close();
  if (outDir) await rm(outDir, { recursive: true, force: true });
});

async function openReport() {
  const page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
  const requested: string[] = [];
  // Anything but the file itself would be an external request: record it and refuse it.
  await page.route('**/*', (route) => {
    const url = route.request().url();
    if (url.startsWith('file:')) return route.continue();
    requested.push(url);
    return route.abort();
  });
  await page.goto(pathToFileURL(written.htmlPath).href, { waitUntil: 'load' });
  return { page, requested };
}

describe.skipIf(SKIP)('the weekly report opened in headless Chromium', () => {
  beforeAll(async () => {
    browser = await chromium.launch({ executablePath: requireChromium('the weekly report'), args: CHROMIUM_ARGS });
  }, 120_000);

  it('has at-risk vehicles to show (the demo fleet develops faults before the week)', () => {
    expect(written.report.workList.length).toBeGreaterThan(0);
    expect(written.report.vehicles.length).toBeGreaterThan(0);
  });

  it('draws two visible charts per at-risk vehicle, each with data, axes and a legend, and fetches nothing', async () => {
    const { page, requested } = await openReport();
    const charts = page.locator('svg.chart');
    expect(await charts.count()).toBe(2 * written.report.vehicles.length);
    for (const chart of await charts.all()) {
      const box = await chart.boundingBox();
      expect(box?.width).toBeGreaterThan(300);
      expect(box?.height).toBeGreaterThan(150);
      expect(await chart.locator('path').count()).toBeGreaterThan(10);
      const text = await chart.locator('text').allTextContents();
      expect(text.some((s) => /°C/.test(s))).toBe(true);
    }
    for (const v of written.report.vehicles) {
      const legend = await page.locator(`#vehicle-${v.vehicleId} figure.peaks svg text`).allTextContents();
      expect(legend).toEqual(expect.arrayContaining(['daily peak coolant', 'daily max ambient']));
      expect(legend.some((s) => s.startsWith('boiling point at cap pressure'))).toBe(true);
    }
    expect(requested).toEqual([]);
    await page.close();
  });

  it('shows the same work list as the JSON, one row per vehicle', async () => {
    const { page } = await openReport();
    const rows = await page.locator('#work-list-table tbody tr').evaluateAll((trs) =>
      trs.map((tr) => ({
        findingId: tr.getAttribute('data-finding-id'),
        vehicleId: tr.getAttribute('data-vehicle-id'),
        cells: [...tr.querySelectorAll('td')].map((td) => (td.textContent ?? '').trim()),
      })),
    );
    expect(rows.map((r) => r.findingId)).toEqual(written.report.workList.map((w) => w.findingId));
    rows.forEach((r, i) => {
      const w = written.report.workList[i]!;
      expect(r.vehicleId).toBe(w.vehicleId);
      expect(r.cells[0]).toBe(String(w.rank));
      expect(r.cells[1]).toBe(w.priority);
      expect(r.cells[3]).toBe(String(w.riskScore));
      for (const f of w.findings) expect(r.cells[4]).toContain(f.why);
      for (const c of w.checks) expect(r.cells[5]).toContain(c);
      expect(r.cells[6]).toBe(w.since);
      expect(r.cells[7]).toBe(`${Math.round(w.confidence * 100)} %`);
    });
    await page.close();
  });

  it('saves a full-page screenshot and prints to PDF', async () => {
    const { page } = await openReport();
    await mkdir(OUTPUT_DIR, { recursive: true });
    const png = await page.screenshot({ path: join(OUTPUT_DIR, `weekly-report${suffix}.png`), fullPage: true });
    const pdf = await page.pdf({
      path: join(OUTPUT_DIR, `weekly-report${suffix}.pdf`),
      format: 'A4',
      printBackground: true,
    });
    expect(png.subarray(1, 4).toString()).toBe('PNG');
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    expect(pdf.length).toBeGreaterThan(20_000);
    await page.close();
  });
});

describe('the weekly report against the planner API', () => {
  const get = async (url: string) => {
    const res = await t.app.inject({ method: 'GET', url, headers: t.auth(seeded.key) });
    expect(res.statusCode, res.body).toBe(200);
    return res.json();
  };

  it('ranks the same vehicles with the same risk and open findings as GET /v1/fleet/at-risk', async () => {
    const atRisk = (await get('/v1/fleet/at-risk?limit=1000')).vehicles as Array<{
      vehicleId: string;
      riskScore: number;
      findings: Array<{
        id: string;
        kind: string;
        severity: string;
        confidence: number;
        firstSeen: string;
        summary: string;
      }>;
    }>;
    const order = written.report.workList.map((w) => w.vehicleId);
    expect(order).toEqual(atRisk.map((v) => v.vehicleId));
    for (const v of atRisk) {
      const row = written.report.workList.find((w) => w.vehicleId === v.vehicleId)!;
      expect(row.riskScore).toBe(v.riskScore);
      for (const f of v.findings) {
        const item = row.findings.find((w) => w.findingId === f.id)!;
        expect(item).toMatchObject({
          kind: f.kind,
          severity: f.severity,
          why: f.summary,
          since: f.firstSeen.slice(0, 10),
        });
        expect(item.confidence).toBeCloseTo(f.confidence, 3);
      }
    }
    expect(written.report.workList.reduce((n, w) => n + w.findings.length, 0)).toBe(
      atRisk.reduce((n, v) => n + v.findings.length, 0),
    );
  });

  it('counts findings and cold starts as the per-vehicle endpoints report them', async () => {
    let unresolvedInWeek = 0;
    let coldStarts = 0;
    const firstDay = Date.parse(written.report.week.firstDay);
    for (const v of seeded.vehicles) {
      const findings = (await get(`/v1/vehicles/${v.vehicleId}/findings`)).findings as Array<{
        id: string;
        status: string;
        firstSeen: string;
      }>;
      unresolvedInWeek += findings.filter(
        (f) => f.status !== 'resolved' && Date.parse(f.firstSeen) < Date.parse(written.report.week.end),
      ).length;
      for (const f of findings.filter((x) => x.status !== 'resolved'))
        expect(written.report.workList.some((w) => w.findings.some((x) => x.findingId === f.id))).toBe(true);
      const runs = (
        await get(
          `/v1/vehicles/${v.vehicleId}/runs?from=${new Date(firstDay).toISOString()}&to=${new Date(firstDay + 7 * DAY_MS).toISOString()}&limit=1000`,
        )
      ).runs as Array<{ startKind: string }>;
      coldStarts += runs.filter((r) => r.startKind === 'cold').length;
    }
    const totals = written.report.findings.totals;
    expect(totals.new + totals.ongoing).toBe(unresolvedInWeek);
    // The summary counts runs by the UTC days of the week's dates, as the runs endpoint is asked here.
    expect(written.report.summary.coldStarts).toBe(coldStarts);
  });

  it("lists the quiet gateway as silent for longer than usual, 72 h before the week's end", () => {
    const g = written.report.summary.silentGateways.find((x) => x.vehicleId === seeded.silentVehicleId);
    expect(g?.unusual).toBe(true);
    expect(g?.silentHours).toBeGreaterThanOrEqual(72);
  });

  it('draws a daily-peak trend whose slope matches the Theil–Sen estimator of ml-regression-theil-sen', () => {
    const charted = written.report.vehicles.filter((v) => v.peaks.trend !== null);
    expect(charted.length).toBeGreaterThan(0);
    for (const v of charted) {
      const trend = v.peaks.trend!;
      const anchor = Date.parse(trend.anchorDay);
      const window = v.peaks.days.filter((d) => Date.parse(d.day) > anchor - trend.windowDays * DAY_MS);
      const reference = new TheilSenRegression(
        window.map((d) => Date.parse(d.day) / DAY_MS),
        window.map((d) => d.peakCoolantC),
      );
      // The stored peaks are rounded to 0.1 °C; the slope is rounded to 0.001 °C/day.
      expect(trend.senSlopeCPerDay).toBeCloseTo(reference.slope, 1);
      if (trend.daysToBoil !== null && trend.daysToBoil > 0) {
        expect(trend.levelC + trend.senSlopeCPerDay * trend.daysToBoil).toBeCloseTo(v.peaks.boilingPointC, 0);
      }
    }
  });
});
