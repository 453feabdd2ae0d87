import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { UnknownFleetError } from '../../report/build-weekly-report.js';
import { formatIsoWeek, lastCompleteIsoWeek, parseIsoWeek, weekWindow } from '../../time/iso-week.js';
import { ARCHIVE_ORDER, createReportRepository } from '../../db/weekly-report-repository.js';
import { reportBaseName, reportInUnit } from '../../report/weekly-report-files.js';
import { WeeklyReportSchema } from '../../report/weekly-report-schema.js';
import { currentWeeklyReport } from '../../report/weekly-report-service.js';
import { BadRequestError, NotFoundError } from '../errors.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { decodeCursor, NextCursor, nextCursorOf, pageQuery } from '../schemas/paging.js';
import { UNIT_HEADER, UnitParam } from '../schemas/temperature-unit.js';
import { oneFleetOf } from '../request-fleet.js';

const FORMATS = {
  json: 'application/json; charset=utf-8',
  html: 'text/html; charset=utf-8',
  csv: 'text/csv; charset=utf-8',
} as const;

/** The weekly maintenance report of the caller's fleet, built on demand and archived. */
const reportsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  const reports = createReportRepository(app.database.db);

  app.get(
    '/v1/reports/weekly',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['reports'],
        summary: 'The weekly maintenance report (JSON, HTML or the CSV work list)',
        description:
          'A week that has ended is served from the archive while the archive is fresh: built after the week ended, from the data ' +
          'the analysis tables still hold (`coverage.stamp`). The current week, a week archived before it ended, a week whose readings ' +
          'arrived or were re-analysed after it was archived (a back-fill), or `refresh=true` rebuild it and replace the archived copy. ' +
          '`coverage` says what data the report covers and whether analysis had caught up. The `x-report-source` header says archive or built. ' +
          'HTML is one self-contained page with inline SVG charts.',
        security: SECURITY,
        querystring: Type.Object({
          week: Type.Optional(
            Type.String({
              pattern: '^\\d{4}-W\\d{2}$',
              description: 'ISO week, e.g. 2026-W48; default: the last complete week in the fleet time zone',
            }),
          ),
          format: Type.Union([Type.Literal('json'), Type.Literal('html'), Type.Literal('csv')], { default: 'json' }),
          fleet: Type.Optional(
            Type.String({ description: 'admin keys: the fleet (required); other keys: their own fleet only' }),
          ),
          refresh: Type.Boolean({
            default: false,
            description: 'rebuild even when an archived report of the ended week exists',
          }),
          unit: UnitParam,
        }),
        response: {
          200: {
            description: 'the report',
            content: {
              'application/json': { schema: WeeklyReportSchema },
              'text/html': { schema: Type.String({ description: 'self-contained HTML page' }) },
              'text/csv': { schema: Type.String({ description: 'the work list, RFC 4180, header row' }) },
            },
          },
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const { week, format, refresh } = request.query;
      const fleetId = await oneFleetOf(principal, request.query.fleet);
      const fleet = await reports.fleet(fleetId);
      if (!fleet) throw new NotFoundError(`unknown fleet '${fleetId}'`);
      const { timeZone } = fleet;
      let isoWeek;
      try {
        isoWeek = week ? parseIsoWeek(week) : lastCompleteIsoWeek(Date.now(), timeZone);
      } catch (err) {
        throw new BadRequestError((err as Error).message, 'validation_failed');
      }
      const name = formatIsoWeek(isoWeek);
      const window = weekWindow(isoWeek, timeZone);
      if (window.startMs > Date.now())
        throw new BadRequestError(`week ${name} has not started yet`, 'validation_failed');
      let out;
      try {
        out = await currentWeeklyReport(app.database.db, { fleetId, isoWeek: name, timeZone, refresh });
      } catch (err) {
        if (err instanceof UnknownFleetError) throw new NotFoundError(err.message);
        throw err;
      }
      // Built and archived in °C; another unit converts the copy served (JSON `unit`, CSV column temperatureUnit, the header).
      const served =
        request.query.unit === 'C'
          ? { report: out.json, html: out.html, csv: out.csv }
          : reportInUnit(out.json, request.query.unit);
      reply.type(FORMATS[format]);
      reply.header('x-report-source', out.source);
      reply.header(UNIT_HEADER, request.query.unit);
      if (format === 'json') return reply.send(served.report);
      if (format === 'csv')
        reply.header('content-disposition', `attachment; filename="${reportBaseName(fleetId, name)}.csv"`);
      return reply.send(format === 'html' ? served.html : served.csv);
    },
  );

  app.get(
    '/v1/reports/weekly/archive',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['reports'],
        summary: "The fleet's archived weekly reports, newest week first, a page at a time",
        description:
          'Each entry says when it was built, whether its week had ended with the analysis caught up, and how many vehicles its work list has. ' +
          'Fetch one with GET /v1/reports/weekly?week= (a stale archive is rebuilt there).',
        security: SECURITY,
        querystring: Type.Object({
          ...pageQuery(104, 520),
          fleet: Type.Optional(
            Type.String({ description: 'admin keys: the fleet (required); other keys: their own fleet only' }),
          ),
        }),
        response: {
          200: Type.Object({
            fleetId: Type.String(),
            reports: Type.Array(
              Type.Object({
                isoWeek: Type.String(),
                generatedAt: Type.String({ format: 'date-time' }),
                complete: Type.Union([Type.Boolean(), Type.Null()], {
                  description:
                    'the week had ended and its analysis had caught up (null: archived before coverage was recorded)',
                }),
                workItems: Type.Union([Type.Integer(), Type.Null()], { description: 'vehicles on the work list' }),
                url: Type.String(),
              }),
            ),
            nextCursor: NextCursor,
          }),
          ...errorResponses(400, 401, 403, 404),
        },
      },
    },
    async (request) => {
      const principal = principalOf(request);
      const fleetId = await oneFleetOf(principal, request.query.fleet);
      if (!(await reports.fleet(fleetId))) throw new NotFoundError(`unknown fleet '${fleetId}'`);
      const page = await reports.archivedPage(fleetId, {
        limit: request.query.limit,
        after: decodeCursor(request.query.cursor, ARCHIVE_ORDER),
      });
      const fleetParam = principal.fleetId === null ? `&fleet=${encodeURIComponent(fleetId)}` : '';
      return {
        fleetId,
        reports: page.items.map((r) => ({ ...r, url: `/v1/reports/weekly?week=${r.isoWeek}${fleetParam}` })),
        nextCursor: nextCursorOf(page),
      };
    },
  );
};

export default reportsRoutes;
