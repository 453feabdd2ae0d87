import type { Readable } from 'node:stream';
import { TypeBoxValidatorCompiler, type FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createFleetsRepository } from '../../db/fleets-repository.js';
import { createReadingsRepository, ForeignVehiclesError } from '../../db/readings-repository.js';
import type { ReadingChunk } from '../../db/reading-chunk.js';
import {
  ClientClosedRequestError,
  ForbiddenError,
  PayloadTooLargeError,
  UnsupportedMediaTypeError,
} from '../errors.js';
import { bodyFormatOf, bodyRecords, type BodyStats } from '../ingest/body-records.js';
import { ChunkBuilder } from '../ingest/chunk-builder.js';
import { validateReading, type TemperatureUnit } from '../ingest/validate-reading.js';
import { oneFleetOf } from '../request-fleet.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';

/** Rows per bulk statement into the staging table (measured: 5,000 ≈ 10,000 > 1,000 in rows/s). */
const INSERT_CHUNK_ROWS = 5000;

/**
 * Rejected readings listed one by one in a reply; beyond it only counted (`rejectedTotal`), so a
 * few KB of gzip holding millions of bad lines cannot produce a reply of many megabytes.
 */
export const MAX_REJECTED_LISTED = 1000;

const Reading = Type.Object({
  vehicleId: Type.String({ description: 'vehicle id, 1–64 of A–Z a–z 0–9 _ . : -' }),
  ts: Type.Union([Type.String({ format: 'date-time' }), Type.Integer({ description: 'epoch milliseconds' })], {
    description:
      'RFC 3339 date-time with time zone, or epoch ms; not before 2000 nor more than INGEST_MAX_AGE_DAYS (730) days old, at most 5 minutes ahead',
  }),
  coolant: Type.Number({
    description: 'engine coolant temperature (SAE J1939 SPN 110 / OBD-II PID 0x05), valid −40 to 210 °C',
  }),
  ambient: Type.Optional(Type.Union([Type.Number(), Type.Null()], { description: 'ambient air temperature' })),
  speedKph: Type.Optional(Type.Union([Type.Number({ minimum: 0 }), Type.Null()])),
  rpm: Type.Optional(Type.Union([Type.Number({ minimum: 0 }), Type.Null()])),
  barometricKpa: Type.Optional(
    Type.Union([Type.Number({ minimum: 0, maximum: 125 }), Type.Null()], {
      description: 'atmospheric pressure, kPa absolute (SAE J1939 SPN 108 / OBD-II PID 0x33)',
    }),
  ),
  coolantLevelPct: Type.Optional(
    Type.Union([Type.Number({ minimum: 0, maximum: 100 }), Type.Null()], {
      description: 'coolant level, % of full (SAE J1939 SPN 111)',
    }),
  ),
  coolantPressureKpa: Type.Optional(
    Type.Union([Type.Number({ minimum: 0, maximum: 500 }), Type.Null()], {
      description: 'coolant pressure, kPa gauge (SAE J1939 SPN 109)',
    }),
  ),
  unit: Type.Optional(
    Type.Union([Type.Literal('C'), Type.Literal('F'), Type.Literal('K')], {
      description: 'NDJSON only: unit of this line',
    }),
  ),
});

const JsonBatch = Type.Object({
  unit: Type.Optional(
    Type.Union([Type.Literal('C'), Type.Literal('F'), Type.Literal('K')], {
      description: 'unit of coolant and ambient; put it before readings',
      default: 'C',
    }),
  ),
  readings: Type.Array(Reading),
});

const IngestReply = Type.Object({
  accepted: Type.Integer({ description: 'readings stored by this request' }),
  duplicates: Type.Integer({ description: 'valid readings already stored (same vehicle and ts): a retry is harmless' }),
  rejected: Type.Array(
    Type.Object({
      index: Type.Integer({
        description: 'position of the reading in the body, from 0 (blank lines and the CSV header do not count)',
      }),
      reason: Type.String(),
    }),
    {
      description: `invalid readings, not stored; the first ${MAX_REJECTED_LISTED} are listed`,
    },
  ),
  rejectedTotal: Type.Optional(
    Type.Integer({
      description: `all rejected readings; present only when more than ${MAX_REJECTED_LISTED} were rejected and the list is cut`,
    }),
  ),
});

/** POST /v1/readings: the gateways' ingest endpoint (JSON batch, NDJSON, CSV; gzip). */
const readingsRoutes: FastifyPluginAsyncTypebox<{
  maxBodyBytes: number;
  maxReadingsPerRequest: number;
  ingestMaxAgeDays: number;
}> = async (app, opts) => {
  const repo = createReadingsRepository(app.database, app.partitions);
  const fleets = createFleetsRepository(app.database.db);

  // The body is handed to the handler as a stream: it is parsed and stored as it arrives.
  app.removeAllContentTypeParsers();
  app.addContentTypeParser(
    ['application/json', 'application/x-ndjson', 'application/ndjson', 'application/jsonl', 'text/csv'],
    (_req, payload, done) => done(null, payload),
  );

  app.post(
    '/v1/readings',
    {
      onRequest: app.requireScope('ingest'),
      bodyLimit: Number.MAX_SAFE_INTEGER, // enforced while streaming, on the decompressed bytes
      // The body is validated reading by reading while it streams; the schema documents it.
      validatorCompiler: (route) => (route.httpPart === 'body' ? () => true : TypeBoxValidatorCompiler(route)),
      schema: {
        tags: ['readings'],
        summary: 'Post coolant readings',
        description:
          'Stores a batch of readings: a JSON object, NDJSON (one reading per line) or CSV with a header row (vehicleId,ts,coolant[,ambient,speedKph,rpm,unit,barometricKpa,coolantLevelPct,coolantPressureKpa]). ' +
          'Send `Content-Encoding: gzip` to compress. Each invalid reading is rejected with its index and the rest are stored; a reading already stored (same vehicle and ts) ' +
          "counts as a duplicate. The reply comes after the commit. Unknown vehicles are registered to the key's fleet with default profiles.",
        security: SECURITY,
        querystring: Type.Object({
          unit: Type.Optional(
            Type.Union([Type.Literal('C'), Type.Literal('F'), Type.Literal('K')], {
              description: 'default unit for the whole body',
            }),
          ),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: the fleet the readings belong to' })),
        }),
        body: {
          content: {
            'application/json': { schema: JsonBatch },
            'application/x-ndjson': { schema: Reading },
            'text/csv': { schema: Type.String({ description: 'header row then one reading per row' }) },
          },
        } as never,
        response: { 200: IngestReply, ...errorResponses(400, 401, 403, 404, 413, 415) },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const format = bodyFormatOf(request.headers['content-type']);
      if (!format) throw new UnsupportedMediaTypeError('send application/json, application/x-ndjson or text/csv');
      const fleetId = await oneFleetOf(principal, request.query.fleet, fleets, 'POST /v1/readings');

      let unit: TemperatureUnit = request.query.unit ?? 'C';
      const rejected: Array<{ index: number; reason: string }> = [];
      let rejectedTotal = 0;
      const stats: BodyStats = { bytes: 0 };
      const nowMs = Date.now();
      const maxReadings = opts.maxReadingsPerRequest;
      let index = 0;
      const records = bodyRecords(
        request.body as Readable,
        format,
        request.headers['content-encoding'],
        opts.maxBodyBytes,
        stats,
        (u) => {
          unit = u;
        },
      );

      async function* chunks(): AsyncGenerator<ReadingChunk> {
        const builder = new ChunkBuilder(INSERT_CHUNK_ROWS);
        for await (const batch of records) {
          if (index + batch.length > maxReadings)
            throw new PayloadTooLargeError(`more than ${maxReadings} readings in one request; split the batch`);
          for (const record of batch) {
            const v = validateReading(record, unit, nowMs, opts.ingestMaxAgeDays);
            if (typeof v === 'string') {
              if (rejectedTotal < MAX_REJECTED_LISTED) rejected.push({ index, reason: v });
              rejectedTotal++;
            } else {
              builder.push(v);
              if (builder.full) yield builder.take();
            }
            index++;
          }
        }
        if (builder.length > 0) yield builder.take();
      }

      try {
        const result = await repo.ingest(fleetId, chunks(), {
          keyId: principal.keyId,
          contentType: format,
          bodyBytes: () => stats.bytes,
          rejected: () => rejectedTotal,
        });
        app.metrics.ingestReadings.inc({ result: 'accepted' }, result.accepted);
        app.metrics.ingestReadings.inc({ result: 'duplicate' }, result.duplicates);
        app.metrics.ingestReadings.inc({ result: 'rejected' }, rejectedTotal);
        app.metrics.ingestBatches.inc({ format });
        if (result.accepted > 0) app.ingestNotifier.emit('readings', fleetId);
        return reply.send({
          accepted: result.accepted,
          duplicates: result.duplicates,
          rejected,
          ...(rejectedTotal > rejected.length ? { rejectedTotal } : {}),
        });
      } catch (err) {
        // Nobody reads the answer to an aborted body, so no response hook counts it: count it here.
        if (err instanceof ClientClosedRequestError) app.metrics.ingestFailures.inc({ status: 'client_closed' });
        if (err instanceof ForeignVehiclesError)
          throw new ForbiddenError(
            `this API key's fleet may not post readings for ${err.vehicleIds.join(', ')}: registered to another fleet; nothing was stored`,
          );
        throw err;
      }
    },
  );
};

export default readingsRoutes;
