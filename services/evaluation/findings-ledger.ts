import type { ApiClient } from './api-client.js';
import { atLeast, type Alarm, type Severity } from './scoring.js';

/** The fields of a finding (GET /v1/findings, GET /v1/vehicles/{id}/findings) the ledger keeps. */
export interface FindingSeen {
  id: string;
  vehicleId: string;
  kind: string;
  severity: Severity;
  firstSeen: string;
}

/** Page size of GET /v1/findings (its maximum). */
const PAGE = 1000;

/**
 * Every finding a planner could have seen, whatever became of it later (resolved, superseded,
 * downgraded): when it was first seen and the most severe it was ever shown.
 */
export class FindingsLedger {
  private readonly byId = new Map<string, Alarm & { vehicleId: string }>();

  /** Records findings read at true time `atMs`; `seenAtDated`: take their own date as the time seen (one pass). */
  observe(findings: readonly FindingSeen[], atMs: number, seenAtDated = false): void {
    for (const f of findings) {
      const dated = Date.parse(f.firstSeen);
      const known = this.byId.get(f.id);
      if (!known) {
        this.byId.set(f.id, {
          id: f.id,
          vehicleId: f.vehicleId,
          kind: f.kind,
          maxSeverity: f.severity,
          seenAtMs: seenAtDated ? dated : atMs,
          datedMs: dated,
        });
        continue;
      }
      if (!atLeast(known.maxSeverity, f.severity)) known.maxSeverity = f.severity;
      known.datedMs = Math.min(known.datedMs, dated);
    }
  }

  /** The alarms of one vehicle. */
  alarmsOf(vehicleId: string): Alarm[] {
    return [...this.byId.values()].filter((a) => a.vehicleId === vehicleId).map(({ vehicleId: _, ...a }) => a);
  }

  get size(): number {
    return this.byId.size;
  }
}

/** Every item of a list endpoint, following nextCursor. */
async function allPages<T>(client: ApiClient, path: string, field: string): Promise<T[]> {
  const out: T[] = [];
  let cursor: string | null = null;
  do {
    const page: Record<string, unknown> = await client.call<Record<string, unknown>>(
      'GET',
      `${path}${path.includes('?') ? '&' : '?'}limit=${PAGE}${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`,
    );
    out.push(...(page[field] as T[]));
    cursor = page.nextCursor as string | null;
  } while (cursor);
  return out;
}

/** Every finding of the key's fleet, any status (GET /v1/findings, paged). */
export function fleetFindings(client: ApiClient): Promise<FindingSeen[]> {
  return allPages(client, '/v1/findings', 'findings');
}

/** Every finding of each vehicle, any status (GET /v1/vehicles/{id}/findings, paged). */
export async function vehicleFindings(client: ApiClient, vehicleIds: readonly string[]): Promise<FindingSeen[]> {
  const out: FindingSeen[] = [];
  for (const id of vehicleIds)
    out.push(...(await allPages<FindingSeen>(client, `/v1/vehicles/${encodeURIComponent(id)}/findings`, 'findings')));
  return out;
}

/** Risk at the end per vehicle from the at-risk list (vehicles not listed: 0). */
export async function riskScores(client: ApiClient): Promise<Map<string, number>> {
  const vehicles = await allPages<{ vehicleId: string; riskScore: number }>(client, '/v1/fleet/at-risk', 'vehicles');
  return new Map(vehicles.map((v) => [v.vehicleId, v.riskScore]));
}
