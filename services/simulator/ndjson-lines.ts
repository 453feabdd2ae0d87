import type { SampleChunk } from './simulate-vehicle.js';
import { HOUR_MS } from '../time/durations.js';

/**
 * Encodes samples as NDJSON lines in the ingest format
 * `{"vehicleId":"QP-101","ts":"2026-10-05T06:12:30.000Z","coolant":23,"ambient":7.5,"speedKph":0,"rpm":700}`
 * straight into bytes: no string per row, no JSON.stringify, the timestamp's date-and-hour
 * prefix cached. Whole numbers and multiples of 1/32 (the SPN 171 ambient resolution) are
 * written digit by digit, which gives exactly what JSON.stringify would print for them; any
 * other number falls back to String(). Output is ASCII.
 */

const enc = new TextEncoder();
const bytes = (s: string): Uint8Array => enc.encode(s);

/** "mm:ss.000Z" for every second of an hour. */
const MINUTE_SECOND: readonly Uint8Array[] = Array.from({ length: 3600 }, (_, s) => {
  const mm = Math.floor(s / 60);
  const ss = s % 60;
  return bytes(`${mm < 10 ? '0' : ''}${mm}:${ss < 10 ? '0' : ''}${ss}.000Z`);
});
/** ".5", ".25", ".03125", … for k/32, k = 1..31 (exact decimal expansions). */
const THIRTY_SECONDS: readonly Uint8Array[] = Array.from({ length: 32 }, (_, k) => bytes(String(k / 32).slice(1)));
const COOLANT = bytes('","coolant":');
const AMBIENT = bytes(',"ambient":');
const SPEED = bytes(',"speedKph":');
const RPM = bytes(',"rpm":');
const TAIL = bytes('}\n');
/** Longest line apart from the vehicle id, bytes (numbers written by String() are ≤ 24 chars). */
const MAX_LINE_BYTES_WITHOUT_ID = 200;

export class NdjsonEncoder {
  private readonly head: Uint8Array;
  private hourMs = Number.NaN;
  private hourPrefix: Uint8Array = new Uint8Array(0);
  private buf: Buffer = Buffer.alloc(0);
  private pos = 0;

  constructor(vehicleId: string) {
    this.head = bytes(`{"vehicleId":${JSON.stringify(vehicleId)},"ts":"`);
  }

  /** NDJSON bytes for samples [from, to) of a chunk; a fresh Buffer the caller may keep. */
  encode(chunk: SampleChunk, from = 0, to = chunk.length): Buffer {
    this.buf = Buffer.allocUnsafe((to - from) * (this.head.length + MAX_LINE_BYTES_WITHOUT_ID));
    this.pos = 0;
    for (let i = from; i < to; i++) {
      const t = chunk.ts[i] as number;
      this.put(this.head);
      const hour = Math.floor(t / HOUR_MS) * HOUR_MS;
      if (hour !== this.hourMs) {
        this.hourMs = hour;
        this.hourPrefix = bytes(new Date(hour).toISOString().slice(0, 14));
      }
      const inHour = t - hour;
      if (inHour % 1000 === 0) {
        this.put(this.hourPrefix);
        this.put(MINUTE_SECOND[inHour / 1000] as Uint8Array);
      } else this.ascii(new Date(t).toISOString());
      this.put(COOLANT);
      this.num(chunk.coolant[i] as number);
      this.put(AMBIENT);
      this.num(chunk.ambient[i] as number);
      this.put(SPEED);
      this.num(chunk.speedKph[i] as number);
      this.put(RPM);
      this.num(chunk.rpm[i] as number);
      this.put(TAIL);
    }
    return this.buf.subarray(0, this.pos);
  }

  /** Same lines as a string. */
  lines(chunk: SampleChunk, from = 0, to = chunk.length): string {
    return this.encode(chunk, from, to).toString('latin1');
  }

  private put(b: Uint8Array): void {
    // A byte loop: TypedArray.prototype.set costs more than the copy for pieces this short.
    const buf = this.buf;
    let p = this.pos;
    for (let j = 0; j < b.length; j++) buf[p++] = b[j] as number;
    this.pos = p;
  }

  private ascii(s: string): void {
    this.pos += this.buf.write(s, this.pos, 'latin1');
  }

  private num(v: number): void {
    const a = v < 0 ? -v : v;
    const whole = Math.floor(a);
    const k = (a - whole) * 32;
    if (!(whole < 1e15) || k !== Math.floor(k) || Object.is(v, -0)) {
      this.ascii(Number.isFinite(v) ? String(v) : 'null');
      return;
    }
    if (v < 0) this.buf[this.pos++] = 45; // '-'
    this.digits(whole);
    if (k !== 0) this.put(THIRTY_SECONDS[k] as Uint8Array);
  }

  private digits(n: number): void {
    if (n < 10) {
      this.buf[this.pos++] = 48 + n;
      return;
    }
    let len = 1;
    for (let p = 10; p <= n; p *= 10) len++;
    let end = this.pos + len;
    this.pos = end;
    while (len-- > 0) {
      const q = Math.floor(n / 10);
      this.buf[--end] = 48 + (n - q * 10);
      n = q;
    }
  }
}
