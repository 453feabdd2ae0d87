/**
 * Seeded pseudo-random numbers for the simulator. Never `Math.random`: a run must be
 * reproducible from its seed, and each vehicle (and each depot's weather) gets its own
 * stream so results do not depend on the order in which vehicles are simulated.
 */

/** 32-bit FNV-1a hash of a string mixed with a numeric seed; used to derive sub-seeds. */
export function hashSeed(seed: number, key: string): number {
  let h = (0x811c9dc5 ^ (seed >>> 0)) >>> 0;
  for (let i = 0; i < key.length; i++) {
    h ^= key.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  // One avalanche round so that nearby keys ("RV-101", "RV-102") give unrelated streams.
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b) >>> 0;
  h ^= h >>> 13;
  return h >>> 0;
}

/**
 * mulberry32 generator (a 32-bit state, full period 2^32), with helpers for uniform,
 * integer and normal deviates.
 * @example const rng = new Rng(42); rng.uniform(0, 10) // deterministic for seed 42
 */
export class Rng {
  private state: number;
  private spare = Number.NaN;

  constructor(seed: number) {
    this.state = seed >>> 0;
  }

  /** Uniform deviate in [0, 1). */
  next(): number {
    let t = (this.state = (this.state + 0x6d2b79f5) >>> 0);
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }

  /** Uniform deviate in [lo, hi). */
  uniform(lo: number, hi: number): number {
    return lo + (hi - lo) * this.next();
  }

  /** Integer in [lo, hi] inclusive. */
  int(lo: number, hi: number): number {
    return lo + Math.floor(this.next() * (hi - lo + 1));
  }

  /** True with probability p. */
  chance(p: number): boolean {
    return this.next() < p;
  }

  /** One element of a non-empty array. */
  pick<T>(items: readonly T[]): T {
    const item = items[Math.floor(this.next() * items.length)];
    if (item === undefined) throw new Error('Rng.pick: empty array');
    return item;
  }

  /** Standard normal deviate (Box–Muller, the second value cached). */
  normal(): number {
    if (!Number.isNaN(this.spare)) {
      const s = this.spare;
      this.spare = Number.NaN;
      return s;
    }
    const u = 1 - this.next(); // (0, 1]: log(0) is never taken
    const v = this.next();
    const r = Math.sqrt(-2 * Math.log(u));
    this.spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  }
}
