import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import type { Principal } from '../../db/api-keys-repository.js';
import { createDepotsRepository, DEPOT_ORDER } from '../../db/depots-repository.js';
import { createFleetsRepository } from '../../db/fleets-repository.js';
import { ConflictError, NotFoundError } from '../errors.js';
import { createDepotActions } from '../planner/depot-actions.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { toSitePatch } from '../vehicle-profile-input.js';
import { fleetScopeOf, oneFleetOf } from '../request-fleet.js';

const DepotParams = Type.Object({
  depotId: Type.String({
    pattern: '^[^/]{1,64}$',
    description: 'the depot id, unique in the fleet (what vehicles name as their depot)',
  }),
});
const FleetQuery = Type.Object({
  fleet: Type.Optional(
    Type.String({ description: 'admin keys: the fleet (required); other keys: their own fleet only' }),
  ),
});

const Depot = Type.Object({
  depotId: Type.String(),
  fleetId: Type.String(),
  name: Type.Union([Type.String(), Type.Null()]),
  siteAltitudeM: Type.Union([Type.Number(), Type.Null()]),
  atmosphericPressureKpa: Type.Number({
    description: "the depot's atmospheric pressure, kPa (101.325, sea level, when no site is given)",
  }),
  siteGiven: Type.Boolean({ description: 'the depot has an altitude or pressure of its own' }),
  vehicles: Type.Integer({ description: 'vehicles that name this depot' }),
  createdAt: Type.String({ format: 'date-time' }),
  updatedAt: Type.String({ format: 'date-time' }),
});

const DepotBody = Type.Object(
  {
    name: Type.Optional(
      Type.Union([Type.String({ minLength: 1, maxLength: 200 }), Type.Null()], { description: 'name in words' }),
    ),
    siteAltitudeM: Type.Optional(
      Type.Union([Type.Number({ minimum: -500, maximum: 5000 }), Type.Null()], {
        description:
          'altitude of the depot, m: sets the atmospheric pressure (ISO 2533 standard atmosphere) unless atmosphericPressureKpa is given',
      }),
    ),
    atmosphericPressureKpa: Type.Optional(
      Type.Union([Type.Number({ minimum: 50, maximum: 110 }), Type.Null()], {
        description:
          "the depot's usual atmospheric pressure, kPa: lowers the boiling point of its vehicles at altitude",
      }),
    ),
  },
  { additionalProperties: false },
);

/**
 * A fleet's depots: the sites its vehicles work from. A vehicle without a site of its own takes
 * its depot's atmospheric pressure for the boiling point. Written with the ingest scope, as
 * vehicle profiles are; read with the read scope.
 */
const depotsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const db = app.database.db;
  const depots = createDepotsRepository(db);
  const fleets = createFleetsRepository(db);
  const actions = createDepotActions(db);
  const fleetOf = (principal: Principal, fleet: string | undefined) => oneFleetOf(principal, fleet, fleets);

  app.put(
    '/v1/depots/:depotId',
    {
      onRequest: app.requireScope('ingest'),
      schema: {
        tags: ['depots'],
        summary: 'Register a depot or change its name or site',
        description:
          'Fields left out keep their value. Vehicles name their depot with `depot` in PUT /v1/vehicles/{vehicleId}. When the site changes, ' +
          'the vehicles taking their site from the depot are re-analysed with the new boiling point.',
        security: SECURITY,
        params: DepotParams,
        querystring: FleetQuery,
        body: DepotBody,
        response: { 200: Depot, 201: Depot, ...errorResponses(400, 401, 403, 404) },
      },
    },
    async (request, reply) => {
      const fleetId = await fleetOf(principalOf(request), request.query.fleet);
      const { name, siteAltitudeM, atmosphericPressureKpa } = request.body;
      const { depot, created } = await actions.put(fleetId, request.params.depotId, {
        ...(name !== undefined ? { name } : {}),
        ...toSitePatch({ siteAltitudeM, atmosphericPressureKpa }),
      });
      if (created || request.body.siteAltitudeM !== undefined || request.body.atmosphericPressureKpa !== undefined)
        app.ingestNotifier.emit('analysis-needed', fleetId);
      return reply.status(created ? 201 : 200).send(depot);
    },
  );

  app.get(
    '/v1/depots',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['depots'],
        summary: "The fleet's depots, by id, a page at a time",
        security: SECURITY,
        querystring: Type.Object({
          ...pageQuery(100, 1000),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
        }),
        response: {
          200: Type.Object({ depots: Type.Array(Depot), nextCursor: NextCursor }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      const page = await depots.list(fleetScopeOf(principal, request.query.fleet), {
        limit: request.query.limit,
        after: decodeCursor(request.query.cursor, DEPOT_ORDER),
      });
      return { depots: page.items, nextCursor: nextCursorOf(page) };
    },
  );

  app.get(
    '/v1/depots/:depotId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['depots'],
        summary: 'One depot with its site',
        security: SECURITY,
        params: DepotParams,
        querystring: FleetQuery,
        response: { 200: Depot, ...errorResponses(400, 401, 403, 404) },
      },
    },
    async (request) => {
      const fleetId = await fleetOf(principalOf(request), request.query.fleet);
      const depot = await depots.get(fleetId, request.params.depotId);
      if (!depot) throw new NotFoundError(`no depot '${request.params.depotId}' in fleet '${fleetId}'`);
      return depot;
    },
  );

  app.delete(
    '/v1/depots/:depotId',
    {
      onRequest: app.requireScope('ingest'),
      schema: {
        tags: ['depots'],
        summary: 'Remove a depot no vehicle names any more',
        description:
          'Answers 409 while vehicles still name it: move them first (PUT /v1/vehicles/{vehicleId} with another `depot`, or null).',
        security: SECURITY,
        params: DepotParams,
        querystring: FleetQuery,
        response: { 200: Type.Object({ deleted: Type.String() }), ...errorResponses(400, 401, 403, 404, 409) },
      },
    },
    async (request) => {
      const fleetId = await fleetOf(principalOf(request), request.query.fleet);
      const removed = await depots.remove(fleetId, request.params.depotId);
      if (removed === undefined) throw new NotFoundError(`no depot '${request.params.depotId}' in fleet '${fleetId}'`);
      if (!removed) throw new ConflictError(`vehicles still name depot '${request.params.depotId}'`);
      return { deleted: request.params.depotId };
    },
  );
};

export default depotsRoutes;
