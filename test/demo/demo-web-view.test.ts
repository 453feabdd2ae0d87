import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { testDatabaseKind } from '../helpers/test-database.js';

const ROOT = join(import.meta.dirname, '..', '..');

// `npm run demo` keeps serving at the end: it prints the web view's address and a planner key that signs in there.
describe.skipIf(testDatabaseKind() !== 'pglite')('npm run demo, serving', () => {
  const dirs: string[] = [];
  afterAll(async () => {
    for (const d of dirs) await rm(d, { recursive: true, force: true });
  });

  it('prints the web view URL and a planner key that signs in to the demo fleet there', async () => {
    const work = await mkdtemp(join(tmpdir(), 'thermocline-demo-web-'));
    dirs.push(work);
    const args = ['--vehicles', '3', '--days', '7', '--seed', '7', '--end', '2026-11-30', '--out', join(work, 'out')];
    const child = spawn(process.execPath, [join(ROOT, 'bin', 'thermocline.js'), 'demo', ...args], {
      env: { ...process.env, PGLITE_DIR: join(work, 'data'), PORT: '0', DATABASE_URL: '' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stdout = '';
    let stderr = '';
    child.stderr.on('data', (b: Buffer) => (stderr += b.toString()));
    const exited = once(child, 'exit');
    try {
      await new Promise<void>((resolve, reject) => {
        child.stdout.on('data', (b: Buffer) => {
          stdout += b.toString();
          if (/Ctrl-C to stop/.test(stdout)) resolve();
        });
        child.once('exit', (code) => reject(new Error(`demo exited with ${code} before serving: ${stderr}`)));
      });
      const url = /Web view for planners: (http:\/\/\S+\/app\/)/.exec(stdout)?.[1];
      const key = /planner key \(read\):\s+(\S+)/.exec(stdout)?.[1];
      expect(url, stdout).toBeDefined();
      expect(key).toMatch(/^tck_/);
      const page = await fetch(url!, { headers: { accept: 'text/html' } });
      expect(page.status).toBe(200);
      expect(await page.text()).toContain('/app/assets/app.js');
      const origin = new URL(url!).origin;
      const signIn = await fetch(`${origin}/app/session`, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ key }),
      });
      expect(signIn.status).toBe(201);
      expect(await signIn.json()).toMatchObject({
        fleetId: 'quillmoor',
        fleetName: expect.stringContaining('Quillmoor'),
      });
      const cookie = signIn.headers.get('set-cookie')!.split(';')[0]!;
      const board = await fetch(`${origin}/v1/fleet/vehicles`, { headers: { cookie } });
      expect(board.status).toBe(200);
      expect(((await board.json()) as { counts: { vehicles: number } }).counts.vehicles).toBe(3);
    } finally {
      child.kill('SIGINT');
      await exited;
    }
  });
});
