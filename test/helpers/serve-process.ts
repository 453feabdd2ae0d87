import { type ChildProcessByStdio, spawn } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { once } from 'node:events';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import type { Readable } from 'node:stream';
import { createFleetsRepository } from '../../services/db/fleets-repository.js';
import { createTestDatabase, type TestDatabase } from './test-database.js';

const ROOT = join(import.meta.dirname, '..', '..');

/**
 * A real `thermocline serve` process on a fresh test database (a server database, or a PGlite
 * folder the process opens itself), with a bootstrap admin key and one fleet. For tests that
 * need the service in a process of its own: whether it crashes, and socket behaviour that an
 * in-process client would not see.
 */
export class ServeProcess {
  readonly logs: string[] = [];
  stderr = '';
  private constructor(
    readonly url: string,
    readonly adminKey: string,
    readonly fleetId: string,
    private readonly child: ChildProcessByStdio<null, Readable, Readable>,
    readonly exited: Promise<[number | null, NodeJS.Signals | null]>,
    private readonly tdb: TestDatabase,
    private readonly dir: string | undefined,
  ) {}

  /** Starts the process and resolves once it listens. `env` adds to or overrides its environment. */
  static async start(env: Record<string, string> = {}): Promise<ServeProcess> {
    const dir =
      process.env.TEST_DATABASE === 'postgres' ? undefined : await mkdtemp(join(tmpdir(), 'thermocline-serve-'));
    const tdb = await createTestDatabase(dir ? { pgliteDir: dir } : {});
    const fleetId = 'fleet-proc';
    await createFleetsRepository(tdb.handle.db).ensure(fleetId);
    // A PGlite folder is opened by one process at a time.
    await tdb.handle.close();
    const adminKey = `serve-proc-admin-${randomBytes(12).toString('hex')}`;
    const childEnv: NodeJS.ProcessEnv = {
      ...process.env,
      PORT: '0',
      HOST: '127.0.0.1',
      LOG_LEVEL: 'info',
      ADMIN_API_KEY: adminKey,
      REPORT_SCHEDULE: 'false',
      ...env,
    };
    delete childEnv.DATABASE_URL;
    delete childEnv.PGLITE_DIR;
    if (tdb.url) childEnv.DATABASE_URL = tdb.url;
    else childEnv.PGLITE_DIR = dir;
    const child = spawn(process.execPath, ['bin/thermocline.js', 'serve'], {
      cwd: ROOT,
      env: childEnv,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const exited = once(child, 'exit') as Promise<[number | null, NodeJS.Signals | null]>;
    const logs: string[] = [];
    let stderr = '';
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString('utf8')));
    const url = await new Promise<string>((resolve, reject) => {
      createInterface({ input: child.stdout }).on('line', (line) => {
        logs.push(line);
        const m = /Server listening at (http:\/\/127\.0\.0\.1:\d+)/.exec(line);
        if (m) resolve(m[1]!);
      });
      void exited.then(([code]) =>
        reject(new Error(`serve exited (${code}) before listening:\n${logs.join('\n')}\n${stderr}`)),
      );
    });
    const proc = new ServeProcess(url, adminKey, fleetId, child, exited, tdb, dir);
    proc.logs.push(...logs);
    child.stdout.removeAllListeners('data');
    createInterface({ input: child.stdout }).on('line', (line) => proc.logs.push(line));
    child.stderr.on('data', (c: Buffer) => (proc.stderr += c.toString('utf8')));
    return proc;
  }

  /** True while the process runs. */
  get alive(): boolean {
    return this.child.exitCode === null && this.child.signalCode === null;
  }

  /**
   * SIGTERM, wait for the exit, run `beforeDrop` (checks on what the process left in the database),
   * drop the database; resolves to the exit code.
   */
  async stop(beforeDrop?: (tdb: TestDatabase) => Promise<void>): Promise<number | null> {
    if (this.alive) this.child.kill('SIGTERM');
    const [code] = await this.exited;
    try {
      await beforeDrop?.(this.tdb);
    } finally {
      await this.tdb.drop();
    }
    if (this.dir) await rm(this.dir, { recursive: true, force: true });
    return code;
  }
}
