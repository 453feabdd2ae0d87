import { mkdir } from 'node:fs/promises';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { type Browser, chromium, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { planFleet } from '../../services/simulator/index.js';
import { simulateToArrays } from '../analysis/evaluation-fleet.js';
import { CHROMIUM_ARGS, requireChromium, skipBrowserChecks } from '../helpers/chromium.js';
import { useTestApp } from '../helpers/test-app.js';
import { testDatabaseKind } from '../helpers/test-database.js';
import { analyseNow, postReadings, putProfile, readingItems } from '../helpers/worker-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

const SKIP = skipBrowserChecks('web-view.browser.test.ts');
const OUTPUT_DIR = 'test-output';
const suffix = testDatabaseKind() === 'postgres' ? '' : `-${testDatabaseKind()}`;
/** A fixed end keeps the simulated weather, and so the findings, the same every day (as the demo's test). */
const END_MS = Date.UTC(2026, 10, 30);
const DAYS = 28;
const SEED = 7;

const t = useTestApp();
let base: string;
let readKey: string;
let editKey: string;
let adminKey: string;
let otherFleetVehicle: string;
let browser: Browser;

beforeAll(async () => {
  readKey = await t.createKey('quillmoor', ['read']);
  const ingestKey = await t.createKey('quillmoor', ['ingest', 'read']);
  editKey = ingestKey;
  adminKey = await t.createAdminKey();
  const startMs = END_MS - DAYS * DAY_MS;
  const fleet = planFleet({ vehicles: 8, days: DAYS, seed: SEED, startMs, scenario: 'demo' });
  for (const v of fleet) {
    await putProfile(t, ingestKey, v);
    await postReadings(
      t,
      ingestKey,
      readingItems(v.vehicleId, simulateToArrays(v, { startMs, days: DAYS, seed: SEED })),
    );
  }
  await analyseNow(t, ingestKey);
  // A vehicle of another fleet: its page must not open for a session of this one.
  const otherKey = await t.createKey('other-fleet', ['ingest']);
  otherFleetVehicle = 'OF-9';
  const put = await t.app.inject({
    method: 'PUT',
    url: `/v1/vehicles/${otherFleetVehicle}`,
    headers: t.auth(otherKey),
    payload: { label: 'not yours' },
  });
  expect(put.statusCode).toBe(201);
  await t.app.listen({ port: 0, host: '127.0.0.1' });
  base = `http://127.0.0.1:${(t.app.server.address() as AddressInfo).port}`;
  await mkdir(OUTPUT_DIR, { recursive: true });
}, 600_000);

afterAll(async () => {
  await browser?.close();
});

/** A page that records every request and refuses any that leaves the service. */
async function openPage(viewport = { width: 1280, height: 800 }) {
  const page = await browser.newPage({ viewport });
  const external: string[] = [];
  const requests: string[] = [];
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  page.on('console', (m) => {
    if (m.type() === 'error' && !/status of 401/.test(m.text())) errors.push(m.text());
  });
  await page.route('**/*', (route) => {
    const url = route.request().url();
    if (!url.startsWith(base)) {
      external.push(url);
      return route.abort();
    }
    requests.push(url);
    return route.continue();
  });
  return { page, external, requests, errors };
}

async function signIn(page: Page, key = readKey, waitFor = '#fleet-table') {
  await page.goto(`${base}/`);
  expect(page.url()).toBe(`${base}/app/`);
  const input = page.getByLabel('API key');
  await expect.poll(() => page.evaluate('document.activeElement?.id')).toBe('api-key');
  await input.fill(key);
  await input.press('Enter');
  await page.waitForSelector(waitFor);
}

const shot = (page: Page, name: string) =>
  page.screenshot({ path: join(OUTPUT_DIR, `web-view-${name}${suffix}.png`), fullPage: true });

describe.skipIf(SKIP)('the planner web view in headless Chromium', () => {
  beforeAll(async () => {
    browser = await chromium.launch({ executablePath: requireChromium('the web view'), args: CHROMIUM_ARGS });
  }, 120_000);

  it('pages the fleet list by cursor with the keyboard: Next and Previous keep the focus, every vehicle once, in order', async () => {
    const { page, requests, errors } = await openPage();
    await signIn(page);
    const all = (await (await page.request.get(`${base}/v1/fleet/vehicles?limit=200`)).json()) as {
      total: number;
      vehicles: Array<{ vehicleId: string }>;
    };
    expect(all.total).toBeGreaterThanOrEqual(2);
    await page.goto(`${base}/app/?limit=1`);
    await page.waitForSelector('#fleet-table');
    const pageIds = () =>
      page.locator('#fleet-table tbody tr').evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-vehicle-id')!));
    const seen: string[][] = [await pageIds()];
    expect(await page.locator('#prev-page').isDisabled()).toBe(true);
    await page.locator('#next-page').focus();
    while (!(await page.locator('#next-page').isDisabled())) {
      const info = `vehicles ${seen.flat().length + 1}–`;
      await page.keyboard.press('Enter');
      await expect.poll(() => page.locator('#page-info').textContent()).toContain(info);
      seen.push(await pageIds());
      // The focus stays on Next (on Previous once Next is disabled at the end).
      expect(await page.evaluate('document.activeElement?.id')).toBe(
        (await page.locator('#next-page').isDisabled()) ? 'prev-page' : 'next-page',
      );
      if (seen.length === 2) await shot(page, 'fleet-paged');
    }
    expect(seen.flat()).toEqual(all.vehicles.map((v) => v.vehicleId));
    expect(await page.locator('#page-info').textContent()).toBe(
      `vehicles ${seen.flat().length - seen.at(-1)!.length + 1}–${all.total} of ${all.total}`,
    );
    // Every page after the first was asked for with the cursor the page before answered, never an offset.
    const listCalls = requests.filter((u) => u.includes('/v1/fleet/vehicles?'));
    expect(listCalls.some((u) => u.includes('offset='))).toBe(false);
    expect(listCalls.filter((u) => u.includes('cursor=')).length).toBeGreaterThanOrEqual(seen.length - 1);
    // Previous, by keyboard, goes back one page; a reload keeps the page the URL names.
    await page.locator('#prev-page').focus();
    await page.keyboard.press('Enter');
    await expect.poll(() => pageIds()).toEqual(seen.at(-2));
    expect(await page.evaluate('document.activeElement?.id')).toBe(
      (await page.locator('#prev-page').isDisabled()) ? 'next-page' : 'prev-page',
    );
    await page.reload();
    await page.waitForSelector('#fleet-table');
    expect(await pageIds()).toEqual(seen.at(-2));
    // A cursor the service refuses (an old or edited link) starts again at the first page.
    await page.goto(`${base}/app/?limit=1&cursor=bm9wZQ&page=4`);
    await expect.poll(() => page.url()).toBe(`${base}/app/?limit=1`);
    await page.waitForSelector('#fleet-table');
    expect(await pageIds()).toEqual(seen[0]);
    expect(errors.filter((e) => !/status of 400/.test(e))).toEqual([]);
    await page.close();
  });

  it('signs in, filters the list, opens a vehicle, zooms a chart, acknowledges, records a repair and signs out', async () => {
    const { page, external, requests, errors } = await openPage();
    await signIn(page);
    const rows = page.locator('#fleet-table tbody tr');
    expect(await rows.count()).toBeGreaterThan(0);
    await expect.poll(() => page.locator('#count-at-risk').textContent()).toBe(String(await rows.count()));
    // Priority is a word as well as a colour.
    expect(await rows.first().locator('.badge').textContent()).toMatch(/book now|book this week|at next service/);
    await shot(page, 'fleet');

    // Filter: search for the top vehicle, then by its priority.
    const top = (await rows.first().getAttribute('data-vehicle-id'))!;
    await page.getByLabel('Search vehicle id or label').fill(top.toLowerCase());
    await page.getByLabel('Search vehicle id or label').press('Enter');
    await expect.poll(() => page.locator('#fleet-table tbody tr').count()).toBe(1);
    expect(page.url()).toContain(`q=${top.toLowerCase()}`);
    await page.getByLabel('Finding kind').selectOption('freeze-risk');
    await page.waitForSelector('#no-rows');
    await page.locator('#clear-filters').click();
    await page.waitForSelector('#fleet-table');

    // Open the vehicle.
    await page.locator(`#fleet-table tr[data-vehicle-id="${top}"] a.vehicle-link`).click();
    await page.waitForSelector('#chart-readings canvas');
    await expect.poll(() => page.locator('#readings-status').textContent()).toMatch(/points/);
    expect(await page.locator('article.finding').count()).toBeGreaterThan(0);
    expect(await page.locator('.cautions li').first().textContent()).toMatch(
      /Never open a hot pressurised cooling system/,
    );
    for (const id of ['#chart-warmup', '#chart-peaks']) expect(await page.locator(`${id} canvas`).count()).toBe(1);
    await shot(page, 'vehicle');

    // Zoom the readings chart with the wheel: a finer, narrower request follows.
    const readingsRequests = () => requests.filter((u) => u.includes(`/v1/vehicles/${top}/readings`));
    const before = readingsRequests().length;
    const first = new URL(readingsRequests()[0]!);
    await page.locator('#chart-readings').scrollIntoViewIfNeeded();
    const box = (await page.locator('#chart-readings').boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    for (let i = 0; i < 8; i++) await page.mouse.wheel(0, -400);
    await expect.poll(() => readingsRequests().length, { timeout: 10_000 }).toBeGreaterThan(before);
    const fine = new URL(readingsRequests().at(-1)!);
    const span = (u: URL) => Date.parse(u.searchParams.get('to')!) - Date.parse(u.searchParams.get('from')!);
    expect(fine.searchParams.get('from')).not.toBeNull();
    const firstReply = await (await page.request.get(first.href)).json();
    expect(span(fine)).toBeLessThan(0.7 * (Date.parse(firstReply.to) - Date.parse(firstReply.from)));
    expect(Number(fine.searchParams.get('maxPoints'))).toBeLessThanOrEqual(5000);
    await expect.poll(() => page.locator('#readings-status').textContent()).toMatch(/^zoomed/);
    await shot(page, 'vehicle-zoomed');

    // Acknowledge its first open finding; back in the list the vehicle stays, marked.
    const card = page.locator('article.finding[data-status="open"]').first();
    const findingId = (await card.getAttribute('data-finding-id'))!;
    await card.getByRole('button', { name: 'Acknowledge' }).click();
    await expect.poll(() => page.locator(`#finding-${findingId}`).getAttribute('data-status')).toBe('acknowledged');
    await expect.poll(() => page.locator('#page-status').textContent()).toMatch(/acknowledged/);
    await page.getByRole('link', { name: '← Fleet' }).click();
    await page.waitForSelector(`#fleet-table tr[data-vehicle-id="${top}"]`);
    expect(await page.locator(`#fleet-table tr[data-vehicle-id="${top}"] .marks`).textContent()).toMatch(
      /1 acknowledged/,
    );
    await page.getByLabel('Acknowledged', { exact: true }).selectOption('acknowledged');
    await expect.poll(() => page.locator('#fleet-table tbody tr').count()).toBe(1);
    await shot(page, 'fleet-acknowledged');

    // Record the repair that addresses the finding: its findings resolve and the history shows it.
    await page.locator(`#fleet-table tr[data-vehicle-id="${top}"] a.vehicle-link`).click();
    await page.waitForSelector('#service-event-form');
    const summary = await (await page.request.get(`${base}/v1/vehicles/${top}/summary`)).json();
    const findingKind = (await (await page.request.get(`${base}/v1/vehicles/${top}/findings`)).json()).findings.find(
      (f: { id: string }) => f.id === findingId,
    ).kind;
    const repair = summary.serviceEventKinds.find((k: { resolves: string[] }) => k.resolves.includes(findingKind)).kind;
    await page.getByLabel('Work done').selectOption(repair);
    await page.getByRole('button', { name: 'Record' }).click();
    await expect
      .poll(() => page.locator('#page-status').textContent())
      .toMatch(/Recorded\. [1-9]\d* findings? resolved/);
    await expect.poll(() => page.locator('#service-history tbody tr').count()).toBe(1);
    expect(await page.locator(`#finding-${findingId}`).getAttribute('data-status')).toBe('resolved');
    await shot(page, 'vehicle-repaired');

    // Sign out: the session is gone for the page and for the API.
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForSelector('#sign-in-form');
    expect((await page.request.get(`${base}/v1/fleet/at-risk`)).status()).toBe(401);
    expect(external).toEqual([]);
    expect(errors).toEqual([]);
    await page.close();
  });

  it('defers a finding with a date and a reason, shows it deferred in the list, and undoes it', async () => {
    const { page, requests } = await openPage();
    await signIn(page);
    await page.getByLabel('Acknowledged', { exact: true }).selectOption('unmarked');
    await page.waitForSelector('#fleet-table, #no-rows');
    const row = page.locator('#fleet-table tbody tr').first();
    const vehicleId = (await row.getAttribute('data-vehicle-id'))!;
    await row.locator('a.vehicle-link').click();
    const card = page.locator('article.finding[data-status="open"]').first();
    await card.waitFor();
    const findingId = (await card.getAttribute('data-finding-id'))!;
    await card.locator('summary', { hasText: 'Defer…' }).click();
    const until = new Date(Date.now() + 14 * DAY_MS).toISOString().slice(0, 10);
    await card.getByLabel('Defer until').fill(until);
    await card.getByLabel('Reason').fill('booked with the next planned service');
    await card.getByRole('button', { name: 'Defer', exact: true }).click();
    await expect.poll(() => page.locator(`#finding-${findingId}`).getAttribute('data-status')).toBe('deferred');
    expect(await page.locator(`#finding-${findingId}`).textContent()).toContain(
      `until ${until}: booked with the next planned service`,
    );
    await page.getByRole('link', { name: '← Fleet' }).click();
    await page.waitForSelector(`#fleet-table tr[data-vehicle-id="${vehicleId}"]`);
    expect(await page.locator(`#fleet-table tr[data-vehicle-id="${vehicleId}"] .marks`).textContent()).toMatch(
      /1 deferred/,
    );
    await page.locator(`#fleet-table tr[data-vehicle-id="${vehicleId}"] a.vehicle-link`).click();
    await page.locator(`#finding-${findingId}`).getByRole('button', { name: 'Undo deferral' }).click();
    await expect.poll(() => page.locator(`#finding-${findingId}`).getAttribute('data-status')).toBe('open');
    // Any range of days: the readings of that range are asked for.
    await page.getByLabel('From (UTC)').fill('2026-11-20');
    await page.getByLabel('To, inclusive').fill('2026-11-21');
    await page.getByRole('button', { name: 'Show range' }).click();
    await expect
      .poll(() =>
        requests.some((u) =>
          u.includes(
            `/v1/vehicles/${vehicleId}/readings?from=2026-11-20T00%3A00%3A00.000Z&to=2026-11-22T00%3A00%3A00.000Z`,
          ),
        ),
      )
      .toBe(true);
    await expect.poll(() => page.locator('#readings-status').textContent()).toMatch(/2026-11-20 to 2026-11-22/);
    await page.close();
  });

  it('lets an admin choose the fleet, then shows only that fleet', async () => {
    const { page } = await openPage();
    await signIn(page, adminKey, '#fleet-form');
    expect(await page.getByLabel('Fleet').locator('option').allTextContents()).toEqual(
      expect.arrayContaining(['quillmoor (quillmoor)', 'other-fleet (other-fleet)']),
    );
    await page.getByLabel('Fleet').selectOption('quillmoor');
    await page.getByRole('button', { name: 'Open the fleet' }).click();
    await page.waitForSelector('#fleet-table');
    expect(await page.locator('#fleet-name').textContent()).toBe('quillmoor (admin)');
    const res = await page.goto(`${base}/app/vehicles/${otherFleetVehicle}`);
    expect(res?.status()).toBe(404);
    await page.waitForSelector('#not-found');
    await page.close();
  });

  it('refuses a POST of the signed-in page that lacks the CSRF token', async () => {
    const { page } = await openPage();
    await signIn(page);
    const findingId = await page.evaluate(
      async () =>
        ((await (await fetch('/v1/findings?limit=1')).json()) as { findings: Array<{ id: string }> }).findings[0]!.id,
    );
    const statuses = await page.evaluate(async (id) => {
      const bare = await fetch(`/v1/findings/${id}/acknowledge`, { method: 'POST' });
      const form = await fetch(`/v1/findings/${id}/acknowledge`, {
        method: 'POST',
        headers: { 'content-type': 'application/x-www-form-urlencoded' },
        body: 'a=1',
      });
      return [bare.status, form.status, ((await bare.json()) as { error: { code: string } }).error.code];
    }, findingId);
    expect(statuses).toEqual([403, 403, 'csrf_failed']);
    await page.close();
  });

  it("answers 404 to another fleet's vehicle URL and says not found", async () => {
    const { page } = await openPage();
    await signIn(page);
    const res = await page.goto(`${base}/app/vehicles/${otherFleetVehicle}`);
    expect(res?.status()).toBe(404);
    await page.waitForSelector('#not-found');
    expect(await page.locator('#not-found h1').textContent()).toBe('Vehicle not found');
    expect(await page.content()).not.toContain('not yours');
    await page.close();
  });

  it('builds a weekly report on demand and lists the archive newest first, each as HTML, CSV and JSON', async () => {
    const { page, external } = await openPage();
    await signIn(page);
    await page.getByRole('link', { name: 'Weekly reports' }).click();
    await page.waitForSelector('#build-report');
    for (const week of ['2026-W47', '2026-W48']) {
      await page.getByLabel('ISO week').fill(week);
      await page.getByRole('button', { name: 'Build' }).click();
      await expect
        .poll(() => page.locator('#report-result').textContent(), { timeout: 60_000 })
        .toBe(`Report ${week} built and archived.`);
    }
    expect(
      await page.locator('#reports-table tbody tr').evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-week'))),
    ).toEqual(['2026-W48', '2026-W47']);
    const links = await page
      .locator('#reports-table tbody tr')
      .first()
      .locator('a')
      .evaluateAll((as) => as.map((a) => a.getAttribute('href')!));
    const types = [];
    for (const href of links) {
      const res = await page.request.get(`${base}${href}`);
      expect(res.status()).toBe(200);
      types.push(res.headers()['content-type']!.split(';')[0]);
    }
    expect(types).toEqual(['text/html', 'text/csv', 'application/json']);
    await shot(page, 'reports');
    expect(external).toEqual([]);
    await page.close();
  });

  it('edits the profile with a key that may (ingest scope), and shows a read key the profile only', async () => {
    const { page } = await openPage();
    await signIn(page, editKey);
    const vehicleId = (await page.locator('#fleet-table tbody tr').first().getAttribute('data-vehicle-id'))!;
    await page.goto(`${base}/app/vehicles/${vehicleId}`);
    await page.waitForSelector('#profile-form');
    await page.getByLabel('Label (e.g. plate)').fill('KX-4411 rear loader');
    await page.getByLabel('Depot').fill('Ridgeback Pass');
    await page.getByRole('button', { name: 'Save profile' }).click();
    await expect.poll(() => page.locator('#page-status').textContent()).toMatch(/Profile saved/);
    expect(await page.locator('#profile-facts').textContent()).toContain('KX-4411 rear loader');
    const stored = await t.app.inject({ method: 'GET', url: `/v1/vehicles/${vehicleId}`, headers: t.auth(readKey) });
    expect(stored.json()).toMatchObject({ label: 'KX-4411 rear loader', depot: 'Ridgeback Pass' });
    await page.getByRole('link', { name: '← Fleet' }).click();
    await page.waitForSelector('#fleet-table');
    await page.getByLabel('Depot', { exact: true }).selectOption('Ridgeback Pass');
    await expect.poll(() => page.locator('#fleet-table tbody tr').count()).toBe(1);
    await page.close();
    const reader = await openPage();
    await signIn(reader.page);
    await reader.page.goto(`${base}/app/vehicles/${vehicleId}`);
    await reader.page.waitForSelector('#profile-facts');
    expect(await reader.page.locator('#profile-form').count()).toBe(0);
    await reader.page.close();
  });

  it('switches temperatures to °F, remembered by the browser: finding sentences, chart figures, readings and report links', async () => {
    const { page, requests, errors } = await openPage();
    await signIn(page);
    const vehicleId = (await page.locator('#fleet-table tbody tr').first().getAttribute('data-vehicle-id'))!;
    await page.getByLabel('Temperatures in').selectOption('F');
    await expect.poll(() => requests.some((u) => u.includes('/v1/fleet/vehicles?') && u.includes('unit=F'))).toBe(true);
    await page.goto(`${base}/app/vehicles/${vehicleId}`);
    await page.waitForSelector('#chart-readings canvas');
    // Remembered across a page load (localStorage), and every read of the page asks for °F.
    expect(await page.getByLabel('Temperatures in').inputValue()).toBe('F');
    for (const path of ['/findings?unit=F', '/summary?unit=F', '/readings?'])
      expect(requests.some((u) => u.includes(`/v1/vehicles/${vehicleId}${path}`) && u.includes('unit=F'))).toBe(true);
    const caption = (await page.locator('figure:has(#chart-peaks) figcaption').textContent())!;
    const boilingF = Number(/boiling point at cap pressure \(([\d.]+) °F\)/.exec(caption)?.[1]);
    const summaryC = await (await page.request.get(`${base}/v1/vehicles/${vehicleId}/summary`)).json();
    // °F = °C · 9/5 + 32 (NIST SP 811 — from memory): the page shows the service's °C boiling point in °F.
    expect(boilingF).toBeCloseTo((summaryC.peaks.boilingPointC * 9) / 5 + 32, 2);
    expect(boilingF).toBeGreaterThan(212);
    const findingsC = (await (await page.request.get(`${base}/v1/vehicles/${vehicleId}/findings`)).json()).findings;
    const shown = await page.locator('article.finding p.summary').allTextContents();
    if (findingsC.some((f: { summary: string }) => /°C/.test(f.summary))) {
      expect(shown.some((text) => /°F/.test(text))).toBe(true);
      expect(shown.some((text) => /°C/.test(text))).toBe(false);
    }
    await page.locator('#chart-peaks').scrollIntoViewIfNeeded();
    await shot(page, 'vehicle-fahrenheit');
    await page.getByRole('link', { name: 'Weekly reports' }).click();
    await page.waitForSelector('#build-report');
    expect(await page.locator('#reports-unit').textContent()).toContain('°F');
    // The archive was built by the reports test above: every link opens the report in °F.
    const hrefs = await page.locator('#reports-table a').evaluateAll((as) => as.map((a) => a.getAttribute('href')!));
    expect(hrefs.length).toBeGreaterThan(0);
    for (const href of hrefs) expect(new URL(href, base).searchParams.get('unit')).toBe('F');
    const json = hrefs.find((href) => href.includes('format=json'))!;
    expect((await (await page.request.get(`${base}${json}`)).json()).unit).toBe('F');
    // Back to °C: the page redraws at once and the choice is stored again.
    await page.getByRole('link', { name: 'Fleet', exact: true }).click();
    await page.waitForSelector('#fleet-table');
    await page.getByLabel('Temperatures in').selectOption('C');
    await expect.poll(() => page.evaluate("localStorage.getItem('thermocline.temperatureUnit')")).toBe('C');
    expect(errors).toEqual([]);
    await page.close();
  });

  it('works by keyboard with a visible focus, and lays out at tablet width', async () => {
    const { page } = await openPage({ width: 820, height: 1180 });
    await signIn(page);
    // Tab from the start of the page to the first vehicle link and open it with Enter.
    await page.locator('body').focus();
    let found = false;
    for (let i = 0; i < 40 && !found; i++) {
      await page.keyboard.press('Tab');
      found = (await page.evaluate("document.activeElement?.classList.contains('vehicle-link') ?? false")) === true;
      if (i === 2)
        expect(await page.evaluate('getComputedStyle(document.activeElement).outlineStyle')).not.toBe('none');
    }
    expect(found).toBe(true);
    expect(await page.evaluate('document.documentElement.scrollWidth')).toBeLessThanOrEqual(820);
    await shot(page, 'fleet-tablet');
    await page.keyboard.press('Enter');
    await page.waitForSelector('#chart-readings canvas');
    const charts = await page
      .locator('.chart-grid figure')
      .evaluateAll((els) => els.map((e) => e.getBoundingClientRect().width));
    // One chart per row at tablet width.
    for (const w of charts) expect(w).toBeGreaterThan(700);
    await shot(page, 'vehicle-tablet');
    await page.close();
  });
});
