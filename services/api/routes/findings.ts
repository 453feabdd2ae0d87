import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { refreshVehicleRisk } from '../../db/vehicle-risk.js';
import { ConflictError, NotFoundError } from '../errors.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { FindingIdParams, FindingKindSchema, FindingSchema, FindingStatusSchema } from '../schemas/finding.js';

/**
 * Findings across the fleet and their lifecycle: open → acknowledged → resolved. Acknowledging is
 * a planner action and needs only the `read` scope (planners hold read keys; ingest keys belong to
 * gateways).
 */
const findingsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const findings = createFindingsRepository(db);

  app.get(
    '/v1/findings',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: "The fleet's findings, most severe and most recent first",
        security: SECURITY,
        querystring: Type.Object({
          status: Type.Optional(FindingStatusSchema),
          kind: Type.Optional(FindingKindSchema),
          limit: Type.Integer({ minimum: 1, maximum: 1000, default: 100 }),
          offset: Type.Integer({ minimum: 0, default: 0 }),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
        }),
        response: { 200: Type.Object({ findings: Type.Array(FindingSchema) }), ...errorResponses(400, 401, 403) },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      const { status, kind, limit, offset, fleet } = request.query;
      if (fleet) assertFleetAccess(principal, fleet);
      const list = await findings.list({ fleetId: principal.fleetId ?? fleet ?? null, ...(status ? { status } : {}), ...(kind ? { kind } : {}), limit, offset });
      return { findings: list };
    },
  );

  app.post(
    '/v1/findings/:findingId/acknowledge',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: 'Acknowledge a finding (open → acknowledged)',
        description: 'The planner has seen it. Acknowledging twice is harmless; a resolved finding answers 409. Acknowledged findings stop adding to the risk score. Needs the read scope.',
        security: SECURITY,
        params: FindingIdParams,
        response: { 200: FindingSchema, ...errorResponses(401, 403, 404, 409) },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      const existing = await findings.get(request.params.findingId);
      if (!existing) throw new NotFoundError(`no finding '${request.params.findingId}'`);
      assertFleetAccess(principal, existing.fleetId);
      return db.transaction().execute(async (trx) => {
        const result = await findings.acknowledge(trx, request.params.findingId, principal.keyId);
        if (result === undefined) throw new NotFoundError(`no finding '${request.params.findingId}'`);
        if (result === 'resolved') throw new ConflictError('the finding is already resolved');
        await refreshVehicleRisk(trx, result.vehicleId);
        return result;
      });
    },
  );
};

export default findingsRoutes;
