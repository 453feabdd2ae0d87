import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createFleetsRepository } from '../../db/fleets-repository.js';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { BadRequestError, ForbiddenError, NotFoundError } from '../errors.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { Vehicle, VehicleProfilePatchBody } from '../schemas/vehicle.js';
import { requireVehicle } from '../vehicle-access.js';
import { toProfilePatch } from '../vehicle-profile-input.js';

/** Vehicle profiles: the cooling-system facts the analysis needs (thermostat, cap, glycol). */
const vehiclesRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const vehicles = createVehiclesRepository(app.database.db);
  const fleets = createFleetsRepository(app.database.db);

  app.put(
    '/v1/vehicles/:vehicleId',
    {
      onRequest: app.requireScope('ingest'),
      schema: {
        tags: ['vehicles'],
        summary: 'Create or update a vehicle profile',
        description: 'Fields left out keep their value (or the default for a new vehicle). Admin keys name the fleet of a new vehicle with `?fleet=`.',
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({ fleet: Type.Optional(Type.String({ description: 'admin keys only: fleet of a new vehicle' })) }),
        body: VehicleProfilePatchBody,
        response: { 200: Vehicle, 201: Vehicle, ...errorResponses(400, 401, 403, 404) },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const { vehicleId } = request.params;
      if (principal.fleetId === null && !request.query.fleet) {
        // An admin key edits any vehicle; a new one needs its fleet named.
        const vehicle = await vehicles.update(vehicleId, toProfilePatch(request.body));
        if (!vehicle) throw new BadRequestError('an admin key must name the fleet of a new vehicle: ?fleet=<fleetId>');
        return reply.status(200).send(vehicle);
      }
      let fleetId: string;
      if (principal.fleetId !== null) {
        if (request.query.fleet && request.query.fleet !== principal.fleetId) throw new ForbiddenError('this API key belongs to another fleet');
        fleetId = principal.fleetId;
      } else {
        fleetId = request.query.fleet!;
        if (!(await fleets.exists(fleetId))) throw new NotFoundError(`unknown fleet '${fleetId}'`);
      }
      const result = await vehicles.upsert(vehicleId, { fleetId, onlyIfFleet: principal.fleetId }, toProfilePatch(request.body));
      if ('ownedByOtherFleet' in result) throw new ForbiddenError('this API key belongs to another fleet');
      const { vehicle, created } = result;
      return reply.status(created ? 201 : 200).send(vehicle);
    },
  );

  app.get(
    '/v1/vehicles',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles'],
        summary: "List the fleet's vehicles",
        security: SECURITY,
        querystring: Type.Object({
          limit: Type.Integer({ minimum: 1, maximum: 1000, default: 100 }),
          after: Type.Optional(Type.String({ description: 'vehicle id to continue after (from nextAfter)' })),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: restrict to one fleet' })),
        }),
        response: { 200: Type.Object({ vehicles: Type.Array(Vehicle), nextAfter: Type.Union([Type.String(), Type.Null()]) }), ...errorResponses(400, 401, 403) },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      if (request.query.fleet) assertFleetAccess(principal, request.query.fleet);
      const fleetId = principal.fleetId ?? request.query.fleet ?? null;
      const { limit, after } = request.query;
      // One more than the page tells whether another page follows, so the last page says null.
      const list = await vehicles.list({ fleetId, limit: limit + 1, ...(after ? { after } : {}) });
      const page = list.slice(0, limit);
      return { vehicles: page, nextAfter: list.length > limit ? page[page.length - 1]!.vehicleId : null };
    },
  );

  app.get(
    '/v1/vehicles/:vehicleId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['vehicles'],
        summary: "A vehicle's profile",
        security: SECURITY,
        params: VehicleIdParams,
        response: { 200: Vehicle, ...errorResponses(401, 403, 404) },
      },
    },
    async (request) => requireVehicle(vehicles, principalOf(request), request.params.vehicleId),
  );
};

export default vehiclesRoutes;
