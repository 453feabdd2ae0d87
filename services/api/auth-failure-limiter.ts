/**
 * Counts failed authentications (no key, an unknown or revoked key) per client address in fixed
 * one-minute windows, so an address that keeps failing is answered 429 before its key is looked
 * up: the per-key rate limit cannot catch it (every made-up key is a bucket of its own) and each
 * failed lookup costs a database round trip and a hash.
 */
export class AuthFailureLimiter {
  private readonly windows = new Map<string, { startMs: number; failures: number }>();

  /**
   * @param maxPerMinute failures an address may have in one minute before it is refused
   * @param maxAddresses addresses tracked at once; the oldest window is dropped beyond it, so a
   *   flood from many addresses cannot grow the map without bound
   */
  constructor(
    private readonly maxPerMinute: number,
    private readonly maxAddresses = 100_000,
  ) {}

  /** Seconds until `address` may try again, or 0 when it may now. */
  retryAfterS(address: string, nowMs: number): number {
    const w = this.windows.get(address);
    if (!w || nowMs - w.startMs >= WINDOW_MS) return 0;
    return w.failures >= this.maxPerMinute ? Math.ceil((w.startMs + WINDOW_MS - nowMs) / 1000) : 0;
  }

  /** Records one failed authentication of `address`. */
  recordFailure(address: string, nowMs: number): void {
    const w = this.windows.get(address);
    if (w && nowMs - w.startMs < WINDOW_MS) {
      w.failures++;
      return;
    }
    if (w) this.windows.delete(address);
    else if (this.windows.size >= this.maxAddresses) this.windows.delete(this.windows.keys().next().value!);
    this.windows.set(address, { startMs: nowMs, failures: 1 });
  }
}

const WINDOW_MS = 60_000;
