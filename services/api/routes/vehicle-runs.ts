import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { sql } from 'kysely';
import { Type } from 'typebox';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { FindingSchema } from '../schemas/finding.js';
import { parseTimeParam, TimeParam } from '../schemas/time-range.js';
import { requireVehicle } from '../vehicle-access.js';

const RunSchema = Type.Object({
  startTs: Type.String({ format: 'date-time' }),
  endTs: Type.String({ format: 'date-time' }),
  startKind: Type.String({ description: "'cold' or 'warm'" }),
  open: Type.Boolean({ description: 'the run may still continue (no gap seen after it yet)' }),
  metrics: Type.Record(Type.String(), Type.Union([Type.Number(), Type.Boolean(), Type.String(), Type.Null()]), {
    description: 'warm-up and operating metrics of the run (°C, s, km/h), as computed by the analysis',
  }),
});

/** Per-vehicle analysis results: engine runs and findings. */
const vehicleRunsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const vehicles = createVehiclesRepository(db);
  const findings = createFindingsRepository(db);

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
          limit: Type.Integer({ minimum: 1, maximum: 1000, default: 100 }),
        }),
        response: { 200: Type.Object({ vehicleId: Type.String(), runs: Type.Array(RunSchema) }), ...errorResponses(400, 401, 403, 404) },
      },
    },
    async (request) => {
      const { vehicleId } = request.params;
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      const from = parseTimeParam('from', request.query.from) ?? null;
      const to = parseTimeParam('to', request.query.to) ?? null;
      const rows = await sql<{ start_ts: Date; end_ts: Date; start_kind: string; open: boolean; metrics: Record<string, number | boolean | string | null> }>`
        select start_ts, end_ts, start_kind, open, metrics from engine_runs
        where vehicle_id = ${vehicleId}
          and (${from}::float8 is null or start_ts >= to_timestamp(${from}::float8 / 1000))
          and (${to}::float8 is null or start_ts < to_timestamp(${to}::float8 / 1000))
        order by start_ts desc limit ${request.query.limit}`.execute(db);
      return {
        vehicleId,
        runs: rows.rows.map((r) => ({ startTs: r.start_ts.toISOString(), endTs: r.end_ts.toISOString(), startKind: r.start_kind, open: r.open, metrics: r.metrics })),
      };
    },
  );

  app.get(
    '/v1/vehicles/:vehicleId/findings',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles', 'findings'],
        summary: "A vehicle's findings in every status, with evidence, recommended check and trouble code",
        security: SECURITY,
        params: VehicleIdParams,
        response: { 200: Type.Object({ vehicleId: Type.String(), findings: Type.Array(FindingSchema) }), ...errorResponses(401, 403, 404) },
      },
    },
    async (request) => {
      const { vehicleId } = request.params;
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      return { vehicleId, findings: await findings.ofVehicle(vehicleId) };
    },
  );
};

export default vehicleRunsRoutes;
