import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import type { Severity } from '../../analysis/findings/finding.js';
import {
  createFindingsRepository,
  FINDING_ORDER,
  severitiesFrom,
  type FindingStatus,
} from '../../db/findings-repository.js';
import { BadRequestError } from '../errors.js';
import { createFindingActions, MAX_DEFERRAL_DAYS } from '../planner/finding-actions.js';
import { AuditEntry } from '../schemas/audit.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VEHICLE_ID_PATTERN } from '../schemas/common.js';
import {
  FINDING_KINDS,
  FindingIdParams,
  FindingSchema,
  FINDING_STATUSES,
  SEVERITIES,
  SeveritySchema,
} from '../schemas/finding.js';
import { listParam, listValues } from '../schemas/list-param.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { parseTimeParam, TimeParam } from '../schemas/time-range.js';
import { fleetScopeOf } from '../request-fleet.js';

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
        summary: "The fleet's findings, most severe and most recent first, filtered, a page at a time",
        description:
          'Filters combine (and); a list filter matches any of its values. `severity` lists severities, `minSeverity` keeps those at least as severe ' +
          "(give one of the two). `since` keeps findings with evidence at or after the time. `depot` keeps the findings of the depot's vehicles. " +
          'Paging: pass `nextCursor` as `?cursor=`; the order is severity, latest evidence, vehicle, id. `offset` is the older paging style (not with a cursor).',
        security: SECURITY,
        querystring: Type.Object({
          status: listParam(FINDING_STATUSES, 'finding statuses (open, acknowledged, deferred, resolved)'),
          kind: listParam(FINDING_KINDS, 'finding kinds'),
          vehicle: listParam({ item: VEHICLE_ID_PATTERN }, 'vehicle ids'),
          severity: listParam(SEVERITIES, 'severities (advisory, warning, critical)'),
          minSeverity: Type.Optional(SeveritySchema),
          since: TimeParam('findings with evidence at or after'),
          depot: Type.Optional(
            Type.String({ minLength: 1, maxLength: 64, description: 'findings of the vehicles of this depot' }),
          ),
          ...pageQuery(100, 1000),
          offset: Type.Integer({
            minimum: 0,
            maximum: 100_000,
            default: 0,
            description: 'older paging style: rows to skip (not with cursor)',
          }),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
          unit: UnitParam,
        }),
        response: {
          200: Type.Object({ unit: UnitField, findings: Type.Array(FindingSchema), nextCursor: NextCursor }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const q = request.query;
      if (q.severity !== undefined && q.minSeverity !== undefined)
        throw new BadRequestError('give severity or minSeverity, not both', 'validation_failed');
      if (q.cursor !== undefined && q.offset > 0)
        throw new BadRequestError('give cursor or offset, not both', 'validation_failed');
      const sinceMs = parseTimeParam('since', q.since);
      const severities = q.minSeverity !== undefined ? severitiesFrom(q.minSeverity) : listValues<Severity>(q.severity);
      const statuses = listValues<FindingStatus>(q.status);
      const kinds = listValues(q.kind);
      const vehicleIds = listValues(q.vehicle);
      const page = await findings.list(
        {
          fleetId: fleetScopeOf(principal, q.fleet),
          ...(statuses ? { statuses } : {}),
          ...(kinds ? { kinds } : {}),
          ...(severities ? { severities } : {}),
          ...(vehicleIds ? { vehicleIds } : {}),
          ...(sinceMs !== undefined ? { sinceMs } : {}),
          ...(q.depot !== undefined ? { depot: q.depot } : {}),
        },
        { limit: q.limit, after: decodeCursor(q.cursor, FINDING_ORDER), offset: q.offset },
      );
      return inUnit(reply, q.unit, { unit: q.unit, findings: page.items, nextCursor: nextCursorOf(page) });
    },
  );

  app.get(
    '/v1/findings/:findingId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: 'One finding with its audit trail',
        description:
          'The history lists, oldest first, every planner action on the finding (acknowledge, defer, reopen) and every change a ' +
          'corrected or deleted service event made to it (service-event-correct, service-event-delete, naming the event).',
        security: SECURITY,
        params: FindingIdParams,
        querystring: Type.Object({ unit: UnitParam }),
        response: {
          200: Type.Intersect([FindingSchema, Type.Object({ unit: UnitField, history: Type.Array(AuditEntry) })]),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const found = await actions.withHistory(principalOf(request), request.params.findingId);
      return inUnit(reply, request.query.unit, { ...found, unit: request.query.unit });
    },
  );

  app.post(
    '/v1/findings/:findingId/acknowledge',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: 'Acknowledge a finding (open → acknowledged)',
        description:
          'The planner has seen it. It still counts for the risk score and the vehicle stays in the at-risk list, shown as acknowledged, ' +
          'until a repair or quiet evidence resolves it. Acknowledging twice (or a deferred finding) changes nothing; a resolved finding answers 409. ' +
          'Undo with POST /v1/findings/{findingId}/reopen. Audited. Needs the read scope.',
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
        description:
          'The work is postponed, e.g. to the next planned service. The finding keeps counting for risk and stays in the at-risk list, ' +
          `shown as deferred until the date; on that date it goes back to acknowledged (or open). At most ${MAX_DEFERRAL_DAYS} days ahead. ` +
          'Deferring again sets a new date. A resolved finding answers 409. Audited. Needs the read scope.',
        security: SECURITY,
        params: FindingIdParams,
        body: Type.Object(
          {
            until: Type.String({
              minLength: 1,
              maxLength: 40,
              description: 'RFC 3339 time, a date (YYYY-MM-DD, midnight UTC) or epoch ms; in the future',
            }),
            reason: Type.String({ minLength: 1, maxLength: 500, description: 'why the work waits, in words' }),
          },
          { additionalProperties: false },
        ),
        response: { 200: FindingSchema, ...errorResponses(400, 401, 403, 404, 409) },
      },
    },
    async (request) => {
      const untilMs = parseTimeParam('until', request.body.until)!;
      return actions.defer(
        principalOf(request),
        request.params.findingId,
        untilMs,
        request.body.reason.trim(),
        Date.now(),
      );
    },
  );

  app.post(
    '/v1/findings/:findingId/reopen',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['findings'],
        summary: 'Undo an acknowledgement or a deferral (→ open)',
        description:
          'An acknowledged or deferred finding goes back to open; an open one is left as it is; a resolved one answers 409. Audited. Needs the read scope.',
        security: SECURITY,
        params: FindingIdParams,
        response: { 200: FindingSchema, ...errorResponses(401, 403, 404, 409) },
      },
    },
    async (request) => actions.reopen(principalOf(request), request.params.findingId),
  );
};

export default findingsRoutes;
