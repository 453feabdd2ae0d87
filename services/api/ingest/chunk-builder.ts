import type { ReadingChunk } from '../../db/reading-chunk.js';
import type { ValidReading } from './validate-reading.js';

/** Arrays start this long and double up to the capacity: most bodies are a gateway's small batch. */
const INITIAL_ROWS = 1024;

/** Collects validated readings column-wise into fixed-size chunks for the bulk insert. */
export class ChunkBuilder {
  private chunk: ReadingChunk = ChunkBuilder.empty(0);

  constructor(readonly capacity: number) {}

  private static empty(capacity: number): ReadingChunk {
    return {
      length: 0,
      vehicleIds: new Array<string>(capacity),
      tsMs: new Float64Array(capacity),
      coolantC: new Float64Array(capacity),
      ambientC: new Float64Array(capacity),
      speedKph: new Float64Array(capacity),
      rpm: new Float64Array(capacity),
      barometricKpa: new Float64Array(capacity),
      coolantLevelPct: new Float64Array(capacity),
      coolantPressureKpa: new Float64Array(capacity),
    };
  }

  get length(): number {
    return this.chunk.length;
  }

  get full(): boolean {
    return this.chunk.length >= this.capacity;
  }

  push(r: ValidReading): void {
    if (this.chunk.length === this.chunk.tsMs.length) this.grow();
    const c = this.chunk;
    const i = c.length++;
    c.vehicleIds[i] = r.vehicleId;
    c.tsMs[i] = r.tsMs;
    c.coolantC[i] = r.coolantC;
    c.ambientC[i] = r.ambientC;
    c.speedKph[i] = r.speedKph;
    c.rpm[i] = r.rpm;
    c.barometricKpa![i] = r.barometricKpa;
    c.coolantLevelPct![i] = r.coolantLevelPct;
    c.coolantPressureKpa![i] = r.coolantPressureKpa;
  }

  /** Hands out the collected chunk and starts a new one. */
  take(): ReadingChunk {
    const out = this.chunk;
    this.chunk = ChunkBuilder.empty(0);
    return out;
  }

  private grow(): void {
    const old = this.chunk;
    const next = ChunkBuilder.empty(Math.min(this.capacity, Math.max(INITIAL_ROWS, old.tsMs.length * 2)));
    next.length = old.length;
    for (let i = 0; i < old.length; i++) next.vehicleIds[i] = old.vehicleIds[i]!;
    next.tsMs.set(old.tsMs);
    next.coolantC.set(old.coolantC);
    next.ambientC.set(old.ambientC);
    next.speedKph.set(old.speedKph);
    next.rpm.set(old.rpm);
    next.barometricKpa!.set(old.barometricKpa!);
    next.coolantLevelPct!.set(old.coolantLevelPct!);
    next.coolantPressureKpa!.set(old.coolantPressureKpa!);
    this.chunk = next;
  }
}
