import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { sql } from 'kysely';
import { Type } from 'typebox';
import { createFindingsRepository, severitiesFrom } from '../../db/findings-repository.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { FindingBrief, SeveritySchema } from '../schemas/finding.js';

/** The planner's fleet view: which vehicles are at risk, and why. */
const fleetRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const findings = createFindingsRepository(db);

  app.get(
    '/v1/fleet/at-risk',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['fleet'],
        summary: 'Vehicles at risk, highest risk first, each with its open findings',
        description:
          'Risk 0–100 comes from the open findings (severity, confidence, recency at the vehicle\'s latest reading). ' +
          'Acknowledged findings no longer add to it. `minSeverity` keeps vehicles with an open finding at least that severe, and only those findings.',
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
      // Served by vehicle_analysis_risk_idx (fleet_id, risk_score desc, vehicle_id): no sort of the fleet.
      const top = await sql<{ vehicle_id: string; risk_score: number; max_severity: 'advisory' | 'warning' | 'critical'; last_reading_at: Date | null }>`
        select vehicle_id, risk_score, max_severity, last_reading_at from vehicle_analysis
        where (${fleetId}::text is null or fleet_id = ${fleetId}) and open_findings > 0 and max_severity = any(${severities}::text[])
        order by risk_score desc, vehicle_id
        limit ${request.query.limit}`.execute(db);
      const rows = await findings.openOf(top.rows.map((r) => r.vehicle_id), severities);
      const byVehicle = new Map<string, typeof rows>();
      for (const r of rows) {
        const list = byVehicle.get(r.vehicle_id) ?? [];
        list.push(r);
        byVehicle.set(r.vehicle_id, list);
      }
      return {
        vehicles: top.rows.map((v) => ({
          vehicleId: v.vehicle_id,
          riskScore: v.risk_score,
          maxSeverity: v.max_severity,
          analysedUpTo: v.last_reading_at?.toISOString() ?? null,
          findings: (byVehicle.get(v.vehicle_id) ?? []).map((f) => ({
            id: f.finding_id, kind: f.kind, severity: f.severity, confidence: f.confidence, firstSeen: f.first_seen.toISOString(),
            lastSeen: f.last_seen.toISOString(), summary: f.summary, recommendedCheck: f.recommended_check, troubleCode: f.trouble_code,
          })),
        })),
      };
    },
  );
};

export default fleetRoutes;
