import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { sql } from 'kysely';
import { Type } from 'typebox';
import type { Severity } from '../../analysis/findings/finding.js';
import { severitiesFrom } from '../../db/findings-repository.js';
import type { FindingBriefView } from '../../db/vehicle-risk.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { FindingBrief, SeveritySchema } from '../schemas/finding.js';

/** The planner's fleet view: which vehicles are at risk, and why. */
const fleetRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;

  app.get(
    '/v1/fleet/at-risk',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['fleet'],
        summary: 'Vehicles at risk, highest risk first, each with its unresolved findings',
        description:
          'Risk 0–100 comes from the unresolved findings (severity, confidence, recency at the vehicle\'s latest reading). ' +
          'Acknowledged and deferred findings still count and are listed with their `status` (a planner having seen a finding repairs nothing); ' +
          'only a repair or quiet evidence resolves them. `minSeverity` keeps vehicles with an unresolved finding at least that severe, and only those findings.',
        security: SECURITY,
        querystring: Type.Object({
          limit: Type.Integer({ minimum: 1, maximum: 1000, default: 50 }),
          minSeverity: Type.Optional(SeveritySchema),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
        }),
        response: {
          200: Type.Object({
            vehicles: Type.Array(Type.Object({
              vehicleId: Type.String(),
              riskScore: Type.Number({ minimum: 0, maximum: 100 }),
              maxSeverity: SeveritySchema,
              analysedUpTo: Type.Union([Type.String({ format: 'date-time', description: "the vehicle's latest analysed reading" }), Type.Null()]),
              findings: Type.Array(FindingBrief),
            })),
          }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      if (request.query.fleet) assertFleetAccess(principal, request.query.fleet);
      const fleetId = principal.fleetId ?? request.query.fleet ?? null;
      const severities = severitiesFrom(request.query.minSeverity ?? 'advisory');
      // One index range scan of vehicle_analysis_risk_idx (fleet_id, risk_score desc, vehicle_id), no
      // sort, no join: each vehicle's open findings are kept beside its risk as JSON (migration 0004),
      // already in the response's shape and order.
      const top = await sql<{ vehicle_id: string; risk_score: number; max_severity: Severity; last_reading_at: Date | null; brief: FindingBriefView[] }>`
        select a.vehicle_id, a.risk_score, a.max_severity, a.last_reading_at, a.open_findings_brief as brief
        from vehicle_analysis a
        where (${fleetId}::text is null or a.fleet_id = ${fleetId}) and a.open_findings > 0 and a.max_severity = any(${severities}::text[])
        order by a.risk_score desc, a.vehicle_id
        limit ${request.query.limit}`.execute(db);
      const all = severities.length === 3;
      return {
        vehicles: top.rows.map((v) => ({
          vehicleId: v.vehicle_id,
          riskScore: v.risk_score,
          maxSeverity: v.max_severity,
          analysedUpTo: v.last_reading_at?.toISOString() ?? null,
          findings: all ? v.brief : v.brief.filter((f) => severities.includes(f.severity)),
        })),
      };
    },
  );
};

export default fleetRoutes;
