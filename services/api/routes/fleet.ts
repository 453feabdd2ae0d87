import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { AT_RISK_ORDER, atRiskVehicles } from '../../db/at-risk-repository.js';
import { severitiesFrom } from '../../db/findings-repository.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { FindingBrief, SeveritySchema } from '../schemas/finding.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { fleetScopeOf } from '../request-fleet.js';

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
          "Risk 0–100 comes from the unresolved findings (severity, confidence, recency at the vehicle's latest reading). " +
          'Acknowledged and deferred findings still count and are listed with their `status` (a planner having seen a finding repairs nothing); ' +
          'only a repair or quiet evidence resolves them. `minSeverity` keeps vehicles with an unresolved finding at least that severe, and only those findings. ' +
          "`depot` keeps one depot's vehicles. A page at a time: pass `nextCursor` as `?cursor=` (a vehicle whose risk changes meanwhile may move).",
        security: SECURITY,
        querystring: Type.Object({
          ...pageQuery(50, 1000),
          minSeverity: Type.Optional(SeveritySchema),
          depot: Type.Optional(
            Type.String({ minLength: 1, maxLength: 64, description: 'only the vehicles of this depot' }),
          ),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
          unit: UnitParam,
        }),
        response: {
          200: Type.Object({
            unit: UnitField,
            vehicles: Type.Array(
              Type.Object({
                vehicleId: Type.String(),
                riskScore: Type.Number({ minimum: 0, maximum: 100 }),
                maxSeverity: SeveritySchema,
                analysedUpTo: Type.Union([
                  Type.String({ format: 'date-time', description: "the vehicle's latest analysed reading" }),
                  Type.Null(),
                ]),
                depot: Type.Union([Type.String(), Type.Null()]),
                atmosphericPressureKpa: Type.Number({
                  description: "the atmospheric pressure the vehicle's boiling point uses, kPa",
                }),
                siteSource: Type.Union([Type.Literal('vehicle'), Type.Literal('depot'), Type.Literal('sea level')]),
                defaultProfile: Type.Boolean({
                  description: 'on the default profile: boiling and freezing figures are assumptions',
                }),
                findings: Type.Array(FindingBrief),
              }),
            ),
            nextCursor: NextCursor,
          }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const q = request.query;
      const page = await atRiskVehicles(
        db,
        {
          fleetId: fleetScopeOf(principal, q.fleet),
          severities: severitiesFrom(q.minSeverity ?? 'advisory'),
          ...(q.depot !== undefined ? { depot: q.depot } : {}),
        },
        { limit: q.limit, after: decodeCursor(q.cursor, AT_RISK_ORDER) },
      );
      return inUnit(reply, q.unit, { unit: q.unit, vehicles: page.items, nextCursor: nextCursorOf(page) });
    },
  );
};

export default fleetRoutes;
