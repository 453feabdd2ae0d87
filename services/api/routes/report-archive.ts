import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createReportArchiveRepository } from '../../db/report-archive-repository.js';
import { BadRequestError } from '../errors.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';

/** Which weekly reports are archived (the web view's reports page links each as HTML, CSV and JSON). */
const reportArchiveRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const archive = createReportArchiveRepository(app.database.db);

  app.get(
    '/v1/reports/weekly/archive',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['reports'],
        summary: "The fleet's archived weekly reports, newest week first",
        description:
          'Each is served by GET /v1/reports/weekly?week=<isoWeek>&format=html|csv|json (rebuilt there when its data changed since).',
        security: SECURITY,
        querystring: Type.Object({
          limit: Type.Integer({ minimum: 1, maximum: 520, default: 104 }),
          fleet: Type.Optional(
            Type.String({ description: 'admin keys: the fleet (required); other keys: their own fleet only' }),
          ),
        }),
        response: {
          200: Type.Object({
            fleetId: Type.String(),
            reports: Type.Array(
              Type.Object({ isoWeek: Type.String(), generatedAt: Type.String({ format: 'date-time' }) }),
            ),
          }),
          ...errorResponses(400, 401, 403),
        },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      if (request.query.fleet) assertFleetAccess(principal, request.query.fleet);
      const fleetId = principal.fleetId ?? request.query.fleet;
      if (!fleetId) throw new BadRequestError('an admin key must name the fleet: ?fleet=<fleetId>');
      const reports = await archive.list(fleetId, request.query.limit);
      return {
        fleetId,
        reports: reports.map((r) => ({ isoWeek: r.isoWeek, generatedAt: r.generatedAt.toISOString() })),
      };
    },
  );
};

export default reportArchiveRoutes;
