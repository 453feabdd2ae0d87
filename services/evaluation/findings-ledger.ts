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
        this.byId.set(f.id, { id: f.id, vehicleId: f.vehicleId, kind: f.kind, maxSeverity: f.severity, seenAtMs: seenAtDated ? dated : atMs, datedMs: dated });
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

/** Every finding of the key's fleet, any status (GET /v1/findings, paged). */
export async function fleetFindings(client: ApiClient): Promise<FindingSeen[]> {
  const out: FindingSeen[] = [];
  for (let offset = 0; ; offset += PAGE) {
    const page = await client.call<{ findings: FindingSeen[] }>('GET', `/v1/findings?limit=${PAGE}&offset=${offset}`);
    out.push(...page.findings);
    if (page.findings.length < PAGE) return out;
  }
}

/** Every finding of each vehicle, any status (GET /v1/vehicles/{id}/findings). */
export async function vehicleFindings(client: ApiClient, vehicleIds: readonly string[]): Promise<FindingSeen[]> {
  const out: FindingSeen[] = [];
  for (const id of vehicleIds) {
    const res = await client.call<{ findings: FindingSeen[] }>('GET', `/v1/vehicles/${encodeURIComponent(id)}/findings`);
    out.push(...res.findings);
  }
  return out;
}

/** Risk at the end per vehicle from the at-risk list (vehicles not listed: 0). */
export async function riskScores(client: ApiClient): Promise<Map<string, number>> {
  const res = await client.call<{ vehicles: Array<{ vehicleId: string; riskScore: number }> }>('GET', '/v1/fleet/at-risk?limit=1000');
  return new Map(res.vehicles.map((v) => [v.vehicleId, v.riskScore]));
}
