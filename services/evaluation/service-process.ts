import { spawn } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createScratchDatabase } from '../db/scratch-database.js';
import { openDatabase } from '../db/database.js';
import { migrateToLatest } from '../db/migrator.js';
import { createFleetKeys, type EvaluationService, type ServiceFactory } from './evaluation-service.js';

const ENTRY = fileURLToPath(new URL('../../bin/thermocline.js', import.meta.url));
/** How long the service may take to start listening, ms. */
const START_TIMEOUT_MS = 120_000;
/** Fleets are dated in 2025 (seed-ranges.ts): lift the ingest's age limit so they stay loadable. */
const MAX_AGE_DAYS = 36_500;
/** Lines of the service's log kept for an error message. */
const KEPT_LOG_LINES = 20;

let serial = 0;

/** A fresh database for one service: a PGlite directory, or a new database on the server. */
async function freshDatabase(
  databaseUrl: string | undefined,
): Promise<{ env: Record<string, string>; url: string | undefined; dir: string; drop: () => Promise<void> }> {
  if (!databaseUrl) {
    const dir = await mkdtemp(join(tmpdir(), 'thermocline-evaluate-'));
    return { env: { PGLITE_DIR: dir }, url: undefined, dir, drop: () => rm(dir, { recursive: true, force: true }) };
  }
  const { url, drop } = await createScratchDatabase(databaseUrl, `thermocline_evaluate_${process.pid}_${++serial}`);
  return { env: { DATABASE_URL: url }, url, dir: '', drop };
}

/**
 * Starts `thermocline serve` as `npm start` does, in a child process on a fresh database
 * (embedded PGlite in a temporary directory, or a new database on `databaseUrl`), and waits
 * until it listens. The rate limit and the ingest's age limit are lifted (one client posts for a
 * whole fleet, dated in 2025) and the weekly report schedule, which follows the wall clock and
 * not the data, is off.
 */
export function processServiceFactory(databaseUrl: string | undefined): ServiceFactory {
  return async ({ fleetId, worker }) => {
    const database = await freshDatabase(databaseUrl);
    const handle = await openDatabase({ databaseUrl: database.url, pgliteDir: database.dir });
    let keys: { ingestKey: string; readKey: string };
    try {
      await migrateToLatest(handle.db);
      keys = await createFleetKeys(handle.db, fleetId);
    } finally {
      await handle.close();
    }
    const child = spawn(process.execPath, [ENTRY, 'serve'], {
      env: {
        ...process.env,
        ...database.env,
        PORT: '0',
        HOST: '127.0.0.1',
        LOG_LEVEL: 'info',
        IN_PROCESS_WORKER: String(worker),
        RATE_LIMIT_PER_MINUTE: '10000000',
        REPORT_SCHEDULE: 'false',
        INGEST_MAX_AGE_DAYS: String(MAX_AGE_DAYS),
      },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const log: string[] = [];
    let stopping = false;
    let stoppedByUs = false;
    const exited = new Promise<number | null>((resolve) =>
      child.once('exit', (code, signal) => {
        stoppedByUs = stopping;
        if (!stopping)
          process.stderr.write(
            `service: exited unasked with code ${code} (signal ${signal}); last lines:\n${log.join('\n')}\n`,
          );
        resolve(code);
      }),
    );
    const baseUrl = await new Promise<string>((resolve, reject) => {
      const timer = setTimeout(
        () => reject(new Error(`the service did not start within ${START_TIMEOUT_MS} ms:\n${log.join('\n')}`)),
        START_TIMEOUT_MS,
      );
      let pending = '';
      const onData = (data: Buffer) => {
        pending += data.toString('utf8');
        const lines = pending.split('\n');
        pending = lines.pop() ?? '';
        for (const line of lines) {
          // The service's warnings and errors go to stderr as they happen (pino levels 40 and up).
          if (/"level":(4|5|6)0/.test(line) || !line.startsWith('{')) process.stderr.write(`service: ${line}\n`);
          log.push(line);
          if (log.length > KEPT_LOG_LINES) log.shift();
          const m = /Server listening at (http:\/\/[^"\s]+)/.exec(line);
          if (m?.[1]) {
            clearTimeout(timer);
            resolve(m[1]);
          }
        }
      };
      child.stdout.on('data', onData);
      child.stderr.on('data', onData);
      void exited.then((code) => {
        clearTimeout(timer);
        reject(new Error(`the service exited with ${code} before listening:\n${log.join('\n')}`));
      });
    });
    const service: EvaluationService = {
      baseUrl,
      ...keys,
      async stop() {
        stopping = true;
        child.kill('SIGTERM');
        const code = await exited;
        await database.drop();
        if (!stoppedByUs)
          throw new Error(
            `the service stopped before it was asked to (code ${code}): was it signalled from outside?\n${log.join('\n')}`,
          );
        if (code !== 0) throw new Error(`the service exited with ${code}:\n${log.join('\n')}`);
      },
    };
    return service;
  };
}
