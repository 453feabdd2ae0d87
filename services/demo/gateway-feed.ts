import { NdjsonEncoder, simulateVehicle, type SimVehicle } from '../simulator/index.js';

export interface FeedOptions {
  baseUrl: string;
  ingestKey: string;
  startMs: number;
  days: number;
  seed: number;
  /** Days of readings a gateway uploads in one request. */
  uploadDays: number;
}

export interface FeedTotals {
  requests: number;
  accepted: number;
  duplicates: number;
  rejected: number;
  retries: number;
}

const MAX_ATTEMPTS = 6;

/**
 * Posts one NDJSON upload the way a gateway does: retries on network errors, 429 and 5xx with
 * exponential backoff (harmless: a re-sent reading is a duplicate), gives up on other 4xx.
 */
async function upload(url: string, key: string, body: Buffer, totals: FeedTotals): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    let status = 0;
    let text = '';
    try {
      const res = await fetch(url, {
        method: 'POST',
        headers: { authorization: `Bearer ${key}`, 'content-type': 'application/x-ndjson' },
        body,
      });
      status = res.status;
      text = await res.text();
      if (res.ok) {
        const r = JSON.parse(text) as { accepted: number; duplicates: number; rejected: unknown[] };
        totals.requests++;
        totals.accepted += r.accepted;
        totals.duplicates += r.duplicates;
        totals.rejected += r.rejected.length;
        return;
      }
    } catch (err) {
      if (attempt >= MAX_ATTEMPTS) throw new Error(`upload failed after ${attempt} attempts`, { cause: err });
    }
    if (status !== 0 && status !== 429 && status < 500) throw new Error(`upload refused with ${status}: ${text}`);
    if (attempt >= MAX_ATTEMPTS) throw new Error(`upload failed after ${attempt} attempts: ${status} ${text}`);
    totals.retries++;
    await new Promise((r) => setTimeout(r, 200 * 2 ** attempt));
  }
}

/**
 * Simulates one vehicle and uploads its readings through `POST /v1/readings`, one request per
 * `uploadDays` days, as its gateway would after a spell without coverage.
 */
export async function feedVehicle(vehicle: SimVehicle, opts: FeedOptions, totals: FeedTotals): Promise<number> {
  const encoder = new NdjsonEncoder(vehicle.vehicleId);
  const url = `${opts.baseUrl}/v1/readings`;
  const windowMs = opts.uploadDays * 86_400_000;
  let windowEnd = opts.startMs + windowMs;
  let parts: Buffer[] = [];
  let readings = 0;
  const flush = async () => {
    if (parts.length === 0) return;
    const body = Buffer.concat(parts);
    parts = [];
    await upload(url, opts.ingestKey, body, totals);
  };
  for (const chunk of simulateVehicle(vehicle, { startMs: opts.startMs, days: opts.days, seed: opts.seed })) {
    let from = 0;
    for (let i = 0; i < chunk.length; i++) {
      if (chunk.ts[i]! >= windowEnd) {
        if (i > from) parts.push(encoder.encode(chunk, from, i));
        from = i;
        await flush();
        while (chunk.ts[i]! >= windowEnd) windowEnd += windowMs;
      }
    }
    if (chunk.length > from) parts.push(encoder.encode(chunk, from, chunk.length));
    readings += chunk.length;
  }
  await flush();
  return readings;
}
