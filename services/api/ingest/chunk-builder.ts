import type { ReadingChunk } from '../../db/readings-repository.js';
import type { ValidReading } from './validate-reading.js';

/** Collects validated readings column-wise into fixed-size chunks for the bulk insert. */
export class ChunkBuilder {
  private chunk: ReadingChunk;

  constructor(readonly capacity: number) {
    this.chunk = ChunkBuilder.empty(capacity);
  }

  private static empty(capacity: number): ReadingChunk {
    return {
      length: 0,
      vehicleIds: new Array<string>(capacity),
      tsMs: new Float64Array(capacity),
      coolantC: new Float64Array(capacity),
      ambientC: new Float64Array(capacity),
      speedKph: new Float64Array(capacity),
      rpm: new Float64Array(capacity),
    };
  }

  get length(): number {
    return this.chunk.length;
  }

  get full(): boolean {
    return this.chunk.length >= this.capacity;
  }

  push(r: ValidReading): void {
    const c = this.chunk;
    const i = c.length++;
    c.vehicleIds[i] = r.vehicleId;
    c.tsMs[i] = r.tsMs;
    c.coolantC[i] = r.coolantC;
    c.ambientC[i] = r.ambientC;
    c.speedKph[i] = r.speedKph;
    c.rpm[i] = r.rpm;
  }

  /** Hands out the collected chunk and starts a new one. */
  take(): ReadingChunk {
    const out = this.chunk;
    this.chunk = ChunkBuilder.empty(this.capacity);
    return out;
  }
}
