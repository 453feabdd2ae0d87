import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createFindingsRepository, VEHICLE_FINDING_ORDER } from '../../db/findings-repository.js';
import { createVehicleHistoryRepository, DAY_ORDER, RUN_ORDER } from '../../db/vehicle-history-repository.js';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { BadRequestError } from '../errors.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { FindingSchema } from '../schemas/finding.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { parseTimeParam, TimeParam } from '../schemas/time-range.js';
import { requireVehicle } from '../vehicle-access.js';

const RunSchema = Type.Object({
  startTs: Type.String({ format: 'date-time' }),
  endTs: Type.String({ format: 'date-time' }),
  startKind: Type.String({ description: "'cold' or 'warm'" }),
  open: Type.Boolean({ description: 'the run may still continue (no gap seen after it yet)' }),
  metrics: Type.Record(
    Type.String(),
    Type.Union([
      Type.Number(),
      Type.Boolean(),
      Type.String(),
      Type.Null(),
      Type.Array(Type.Unknown()),
      Type.Record(Type.String(), Type.Unknown()),
    ]),
    {
      description:
        "warm-up and operating metrics of the run (temperatures in the reply's unit, s, km/h), as computed by the analysis",
    },
  ),
});

const DaySchema = Type.Object({
  day: Type.String({ format: 'date', description: 'UTC day' }),
  metrics: Type.Record(Type.String(), Type.Unknown(), {
    description:
      "the day's aggregates (peak, warm median and ambient temperatures in the reply's unit, engine hours, samples)",
  }),
});

const DATE = '^\\d{4}-\\d{2}-\\d{2}$';

/** Per-vehicle analysis results: engine runs, vehicle-days and findings, each a page at a time. */
const vehicleRunsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const vehicles = createVehiclesRepository(db);
  const findings = createFindingsRepository(db);
  const history = createVehicleHistoryRepository(db);

  app.get(
    '/v1/vehicles/:vehicleId/runs',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles'],
        summary: "A vehicle's engine runs with their warm-up and operating metrics, newest first",
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({
          from: TimeParam('runs starting at or after'),
          to: TimeParam('runs starting before'),
          ...pageQuery(100, 1000),
          unit: UnitParam,
        }),
        response: {
          200: Type.Object({
            vehicleId: Type.String(),
            unit: UnitField,
            runs: Type.Array(RunSchema),
            nextCursor: NextCursor,
          }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const { vehicleId } = request.params;
      const q = request.query;
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      const range = { fromMs: parseTimeParam('from', q.from) ?? null, toMs: parseTimeParam('to', q.to) ?? null };
      const page = await history.runs(vehicleId, range, {
        limit: q.limit,
        after: decodeCursor(q.cursor, RUN_ORDER),
      });
      return inUnit(reply, q.unit, { vehicleId, unit: q.unit, runs: page.items, nextCursor: nextCursorOf(page) });
    },
  );

  app.get(
    '/v1/vehicles/:vehicleId/days',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles'],
        summary: "A vehicle's daily aggregates (UTC days), newest first",
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({
          from: Type.Optional(Type.String({ pattern: DATE, description: 'first day, YYYY-MM-DD' })),
          to: Type.Optional(Type.String({ pattern: DATE, description: 'last day, YYYY-MM-DD' })),
          ...pageQuery(100, 1000),
          unit: UnitParam,
        }),
        response: {
          200: Type.Object({
            vehicleId: Type.String(),
            unit: UnitField,
            days: Type.Array(DaySchema),
            nextCursor: NextCursor,
          }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const { vehicleId } = request.params;
      const q = request.query;
      for (const [name, v] of [
        ['from', q.from],
        ['to', q.to],
      ] as const) {
        if (v !== undefined && Number.isNaN(Date.parse(`${v}T00:00:00Z`)))
          throw new BadRequestError(`${name} is not a calendar date: '${v}'`, 'validation_failed');
      }
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      const page = await history.days(
        vehicleId,
        { from: q.from ?? null, to: q.to ?? null },
        { limit: q.limit, after: decodeCursor(q.cursor, DAY_ORDER) },
      );
      return inUnit(reply, q.unit, { vehicleId, unit: q.unit, days: page.items, nextCursor: nextCursorOf(page) });
    },
  );

  app.get(
    '/v1/vehicles/:vehicleId/findings',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles', 'findings'],
        summary: "A vehicle's findings in every status, with evidence, recommended check and trouble code",
        description:
          'Unresolved first (open, acknowledged, deferred), then resolved; newest evidence first within each. A page at a time: pass `nextCursor` as `?cursor=`.',
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({ ...pageQuery(200, 1000), unit: UnitParam }),
        response: {
          200: Type.Object({
            vehicleId: Type.String(),
            unit: UnitField,
            findings: Type.Array(FindingSchema),
            nextCursor: NextCursor,
          }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const { vehicleId } = request.params;
      const q = request.query;
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      const page = await findings.ofVehicle(vehicleId, {
        limit: q.limit,
        after: decodeCursor(q.cursor, VEHICLE_FINDING_ORDER),
      });
      return inUnit(reply, q.unit, { vehicleId, unit: q.unit, findings: page.items, nextCursor: nextCursorOf(page) });
    },
  );
};

export default vehicleRunsRoutes;
