import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createFleetsRepository } from '../../db/fleets-repository.js';
import { checkedKey } from '../../db/keyset.js';
import { createVehiclesRepository, VEHICLE_ORDER } from '../../db/vehicles-repository.js';
import { BadRequestError, ForbiddenError, NotFoundError } from '../errors.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY, VehicleIdParams } from '../schemas/common.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { inUnit, UnitField, UnitParam } from '../schemas/temperature-unit.js';
import { Vehicle, VehicleProfilePatchBody } from '../schemas/vehicle.js';
import { requireVehicle } from '../vehicle-access.js';
import { toProfilePatch } from '../vehicle-profile-input.js';
import { fleetScopeOf } from '../request-fleet.js';

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
        description:
          'Fields left out keep their value (or the default for a new vehicle). Admin keys name the fleet of a new vehicle with `?fleet=`.',
        security: SECURITY,
        params: VehicleIdParams,
        querystring: Type.Object({
          fleet: Type.Optional(Type.String({ description: 'admin keys only: fleet of a new vehicle' })),
        }),
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
        if (request.query.fleet && request.query.fleet !== principal.fleetId)
          throw new ForbiddenError('this API key belongs to another fleet');
        fleetId = principal.fleetId;
      } else {
        fleetId = request.query.fleet!;
        if (!(await fleets.exists(fleetId))) throw new NotFoundError(`unknown fleet '${fleetId}'`);
      }
      const result = await vehicles.upsert(
        vehicleId,
        { fleetId, onlyIfFleet: principal.fleetId },
        toProfilePatch(request.body),
      );
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
        description:
          'By vehicle id, a page at a time: pass `nextCursor` as `?cursor=` (the older `after`/`nextAfter` still work).',
        querystring: Type.Object({
          ...pageQuery(100, 1000),
          after: Type.Optional(
            Type.String({ description: 'vehicle id to continue after (from nextAfter; superseded by cursor)' }),
          ),
          depot: Type.Optional(
            Type.String({ minLength: 1, maxLength: 64, description: 'only the vehicles of this depot' }),
          ),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: restrict to one fleet' })),
          unit: UnitParam,
        }),
        response: {
          200: Type.Object({
            unit: UnitField,
            vehicles: Type.Array(Vehicle),
            nextCursor: NextCursor,
            nextAfter: Type.Union([Type.String(), Type.Null()], {
              description: 'the last vehicle id of the page when another follows (older style)',
            }),
          }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const fleetId = fleetScopeOf(principal, request.query.fleet);
      const { limit, after, cursor, depot } = request.query;
      if (after !== undefined && cursor !== undefined)
        throw new BadRequestError('give cursor or after, not both', 'validation_failed');
      const older = after === undefined ? undefined : checkedKey(VEHICLE_ORDER, [after]);
      if (older === null) throw new BadRequestError('after is not a vehicle id', 'validation_failed');
      const key = decodeCursor(cursor, VEHICLE_ORDER) ?? older;
      const page = await vehicles.list({ fleetId, limit, after: key, ...(depot !== undefined ? { depot } : {}) });
      const unit = request.query.unit;
      return inUnit(reply, unit, {
        unit,
        vehicles: page.items,
        nextCursor: nextCursorOf(page),
        nextAfter: page.nextKey === null ? null : String(page.nextKey[0]),
      });
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
        querystring: Type.Object({ unit: UnitParam }),
        response: {
          200: Type.Intersect([Vehicle, Type.Object({ unit: UnitField })]),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const vehicle = await requireVehicle(vehicles, principalOf(request), request.params.vehicleId);
      return inUnit(reply, request.query.unit, { ...vehicle, unit: request.query.unit });
    },
  );
};

export default vehiclesRoutes;
