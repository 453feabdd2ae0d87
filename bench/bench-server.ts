import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import { createServer } from 'node:net';
import { join } from 'node:path';
import pg from 'pg';

export const ROOT = join(import.meta.dirname, '..');
export const DEFAULT_SERVER_URL = 'postgres://postgres@127.0.0.1:5432/postgres';

/** A free TCP port on loopback. */
export async function freePort(): Promise<number> {
  const srv = createServer();
  srv.listen(0, '127.0.0.1');
  await once(srv, 'listening');
  const port = (srv.address() as { port: number }).port;
  srv.close();
  return port;
}

/** Creates an empty database on the server and returns its URL and a function that drops it. */
export async function scratchDatabase(
  serverUrl: string,
  name: string,
): Promise<{ url: string; drop: () => Promise<void> }> {
  const admin = new pg.Client({ connectionString: serverUrl });
  await admin.connect();
  await admin.query(`drop database if exists ${name} with (force)`);
  await admin.query(`create database ${name}`);
  await admin.end();
  const url = new URL(serverUrl);
  url.pathname = `/${name}`;
  return {
    url: url.toString(),
    drop: async () => {
      const c = new pg.Client({ connectionString: serverUrl });
      await c.connect();
      await c.query(`drop database if exists ${name} with (force)`);
      await c.end();
    },
  };
}

/**
 * Runs `thermocline serve` as a child process (its own core) and waits until it answers.
 * `nodeArgs` go to that node process, e.g. `['--cpu-prof', '--cpu-prof-dir=/tmp/prof']` to
 * profile the server during a bench (NODE_OPTIONS does not allow --cpu-prof).
 */
export async function startServer(
  env: Record<string, string>,
  nodeArgs: string[] = [],
): Promise<{ baseUrl: string; child: ChildProcess; stop: () => Promise<void> }> {
  const port = await freePort();
  const child = spawn(process.execPath, [...nodeArgs, join(ROOT, 'bin', 'thermocline.js'), 'serve'], {
    env: {
      ...process.env,
      LOG_LEVEL: 'warn',
      IN_PROCESS_WORKER: 'false',
      RATE_LIMIT_PER_MINUTE: '10000000',
      ...env,
      PORT: String(port),
      HOST: '127.0.0.1',
    },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  const baseUrl = `http://127.0.0.1:${port}`;
  for (let i = 0; i < 300; i++) {
    if (child.exitCode !== null) throw new Error(`server exited with ${child.exitCode}`);
    try {
      const res = await fetch(`${baseUrl}/readyz`);
      if (res.ok) break;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  return {
    baseUrl,
    child,
    stop: async () => {
      if (child.exitCode !== null) return;
      child.kill('SIGTERM');
      await once(child, 'exit');
    },
  };
}
