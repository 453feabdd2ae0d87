import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { createFindingActions, MAX_DEFERRAL_DAYS } from '../planner/finding-actions.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { FindingIdParams, FindingKindSchema, FindingSchema, FindingStatusSchema } from '../schemas/finding.js';
import { parseTimeParam } from '../schemas/time-range.js';

/**
 * Findings across the fleet and their lifecycle: open → acknowledged → resolved, and deferred until
 * a date. The planner actions need only the `read` scope (planners hold read keys; ingest keys
 * belong to gateways); their rules live in planner/finding-actions.ts.
 */
const findingsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const findings = createFindingsRepository(db);
  const actions = createFindingActions(db);

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
        description: 'The planner has seen it. It still counts for the risk score and the vehicle stays in the at-risk list, shown as acknowledged, '
          + 'until a repair or quiet evidence resolves it. Acknowledging twice (or a deferred finding) changes nothing; a resolved finding answers 409. '
          + 'Undo with POST /v1/findings/{findingId}/reopen. Audited. Needs the read scope.',
        security: SECURITY,
        params: FindingIdParams,
        response: { 200: FindingSchema, ...errorResponses(401, 403, 404, 409) },
      },
    },
    async (request) => actions.acknowledge(principalOf(request), request.params.findingId),
  );

  app.post(
    '/v1/findings/:findingId/defer',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: 'Defer a finding until a date, with a reason (→ deferred)',
        description: 'The work is postponed, e.g. to the next planned service. The finding keeps counting for risk and stays in the at-risk list, '
          + `shown as deferred until the date; on that date it goes back to acknowledged (or open). At most ${MAX_DEFERRAL_DAYS} days ahead. `
          + 'Deferring again sets a new date. A resolved finding answers 409. Audited. Needs the read scope.',
        security: SECURITY,
        params: FindingIdParams,
        body: Type.Object({
          until: Type.String({ minLength: 1, maxLength: 40, description: 'RFC 3339 time, a date (YYYY-MM-DD, midnight UTC) or epoch ms; in the future' }),
          reason: Type.String({ minLength: 1, maxLength: 500, description: 'why the work waits, in words' }),
        }, { additionalProperties: false }),
        response: { 200: FindingSchema, ...errorResponses(400, 401, 403, 404, 409) },
      },
    },
    async (request) => {
      const untilMs = parseTimeParam('until', request.body.until)!;
      return actions.defer(principalOf(request), request.params.findingId, untilMs, request.body.reason.trim(), Date.now());
    },
  );

  app.post(
    '/v1/findings/:findingId/reopen',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: 'Undo an acknowledgement or a deferral (→ open)',
        description: 'An acknowledged or deferred finding goes back to open; an open one is left as it is; a resolved one answers 409. Audited. Needs the read scope.',
        security: SECURITY,
        params: FindingIdParams,
        response: { 200: FindingSchema, ...errorResponses(401, 403, 404, 409) },
      },
    },
    async (request) => actions.reopen(principalOf(request), request.params.findingId),
  );
};

export default findingsRoutes;
