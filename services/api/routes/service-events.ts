import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { randomUUID } from 'node:crypto';
import { Type } from 'typebox';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { refreshVehicleRisk } from '../../db/vehicle-risk.js';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { createQueueRepository } from '../../worker/queue-repository.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { parseTimeParam } from '../schemas/time-range.js';
import { requireVehicle } from '../vehicle-access.js';

const ServiceEventKindSchema = Type.Union(
  ['thermostat-replaced', 'radiator-cleaned', 'fan-repaired', 'coolant-refilled', 'sensor-replaced'].map((k) => Type.Literal(k)),
);

const ServiceEventSchema = Type.Object({
  id: Type.String(),
  vehicleId: Type.String(),
  kind: Type.String(),
  at: Type.String({ format: 'date-time' }),
  notes: Type.Union([Type.String(), Type.Null()]),
  recordedBy: Type.Union([Type.String(), Type.Null()]),
  createdAt: Type.String({ format: 'date-time' }),
});

type ServiceEventKind = 'thermostat-replaced' | 'radiator-cleaned' | 'fan-repaired' | 'coolant-refilled' | 'sensor-replaced';

/**
 * Repairs recorded by planners. A repair resolves the vehicle's findings of the kinds it addresses
 * (thermostat → warm-up, overshoot, overheating; radiator, fan → overheating, boil margin;
 * coolant → overheating, boil margin, freeze risk; sensor → all sensor and engine findings) and
 * starts their baselines again from its date: the vehicle is queued for re-analysis. Recording a
 * repair is a planner action and needs only the `read` scope.
 */
const serviceEventsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const vehicles = createVehiclesRepository(db);
  const findings = createFindingsRepository(db);
  const queue = createQueueRepository(db);

  app.post(
    '/v1/vehicles/:vehicleId/service-events',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles', 'findings'],
        summary: 'Record a repair: resolves the related findings and starts a new baseline',
        security: SECURITY,
        params: VehicleIdParams,
        body: Type.Object({
          kind: ServiceEventKindSchema,
          at: Type.Optional(Type.String({ minLength: 1, maxLength: 40, description: 'when the work was done: RFC 3339 or epoch ms (default now)' })),
          notes: Type.Optional(Type.String({ maxLength: 2000 })),
        }, { additionalProperties: false }),
        response: {
          201: Type.Object({ event: ServiceEventSchema, resolvedFindings: Type.Array(Type.String({ description: 'ids of the findings resolved' })) }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const { vehicleId } = request.params;
      const vehicle = await requireVehicle(vehicles, principal, vehicleId);
      const atMs = parseTimeParam('at', request.body.at) ?? Date.now();
      const kind = request.body.kind as ServiceEventKind;
      const result = await db.transaction().execute(async (trx) => {
        const row = await trx.insertInto('service_events').values({
          vehicle_id: vehicleId, event_id: randomUUID(), fleet_id: vehicle.fleetId, kind, at: new Date(atMs),
          notes: request.body.notes ?? null, recorded_by: principal.keyId,
        }).returningAll().executeTakeFirstOrThrow();
        const resolved = await findings.resolveByRepair(trx, vehicleId, kind, atMs);
        await refreshVehicleRisk(trx, vehicleId);
        // Re-derive from the stored history with the new baseline start (no readings need re-reading).
        const state = await trx.selectFrom('vehicle_analysis').select('last_reading_at').where('vehicle_id', '=', vehicleId).executeTakeFirst();
        if (state?.last_reading_at) await queue.enqueue(vehicleId, vehicle.fleetId, state.last_reading_at.getTime(), trx);
        return { row, resolved };
      });
      app.ingestNotifier.emit('analysis-needed', vehicle.fleetId);
      const e = result.row;
      return reply.status(201).send({
        event: { id: e.event_id, vehicleId, kind: e.kind, at: e.at.toISOString(), notes: e.notes, recordedBy: e.recorded_by, createdAt: e.created_at.toISOString() },
        resolvedFindings: result.resolved,
      });
    },
  );
};

export default serviceEventsRoutes;
