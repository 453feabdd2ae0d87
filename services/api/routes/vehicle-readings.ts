import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { sql } from 'kysely';
import { Type } from 'typebox';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { BadRequestError } from '../errors.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { parseTimeParam, TimeParam } from '../schemas/time-range.js';
import { requireVehicle } from '../vehicle-access.js';
import { DAY_MS } from '../../time/durations.js';

/** Default chart window before the vehicle's latest reading. */
const DEFAULT_RANGE_MS = 7 * DAY_MS;
/** Longest window one request may span. */
const MAX_RANGE_MS = 400 * DAY_MS;

const Nullable = Type.Union([Type.Number(), Type.Null()]);

/** Readings for charts, downsampled in SQL. */
const vehicleReadingsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const vehicles = createVehiclesRepository(db);

  app.get(
    '/v1/vehicles/:vehicleId/readings',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles'],
        summary: "A vehicle's readings for a chart, downsampled to at most maxPoints time buckets",
        description:
          "The window [from, to) is cut into equal buckets; each point gives the bucket's reading count, coolant minimum, maximum and mean " +
          '(so a short overheating peak survives downsampling) and the mean ambient, speed and engine speed. Empty buckets are left out. ' +
          'Defaults: to = just after the latest reading, from = 7 days earlier.',
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({
          from: TimeParam('window start (inclusive)'),
          to: TimeParam('window end (exclusive)'),
          maxPoints: Type.Integer({ minimum: 2, maximum: 10_000, default: 1000 }),
          unit: UnitParam,
        }),
        response: {
          200: Type.Object({
            vehicleId: Type.String(),
            unit: UnitField,
            from: Type.String({ format: 'date-time' }),
            to: Type.String({ format: 'date-time' }),
            bucketMs: Type.Integer({ description: 'bucket width, ms' }),
            points: Type.Array(
              Type.Object({
                t: Type.String({ format: 'date-time', description: 'bucket start' }),
                n: Type.Integer({ description: 'readings in the bucket' }),
                coolantMinC: Type.Number(),
                coolantMaxC: Type.Number(),
                coolantMeanC: Type.Number(),
                ambientC: Nullable,
                speedKph: Nullable,
                rpm: Nullable,
              }),
            ),
          }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const { vehicleId } = request.params;
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      let to = parseTimeParam('to', request.query.to);
      let from = parseTimeParam('from', request.query.from);
      if (to === undefined) {
        const last = await sql<{
          ts: Date;
        }>`select ts from readings where vehicle_id = ${vehicleId} order by ts desc limit 1`.execute(db);
        to = (last.rows[0]?.ts.getTime() ?? Date.now()) + 1;
      }
      from ??= to - DEFAULT_RANGE_MS;
      if (!(from < to)) throw new BadRequestError('from must be before to', 'validation_failed');
      if (to - from > MAX_RANGE_MS)
        throw new BadRequestError(`the window may span at most ${MAX_RANGE_MS / DAY_MS} days`, 'validation_failed');
      const bucketMs = Math.max(1, Math.ceil((to - from) / request.query.maxPoints));
      // One pass over the window's index range; grouping by bucket number keeps min and max.
      const rows = await sql<{
        b: number;
        n: number;
        cmin: number;
        cmax: number;
        cmean: number;
        amb: number | null;
        spd: number | null;
        rpm: number | null;
      }>`
        select floor((date_part('epoch', ts) * 1000 - ${from}::float8) / ${bucketMs}::float8)::int as b, count(*)::int as n,
               min(coolant_c)::float8 as cmin, max(coolant_c)::float8 as cmax, avg(coolant_c)::float8 as cmean,
               avg(ambient_c)::float8 as amb, avg(speed_kph)::float8 as spd, avg(rpm)::float8 as rpm
        from readings
        where vehicle_id = ${vehicleId} and ts >= to_timestamp(${from}::float8 / 1000) and ts < to_timestamp(${to}::float8 / 1000)
        group by 1 order by 1`.execute(db);
      const round = (v: number | null, digits: number) =>
        v === null ? null : Math.round(v * 10 ** digits) / 10 ** digits;
      return inUnit(reply, request.query.unit, {
        vehicleId,
        unit: request.query.unit,
        from: new Date(from).toISOString(),
        to: new Date(to).toISOString(),
        bucketMs,
        points: rows.rows.map((r) => ({
          t: new Date(from + r.b * bucketMs).toISOString(),
          n: r.n,
          coolantMinC: r.cmin,
          coolantMaxC: r.cmax,
          coolantMeanC: round(r.cmean, 2)!,
          ambientC: round(r.amb, 2),
          speedKph: round(r.spd, 1),
          rpm: round(r.rpm, 0),
        })),
      });
    },
  );
};

export default vehicleReadingsRoutes;
