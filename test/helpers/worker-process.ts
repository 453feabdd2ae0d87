import { type ChildProcess, spawn } from 'node:child_process';
import { EventEmitter } from 'node:events';
import { join } from 'node:path';
import { createInterface } from 'node:readline';

const ROOT = join(import.meta.dirname, '..', '..');

/** One pino log line of a worker process. */
export interface LogLine {
  msg: string;
  [field: string]: unknown;
}

/** A real `thermocline worker` process with its JSON log lines, awaitable. */
export class WorkerProcess {
  readonly lines: LogLine[] = [];
  readonly exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  private readonly child: ChildProcess;
  private readonly events = new EventEmitter();
  private stderr = '';

  constructor(env: Record<string, string>) {
    this.child = spawn(process.execPath, [join(ROOT, 'bin', 'thermocline.js'), 'worker'], {
      cwd: ROOT,
      env: { ...process.env, LOG_LEVEL: 'info', ...env },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    createInterface({ input: this.child.stdout! }).on('line', (text) => {
      try {
        const line = JSON.parse(text) as LogLine;
        this.lines.push(line);
        this.events.emit('line', line);
      } catch {
        // not a log line
      }
    });
    this.child.stderr!.on('data', (d: Buffer) => (this.stderr += d.toString()));
    this.exited = new Promise((resolve) =>
      this.child.once('exit', (code, signal) => {
        this.events.emit('exit');
        resolve({ code, signal });
      }),
    );
  }

  /** Resolves when `done(lines so far)` holds; rejects if the process exits first or after `timeoutMs`. */
  waitFor(done: (lines: readonly LogLine[]) => boolean, timeoutMs = 60_000): Promise<void> {
    if (done(this.lines)) return Promise.resolve();
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => finish(new Error(`timed out; stderr: ${this.stderr.slice(-2000)}`)), timeoutMs);
      const onLine = () => {
        if (done(this.lines)) finish();
      };
      const onExit = () => finish(new Error(`worker exited; stderr: ${this.stderr.slice(-2000)}`));
      const finish = (err?: Error) => {
        clearTimeout(timer);
        this.events.off('line', onLine);
        this.events.off('exit', onExit);
        if (err) reject(err);
        else resolve();
      };
      this.events.on('line', onLine);
      this.events.on('exit', onExit);
    });
  }

  /** 'vehicle analysed' lines. */
  analysed(): Array<
    LogLine & { vehicleId: string; startedAt: number; finishedAt: number; workerId: string; queue: string }
  > {
    return this.lines.filter((l) => l.msg === 'vehicle analysed') as never;
  }

  kill(signal: NodeJS.Signals): void {
    this.child.kill(signal);
  }
}
