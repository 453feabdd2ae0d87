import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { cautionsFor } from '../../analysis/findings/cautions.js';
import { resolvedKinds, SERVICE_EVENT_KINDS } from '../../analysis/findings/service-events.js';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { createFleetBoardRepository } from '../../db/fleet-board-repository.js';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { KIND_LABELS } from '../../report/finding-labels.js';
import { vehicleCharts } from '../../report/vehicle-charts.js';
import { PeakChart, WarmupChart } from '../../report/weekly-report-schema.js';
import { checkWithoutCaution, vehiclePriority } from '../../report/work-list.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { requireVehicle } from '../vehicle-access.js';

/** A vehicle at a glance for the planner: priority, checks, cautions and the two charts of the weekly report. */
const vehicleSummaryRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const vehicles = createVehiclesRepository(db);
  const findings = createFindingsRepository(db);
  const board = createFleetBoardRepository(db);

  app.get(
    '/v1/vehicles/:vehicleId/summary',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles'],
        summary:
          "A vehicle's priority, checks and cautions, and the weekly report's two charts as of its latest analysed reading",
        description:
          'warmup: the latest cold starts against the band (10th–90th percentile) of its healthy cold starts before the onset; ' +
          'peaks: daily peak coolant and maximum ambient with the trend and the boiling point at cap pressure. ' +
          'Checks come from the unresolved findings (without the safety caution, which is in cautions with the others the checks call for). ' +
          'Temperatures (band, curves, peaks, trend, boiling point) in `unit`.',
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({ unit: UnitParam }),
        response: {
          200: Type.Object({
            vehicleId: Type.String(),
            unit: UnitField,
            analysedUpTo: Type.Union([Type.String({ format: 'date-time' }), Type.Null()]),
            priority: Type.Union(
              [Type.String({ description: 'book now, book this week or at next service' }), Type.Null()],
              { description: 'null: no unresolved finding' },
            ),
            unresolved: Type.Integer(),
            checks: Type.Array(Type.String()),
            cautions: Type.Array(Type.String()),
            warmup: WarmupChart,
            peaks: PeakChart,
            kindLabels: Type.Record(Type.String(), Type.String(), {
              description: "finding kinds in a planner's words",
            }),
            serviceEventKinds: Type.Array(
              Type.Object({
                kind: Type.String(),
                resolves: Type.Array(Type.String({ description: 'finding kinds the event resolves' })),
              }),
            ),
          }),
          ...errorResponses(401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const vehicle = await requireVehicle(vehicles, principalOf(request), request.params.vehicleId);
      const unresolved = await findings.unresolvedOfVehicle(vehicle.vehicleId);
      const analysedMs = await board.analysedUpTo(vehicle.vehicleId);
      const charts = await vehicleCharts(
        db,
        vehicle,
        unresolved.map((f) => ({ kind: f.kind, firstSeenMs: Date.parse(f.firstSeen), metrics: f.metrics })),
        analysedMs ?? Date.now(),
      );
      return inUnit(reply, request.query.unit, {
        vehicleId: vehicle.vehicleId,
        unit: request.query.unit,
        analysedUpTo: analysedMs === null ? null : new Date(analysedMs).toISOString(),
        priority: unresolved.length > 0 ? vehiclePriority(unresolved) : null,
        unresolved: unresolved.length,
        checks: [...new Set(unresolved.map((f) => checkWithoutCaution(f.recommendedCheck)))],
        cautions: cautionsFor(unresolved.map((f) => f.kind)),
        ...charts,
        kindLabels: { ...KIND_LABELS },
        serviceEventKinds: SERVICE_EVENT_KINDS.map((kind) => ({ kind, resolves: [...resolvedKinds(kind)] })),
      });
    },
  );
};

export default vehicleSummaryRoutes;
