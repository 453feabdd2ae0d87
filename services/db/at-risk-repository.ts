import { sql, type Kysely } from 'kysely';
import type { Severity } from '../analysis/findings/finding.js';
import { defaultProfileNote } from '../analysis/findings/profile-assumptions.js';
import { SEA_LEVEL_PRESSURE_KPA } from '../analysis/physics/atmosphere.js';
import {
  afterKeySql,
  keyColumnsSql,
  orderBySql,
  pageOf,
  type Page,
  type PageRequest,
  type SortColumn,
} from './keyset.js';
import type { Database } from './schema.js';
import type { FindingBriefView } from './vehicle-risk.js';
import { DEPOT_JOIN, SITE_PRESSURE, SITE_SOURCE, type SiteSource } from './vehicle-site.js';

/** One vehicle of the at-risk list. */
export interface AtRiskVehicle {
  vehicleId: string;
  riskScore: number;
  maxSeverity: Severity;
  analysedUpTo: string | null;
  depot: string | null;
  atmosphericPressureKpa: number;
  siteSource: SiteSource;
  defaultProfile: boolean;
  findings: Array<FindingBriefView & { defaultProfile: boolean; profileNote: string | null }>;
}

/** Highest risk first, then by id: the order of vehicle_analysis_risk_idx, so the index serves it. */
export const AT_RISK_ORDER: readonly SortColumn[] = [
  { sql: sql.ref('a.risk_score'), dir: 'desc', type: 'number', real: true },
  { sql: sql.ref('a.vehicle_id'), dir: 'asc', type: 'text' },
];

/**
 * A page of the vehicles with unresolved findings whose worst severity is one of `severities`
 * (of one fleet, or every fleet for null), each with the brief of those findings. One range
 * scan of vehicle_analysis_risk_idx (fleet_id, risk_score desc, vehicle_id): the brief is kept
 * beside the risk as JSON (migration 0004); the vehicle and its depot add two key lookups.
 */
export async function atRiskVehicles(
  db: Kysely<Database>,
  o: { fleetId: string | null; severities: readonly Severity[]; depot?: string },
  pageRequest: PageRequest,
): Promise<Page<AtRiskVehicle>> {
  const depot = o.depot ?? null;
  const r = await sql<
    {
      vehicle_id: string;
      risk_score: number;
      max_severity: Severity;
      last_reading_at: Date | null;
      brief: FindingBriefView[];
      depot: string | null;
      kpa: number | null;
      source: SiteSource;
      default_profile: boolean;
    } & Record<string, unknown>
  >`
    select a.vehicle_id, a.risk_score, a.max_severity, a.last_reading_at, a.open_findings_brief as brief,
           v.depot, ${SITE_PRESSURE} as kpa, ${SITE_SOURCE} as source, v.profile_set_at is null as default_profile, ${keyColumnsSql(AT_RISK_ORDER)}
    from vehicle_analysis a join vehicles v on v.vehicle_id = a.vehicle_id ${DEPOT_JOIN}
    where (${o.fleetId}::text is null or a.fleet_id = ${o.fleetId}) and a.open_findings > 0 and a.max_severity = any(${[...o.severities]}::text[])
      and (${depot}::text is null or v.depot = ${depot})
      and ${afterKeySql(AT_RISK_ORDER, pageRequest.after)}
    order by ${orderBySql(AT_RISK_ORDER)}
    limit ${pageRequest.limit + 1}`.execute(db);
  const all = o.severities.length === 3;
  return pageOf(r.rows, pageRequest.limit, AT_RISK_ORDER.length, (v) => ({
    vehicleId: v.vehicle_id,
    riskScore: v.risk_score,
    maxSeverity: v.max_severity,
    analysedUpTo: v.last_reading_at?.toISOString() ?? null,
    depot: v.depot,
    atmosphericPressureKpa: v.kpa ?? SEA_LEVEL_PRESSURE_KPA,
    siteSource: v.source,
    defaultProfile: v.default_profile,
    findings: (all ? v.brief : v.brief.filter((f) => o.severities.includes(f.severity))).map((f) => ({
      ...f,
      defaultProfile: v.default_profile,
      profileNote: defaultProfileNote(f.kind, v.default_profile),
    })),
  }));
}
