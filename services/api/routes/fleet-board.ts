import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import {
  BOARD_MARKS,
  BOARD_SORTS,
  boardCursorTag,
  boardOrder,
  createFleetBoardRepository,
} from '../../db/fleet-board-repository.js';
import { KIND_LABELS, kindLabel } from '../../report/finding-labels.js';
import { SILENT_GATEWAY_H } from '../../report/fleet-summary.js';
import { PRIORITY_OF } from '../../report/work-list.js';
import { principalOf } from '../plugins/auth.js';
import { fleetScopeOf } from '../request-fleet.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { FindingKindSchema, SeveritySchema } from '../schemas/finding.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { HOUR_MS } from '../../time/durations.js';

/** "New this week": a finding's onset within the last seven days. */
const NEW_WINDOW_MS = 7 * 24 * HOUR_MS;
const literals = (values: readonly string[], description: string) =>
  Type.Union(
    values.map((v) => Type.Literal(v)),
    { description },
  );
const PrioritySchema = Type.Union(
  [Type.Literal('book now'), Type.Literal('book this week'), Type.Literal('at next service')],
  {
    description: 'the booking word of the worst unresolved finding',
  },
);

const BoardFinding = Type.Object({
  id: Type.String(),
  kind: Type.String(),
  label: Type.String({ description: "the kind in a planner's words" }),
  severity: SeveritySchema,
  status: Type.String({ description: 'open, acknowledged or deferred' }),
  deferredUntil: Type.Union([Type.String({ format: 'date-time' }), Type.Null()]),
  firstSeen: Type.String({ format: 'date-time' }),
  summary: Type.String({ description: 'one sentence a planner understands (temperatures in `unit`)' }),
});

/** The planner's fleet page over HTTP: one row per vehicle at risk, filtered, sorted and paged. */
const fleetBoardRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const board = createFleetBoardRepository(app.database.db);

  app.get(
    '/v1/fleet/vehicles',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['fleet'],
        summary:
          "Vehicles at risk, one row per vehicle, filtered, sorted and paged by cursor, with the fleet's counts (the web view's fleet page)",
        description:
          'A row is a vehicle with unresolved findings (open, acknowledged or deferred): worst priority, risk, every unresolved finding ' +
          'as a short label with its status, since when (the earliest onset), depot. `total` is the number of rows the filter matches. ' +
          `Counts: vehicles reporting (analysed data within ${SILENT_GATEWAY_H} h), silent gateways (none within it), and vehicles with a finding ` +
          'whose onset is within the last 7 days. Each finding carries its sentence, temperatures in `unit`. ' +
          'Paging: pass `nextCursor` as `?cursor=` with the same sort, order and filters (a cursor of another sort or order is refused, 400; ' +
          'so is an unknown parameter such as the former `offset`). `order=desc` is the exact reverse of `asc`. Ties: priority and since by risk ' +
          '(highest first in asc), then vehicle id; risk and depot by vehicle id. Without a depot, a vehicle sorts after every depot (asc). ' +
          'A vehicle whose risk or findings change while a planner pages may move.',
        security: SECURITY,
        querystring: Type.Object(
          {
            severity: Type.Optional(SeveritySchema),
            kind: Type.Optional(FindingKindSchema),
            depot: Type.Optional(Type.String({ minLength: 1, maxLength: 64 })),
            mark: Type.Optional(
              literals(
                BOARD_MARKS,
                'acknowledged / deferred: a finding has that status; marked: either; unmarked: neither',
              ),
            ),
            q: Type.Optional(
              Type.String({
                minLength: 1,
                maxLength: 100,
                description: 'part of the vehicle id or label, any case',
              }),
            ),
            sort: Type.Union(
              BOARD_SORTS.map((s) => Type.Literal(s)),
              { default: 'risk' },
            ),
            order: Type.Union([Type.Literal('asc'), Type.Literal('desc')], {
              default: 'desc',
              description: 'default desc (highest risk first)',
            }),
            ...pageQuery(50, 200),
            fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
            unit: UnitParam,
          },
          { additionalProperties: false },
        ),
        response: {
          200: Type.Object({
            unit: UnitField,
            total: Type.Integer({ description: 'rows the filter matches, over every page' }),
            limit: Type.Integer(),
            nextCursor: NextCursor,
            counts: Type.Object({
              vehicles: Type.Integer(),
              atRisk: Type.Integer(),
              reporting: Type.Integer(),
              silentGateways: Type.Integer(),
              newThisWeek: Type.Integer(),
              silentGatewayHours: Type.Number(),
            }),
            depots: Type.Array(Type.String()),
            kinds: Type.Array(Type.Object({ kind: Type.String(), label: Type.String() }), {
              description: 'finding kinds and their labels, for the filter',
            }),
            vehicles: Type.Array(
              Type.Object({
                vehicleId: Type.String(),
                label: Type.Union([Type.String(), Type.Null()]),
                depot: Type.Union([Type.String(), Type.Null()]),
                riskScore: Type.Number(),
                maxSeverity: SeveritySchema,
                priority: PrioritySchema,
                since: Type.String({ format: 'date-time', description: 'earliest onset of its unresolved findings' }),
                analysedUpTo: Type.Union([Type.String({ format: 'date-time' }), Type.Null()]),
                acknowledged: Type.Integer({ description: 'findings acknowledged' }),
                deferred: Type.Integer({ description: 'findings deferred' }),
                findings: Type.Array(BoardFinding),
              }),
            ),
          }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request, reply) => {
      const { fleet, severity, kind, depot, mark, q, sort, order, limit, cursor, unit } = request.query;
      const fleetId = fleetScopeOf(principalOf(request), fleet);
      const desc = order === 'desc';
      const after = decodeCursor(cursor, boardOrder(sort, desc), boardCursorTag(sort, desc));
      const filter = {
        fleetId,
        ...(severity ? { severity } : {}),
        ...(kind ? { kind } : {}),
        ...(depot ? { depot } : {}),
        ...(mark ? { mark } : {}),
        ...(q?.trim() ? { search: q.trim() } : {}),
      };
      // Independent reads; on a pg pool they run side by side (PGlite queues them).
      const [page, total, counts, depots] = await Promise.all([
        board.page(filter, sort, desc, { limit, after }),
        board.total(filter),
        board.counts(fleetId, Date.now(), SILENT_GATEWAY_H * HOUR_MS, NEW_WINDOW_MS),
        board.depots(fleetId),
      ]);
      return inUnit(reply, unit, {
        unit,
        total,
        limit,
        nextCursor: nextCursorOf(page, boardCursorTag(sort, desc)),
        depots,
        kinds: Object.entries(KIND_LABELS).map(([k, label]) => ({ kind: k, label })),
        counts: { ...counts, silentGatewayHours: SILENT_GATEWAY_H },
        vehicles: page.items.map((r) => ({
          vehicleId: r.vehicleId,
          label: r.label,
          depot: r.depot,
          riskScore: r.riskScore,
          maxSeverity: r.maxSeverity,
          priority: PRIORITY_OF[r.maxSeverity],
          since: r.findings.reduce((s, f) => (f.firstSeen < s ? f.firstSeen : s), r.findings[0]?.firstSeen ?? ''),
          analysedUpTo: r.lastReadingAt?.toISOString() ?? null,
          acknowledged: r.findings.filter((f) => f.status === 'acknowledged').length,
          deferred: r.findings.filter((f) => f.status === 'deferred').length,
          findings: r.findings.map((f) => ({
            id: f.id,
            kind: f.kind,
            label: kindLabel(f.kind),
            severity: f.severity,
            status: f.status ?? 'open',
            deferredUntil: f.deferredUntil ?? null,
            firstSeen: f.firstSeen,
            summary: f.summary,
          })),
        })),
      });
    },
  );
};

export default fleetBoardRoutes;
