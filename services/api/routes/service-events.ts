import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { SERVICE_EVENT_KINDS } from '../../analysis/findings/service-events.js';
import { createPlannerActionsRepository } from '../../db/planner-actions-repository.js';
import {
  createServiceEventsRepository,
  SERVICE_EVENT_ORDER,
  toServiceEventView,
} from '../../db/service-events-repository.js';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { NotFoundError } from '../errors.js';
import { createServiceEventActions } from '../planner/service-event-actions.js';
import { principalOf } from '../plugins/auth.js';
import { AuditEntry } from '../schemas/audit.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { parseTimeParam } from '../schemas/time-range.js';
import { requireVehicle } from '../vehicle-access.js';

const ServiceEventKindSchema = Type.Union(
  SERVICE_EVENT_KINDS.map((k) => Type.Literal(k)),
  {
    description:
      'the work done. inspected-no-fault-found resolves nothing and restarts no baseline: a fault the inspection missed keeps showing',
  },
);

const ServiceEventSchema = Type.Object({
  id: Type.String(),
  vehicleId: Type.String(),
  kind: Type.String(),
  at: Type.String({ format: 'date-time', description: 'when the work was done' }),
  notes: Type.Union([Type.String(), Type.Null()]),
  recordedBy: Type.Union([Type.String({ description: 'id of the API key that recorded it' }), Type.Null()]),
  createdAt: Type.String({ format: 'date-time' }),
  updatedAt: Type.Union([Type.String({ format: 'date-time', description: 'last correction' }), Type.Null()]),
  resolvedFindings: Type.Array(Type.String(), { description: 'ids of the findings this event resolved' }),
  inspectedFindings: Type.Array(Type.String(), {
    description: 'ids of the findings an inspection looked at (not resolved by it)',
  }),
});

const EventParams = Type.Intersect([
  VehicleIdParams,
  Type.Object({ eventId: Type.String({ minLength: 1, maxLength: 64 }) }),
]);
const AT_DESCRIPTION = 'when the work was done: RFC 3339 or epoch ms';
const AtField = Type.String({ minLength: 1, maxLength: 40, description: AT_DESCRIPTION });
const NotesField = Type.String({ maxLength: 2000 });

/**
 * A vehicle's repair history: record, list, correct and delete service events. Recording a repair
 * resolves the related findings and starts their baselines again (rules in
 * planner/service-event-actions.ts). These are planner actions and need only the `read` scope.
 */
const serviceEventsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const vehicles = createVehiclesRepository(db);
  const events = createServiceEventsRepository(db);
  const audit = createPlannerActionsRepository(db);
  const actions = createServiceEventActions(db);

  app.post(
    '/v1/vehicles/:vehicleId/service-events',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['service events'],
        summary: 'Record a repair or an inspection: resolves the related findings and starts a new baseline',
        security: SECURITY,
        params: VehicleIdParams,
        body: Type.Object(
          {
            kind: ServiceEventKindSchema,
            at: Type.Optional(
              Type.String({ minLength: 1, maxLength: 40, description: `${AT_DESCRIPTION} (default now)` }),
            ),
            notes: Type.Optional(NotesField),
            findingIds: Type.Optional(
              Type.Array(Type.String({ minLength: 1, maxLength: 64 }), {
                maxItems: 50,
                description: 'findings an inspection looked at',
              }),
            ),
          },
          { additionalProperties: false },
        ),
        response: {
          201: Type.Object({
            event: ServiceEventSchema,
            resolvedFindings: Type.Array(Type.String({ description: 'ids of the findings resolved' })),
          }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const vehicle = await requireVehicle(vehicles, principal, request.params.vehicleId);
      const event = await actions.record(principal, vehicle, {
        kind: request.body.kind,
        atMs: parseTimeParam('at', request.body.at) ?? Date.now(),
        notes: request.body.notes ?? null,
        findingIds: request.body.findingIds ?? [],
      });
      app.ingestNotifier.emit('analysis-needed', vehicle.fleetId);
      return reply.status(201).send({ event, resolvedFindings: event.resolvedFindings });
    },
  );

  app.get(
    '/v1/vehicles/:vehicleId/service-events',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['service events'],
        summary: "The vehicle's repair history, newest first, each event with the findings it resolved",
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object(pageQuery(50, 500)),
        response: {
          200: Type.Object({ events: Type.Array(ServiceEventSchema), nextCursor: NextCursor }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request) => {
      await requireVehicle(vehicles, principalOf(request), request.params.vehicleId);
      const page = await events.list(request.params.vehicleId, {
        limit: request.query.limit,
        after: decodeCursor(request.query.cursor, SERVICE_EVENT_ORDER),
      });
      return { events: page.items, nextCursor: nextCursorOf(page) };
    },
  );

  app.get(
    '/v1/vehicles/:vehicleId/service-events/:eventId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['service events'],
        summary: 'One service event with its audit trail of corrections',
        security: SECURITY,
        params: EventParams,
        response: {
          200: Type.Intersect([ServiceEventSchema, Type.Object({ history: Type.Array(AuditEntry) })]),
          ...errorResponses(401, 403, 404),
        },
      },
    },
    async (request) => {
      const { vehicleId, eventId } = request.params;
      await requireVehicle(vehicles, principalOf(request), vehicleId);
      const row = await events.get(vehicleId, eventId);
      if (!row) throw new NotFoundError(`no service event '${eventId}' on vehicle '${vehicleId}'`);
      return { ...toServiceEventView(row), history: await audit.ofSubject(vehicleId, eventId) };
    },
  );

  app.patch(
    '/v1/vehicles/:vehicleId/service-events/:eventId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['service events'],
        summary:
          'Correct a service event (kind, time, notes): the findings it resolved are reopened and the corrected event applied',
        description:
          "Audited: the event's history keeps the entry before and after. The vehicle is re-analysed with the corrected baseline start.",
        security: SECURITY,
        params: EventParams,
        body: Type.Object(
          {
            kind: Type.Optional(ServiceEventKindSchema),
            at: Type.Optional(AtField),
            notes: Type.Optional(Type.Union([NotesField, Type.Null()])),
          },
          { additionalProperties: false, minProperties: 1 },
        ),
        response: { 200: ServiceEventSchema, ...errorResponses(400, 401, 403, 404) },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      const vehicle = await requireVehicle(vehicles, principal, request.params.vehicleId);
      const atMs = parseTimeParam('at', request.body.at);
      const event = await actions.correct(principal, vehicle, request.params.eventId, {
        ...(request.body.kind ? { kind: request.body.kind } : {}),
        ...(atMs !== undefined ? { atMs } : {}),
        ...(request.body.notes !== undefined ? { notes: request.body.notes } : {}),
      });
      app.ingestNotifier.emit('analysis-needed', vehicle.fleetId);
      return event;
    },
  );

  app.delete(
    '/v1/vehicles/:vehicleId/service-events/:eventId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['service events'],
        summary:
          'Delete a wrong service event: the findings it resolved are reopened where their evidence is still there',
        description:
          'Audited, on the event and on every finding it touches (action service-event-delete); the entry is kept out of every list and out of the analysis, ' +
          'and the vehicle is re-analysed. Findings derived under the baseline the event started are superseded by the reopened ones.',
        security: SECURITY,
        params: EventParams,
        response: {
          200: Type.Object({
            deleted: Type.String(),
            reopenedFindings: Type.Array(Type.String(), {
              description: 'resolved by the event, evidence still there: unresolved again',
            }),
            evidenceStoppedFindings: Type.Array(Type.String(), {
              description:
                'resolved by the event, but their evidence had stopped for the quiet period: stay resolved, as evidence-stopped',
            }),
            supersededFindings: Type.Array(Type.String(), {
              description:
                'derived under the baseline the event started: the reopened findings carry their evidence now',
            }),
          }),
          ...errorResponses(401, 403, 404),
        },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      const vehicle = await requireVehicle(vehicles, principal, request.params.vehicleId);
      const undone = await actions.remove(principal, vehicle, request.params.eventId);
      app.ingestNotifier.emit('analysis-needed', vehicle.fleetId);
      return {
        deleted: request.params.eventId,
        reopenedFindings: undone.reopened,
        evidenceStoppedFindings: undone.evidenceStopped,
        supersededFindings: undone.superseded,
      };
    },
  );
};

export default serviceEventsRoutes;
