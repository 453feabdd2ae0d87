import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { SAFETY_CAUTION } from '../../services/analysis/findings/finding.js';
import { planFleet } from '../../services/simulator/index.js';
import { testDatabaseKind } from '../helpers/test-database.js';
import { DAY_MS } from '../../services/time/durations.js';

const ROOT = join(import.meta.dirname, '..', '..');
const END_DATE = '2026-11-30';

// `npm run demo` runs on the embedded database; this runs a small version of it end to end
// through the real CLI (simulate → HTTP ingest → analysis → at-risk list → weekly report).
describe.skipIf(testDatabaseKind() !== 'pglite')('npm run demo', () => {
  const dirs: string[] = [];
  afterAll(async () => {
    for (const d of dirs) await rm(d, { recursive: true, force: true });
  });

  it('ingests the simulated fleet over HTTP, lists the faulty vehicles at risk and writes the weekly report', async () => {
    const work = await mkdtemp(join(tmpdir(), 'thermocline-demo-'));
    dirs.push(work);
    // A fixed end date keeps the simulated weather, and so the outcome, the same every day.
    const args = [
      '--vehicles',
      '8',
      '--days',
      '21',
      '--seed',
      '7',
      '--end',
      END_DATE,
      '--out',
      join(work, 'out'),
      '--no-serve',
    ];
    const child = spawn(process.execPath, [join(ROOT, 'bin', 'thermocline.js'), 'demo', ...args], {
      env: { ...process.env, PGLITE_DIR: join(work, 'data'), PORT: '0', DATABASE_URL: '' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (b: Buffer) => (stdout += b.toString()));
    child.stderr.on('data', (b: Buffer) => (stderr += b.toString()));
    const [code] = (await once(child, 'exit')) as [number];
    expect(code, stderr).toBe(0);

    // Progress on every long step.
    expect(stderr).toMatch(/demo: ingest 8\/8 vehicles/);
    expect(stderr).toMatch(/demo: analysis done/);

    // The same plan the demo simulated: which vehicles really have a fault, and which kind.
    const fleet = planFleet({
      vehicles: 8,
      days: 21,
      seed: 7,
      startMs: Date.parse(`${END_DATE}T00:00:00Z`) - 21 * DAY_MS,
      scenario: 'demo',
    });
    const faulty = new Map(fleet.filter((v) => v.faults.length > 0).map((v) => [v.vehicleId, v.faults[0]!.kind]));
    expect(faulty.size).toBeGreaterThan(0);

    expect(stdout).toContain('Vehicles at risk');
    const listed = [...stdout.matchAll(/^(QP-\d+)\s+\d+\s+(\S+)/gm)].map((m) => ({ vehicleId: m[1]!, kind: m[2]! }));
    expect(listed.length).toBeGreaterThan(0);
    // No healthy vehicle is listed at risk.
    for (const v of listed) expect(faulty.has(v.vehicleId), `${v.vehicleId} is healthy but listed`).toBe(true);
    // The stuck-open thermostat (a fast fault) is found as a slow warm-up.
    const stuckOpen = [...faulty].find(([, kind]) => kind === 'thermostat-stuck-open');
    if (stuckOpen) expect(stdout).toMatch(new RegExp(`^${stuckOpen[0]}\\s+\\d+\\s+slow-warmup`, 'm'));
    expect(stdout).toContain(SAFETY_CAUTION);

    const reportPath = /Weekly report \S+: (\S+\.html)/.exec(stdout)?.[1];
    expect(reportPath).toBeDefined();
    const html = await readFile(reportPath!, 'utf8');
    expect(html).toContain('<svg');
    for (const v of listed) expect(html).toContain(v.vehicleId);
  });
});
