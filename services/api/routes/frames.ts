import type { Readable } from 'node:stream';
import { TypeBoxValidatorCompiler, type FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { createBusFramesRepository } from '../../db/bus-frames-repository.js';
import { createFleetsRepository } from '../../db/fleets-repository.js';
import { ForeignVehiclesError } from '../../db/readings-repository.js';
import { Counter } from '../metrics-registry.js';
import { BadRequestError, ForbiddenError, PayloadTooLargeError, UnsupportedMediaTypeError } from '../errors.js';
import { bodyFormatOf, bodyRecords, type BodyStats } from '../ingest/body-records.js';
import { type BusProtocol, FRAME_SHAPES, FrameRecords } from '../ingest/frames/frame-records.js';
import { oneFleetOf } from '../request-fleet.js';
import { principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { MAX_REJECTED_LISTED } from './readings.js';

const VehicleTs = {
  vehicleId: Type.String({ description: 'vehicle id, 1–64 of A–Z a–z 0–9 _ . : -' }),
  ts: Type.Union([Type.String({ format: 'date-time' }), Type.Integer({ description: 'epoch milliseconds' })], {
    description: 'when the gateway read it: RFC 3339 with time zone, or epoch ms',
  }),
};
const J1939Frame = Type.Object({
  ...VehicleTs,
  canId: Type.String({
    description: '29-bit identifier as hex, e.g. "18FEEE00" (priority 6, PGN 65262, source address 0)',
  }),
  data: Type.String({ description: 'up to 8 data bytes as hex, spaces allowed, e.g. "7B FF FF FF FF FF FF FF"' }),
});
const ObdResponse = Type.Object({
  ...VehicleTs,
  data: Type.String({
    description: 'service 01 positive response as hex, several PIDs allowed, e.g. "41 05 7B 0C 1A F8"',
  }),
});

const FrameReply = Type.Object({
  accepted: Type.Integer({
    description:
      'readings stored or changed by this request (readings are formed per vehicle on the coolant timestamps, one per sample period)',
  }),
  duplicates: Type.Integer({
    description: 'readings the frames gave that were already stored as they are: a retry is harmless',
  }),
  ignored: Type.Integer({
    description:
      'rows of a PGN (J1939) or PIDs (OBD-II) not decoded here, or whose values were all "not available"; not errors',
  }),
  rejected: Type.Array(
    Type.Object({
      index: Type.Integer({ description: 'position of the row in the body, from 0' }),
      reason: Type.String(),
    }),
    {
      description: `malformed rows, not used; the first ${MAX_REJECTED_LISTED} are listed`,
    },
  ),
  rejectedTotal: Type.Optional(
    Type.Integer({
      description: `all rejected rows; present only when more than ${MAX_REJECTED_LISTED} were rejected`,
    }),
  ),
});

const DESCRIPTIONS: Record<BusProtocol, { summary: string; description: string }> = {
  j1939: {
    summary: 'Post SAE J1939 frames',
    description:
      'Decodes CAN frames a gateway forwards (JSON `{ frames: [...] }`, NDJSON, or CSV with header vehicleId,ts,canId,data; gzip accepted) by SAE J1939-71: ' +
      'SPN 110 and SPN 1637 coolant (PGN 65262, 65129), SPN 171 ambient and SPN 108 barometric pressure (65269), SPN 190 engine speed (61444), ' +
      'SPN 84 road speed (65265), SPN 109 coolant pressure and SPN 111 coolant level (65263). Other PGNs are ignored and counted. ' +
      "Readings are formed per vehicle on the coolant timestamps, one per the vehicle's sample period, with the other channels' latest values; " +
      'frames may arrive in any requests, in any order.',
  },
  obd: {
    summary: 'Post OBD-II service 01 responses',
    description:
      'Decodes SAE J1979 service 01 positive responses (JSON `{ responses: [...] }`, NDJSON, or CSV with header vehicleId,ts,data; gzip accepted): ' +
      'PID 0x05 coolant, 0x46 ambient, 0x0C engine speed, 0x0D vehicle speed, 0x33 barometric pressure; several PIDs per response. ' +
      'Readings are formed as for J1939 frames.',
  },
};

/** POST /v1/frames/j1939 and /v1/frames/obd: gateways that forward the vehicle bus undecoded. */
const framesRoutes: FastifyPluginAsyncTypebox<{
  maxBodyBytes: number;
  maxReadingsPerRequest: number;
  ingestMaxAgeDays: number;
}> = async (app, opts) => {
  const repo = createBusFramesRepository(app.database, app.partitions);
  const fleets = createFleetsRepository(app.database.db);
  const framesTotal = new Counter(
    'thermocline_bus_frames_total',
    'Rows of POST /v1/frames/j1939 and /v1/frames/obd, by protocol and result (decoded, unknown-pgn, not-available, rejected); OBD-II PIDs skipped: result="ignored-pid".',
  );
  app.metrics.extra.push(framesTotal);
  // Scoped to this plugin's routes: a frame request that stored nothing counts as an ingest failure, as /v1/readings does.
  app.addHook('onResponse', async (_request, reply) => {
    if (reply.statusCode >= 400) app.metrics.ingestFailures.inc({ status: String(reply.statusCode) });
  });

  app.removeAllContentTypeParsers();
  app.addContentTypeParser(
    ['application/json', 'application/x-ndjson', 'application/ndjson', 'application/jsonl', 'text/csv'],
    (_req, payload, done) => done(null, payload),
  );

  for (const protocol of ['j1939', 'obd'] as const) {
    const Row = protocol === 'j1939' ? J1939Frame : ObdResponse;
    const arrayKey = FRAME_SHAPES[protocol].arrayKey;
    app.post(
      `/v1/frames/${protocol}`,
      {
        onRequest: app.requireScope('ingest'),
        bodyLimit: Number.MAX_SAFE_INTEGER, // enforced while streaming, on the decompressed bytes
        validatorCompiler: (route) => (route.httpPart === 'body' ? () => true : TypeBoxValidatorCompiler(route)),
        schema: {
          tags: ['readings'],
          ...DESCRIPTIONS[protocol],
          security: SECURITY,
          querystring: Type.Object({
            fleet: Type.Optional(Type.String({ description: 'admin keys only: the fleet the vehicles belong to' })),
          }),
          body: {
            content: {
              'application/json': { schema: Type.Object({ [arrayKey]: Type.Array(Row) }) },
              'application/x-ndjson': { schema: Row },
              'text/csv': { schema: Type.String({ description: 'header row then one row per frame' }) },
            },
          } as never,
          response: { 200: FrameReply, ...errorResponses(400, 401, 403, 404, 413, 415) },
        },
      },
      async (request, reply) => {
        const principal = principalOf(request);
        const format = bodyFormatOf(request.headers['content-type']);
        if (!format) throw new UnsupportedMediaTypeError('send application/json, application/x-ndjson or text/csv');
        const fleetId = await oneFleetOf(principal, request.query.fleet, fleets, `POST /v1/frames/${protocol}`);

        const stats: BodyStats = { bytes: 0 };
        const rows = new FrameRecords(protocol, Date.now(), opts.ingestMaxAgeDays);
        const rejected: Array<{ index: number; reason: string }> = [];
        let rejectedTotal = 0;
        let index = 0;
        // Frames are decoded into per-vehicle one-second slots as the body streams in (memory: one
        // record per vehicle-second, not per frame); the database work starts once the body is read.
        const noUnit = () => {
          throw new BadRequestError('frames carry no "unit": bus values are in the standard\'s units', 'bad_unit');
        };
        for await (const batch of bodyRecords(
          request.body as Readable,
          format,
          request.headers['content-encoding'],
          opts.maxBodyBytes,
          stats,
          noUnit,
          FRAME_SHAPES[protocol],
        )) {
          if (index + batch.length > opts.maxReadingsPerRequest)
            throw new PayloadTooLargeError(
              `more than ${opts.maxReadingsPerRequest} rows in one request; split the batch`,
            );
          for (const record of batch) {
            const reason = rows.add(record);
            if (reason !== null) {
              if (rejectedTotal < MAX_REJECTED_LISTED) rejected.push({ index, reason });
              rejectedTotal++;
            }
            index++;
          }
        }
        const c = rows.collector;
        try {
          const result = await repo.ingest(fleetId, c.vehicles, {
            keyId: principal.keyId,
            contentType: `${protocol}:${format}`,
            bodyBytes: () => stats.bytes,
            rejected: () => rejectedTotal,
          });
          framesTotal.inc({ protocol, result: 'decoded' }, c.decoded);
          framesTotal.inc({ protocol, result: 'unknown-pgn' }, c.unknownPgns);
          framesTotal.inc({ protocol, result: 'not-available' }, c.notAvailable);
          framesTotal.inc({ protocol, result: 'rejected' }, rejectedTotal);
          if (c.ignoredPids > 0) framesTotal.inc({ protocol, result: 'ignored-pid' }, c.ignoredPids);
          app.metrics.ingestReadings.inc({ result: 'accepted' }, result.accepted);
          app.metrics.ingestReadings.inc({ result: 'duplicate' }, result.duplicates);
          app.metrics.ingestBatches.inc({ format: `${protocol}:${format}` });
          if (result.accepted > 0) app.ingestNotifier.emit('readings', fleetId);
          const ignored = c.unknownPgns + c.notAvailable + c.ignoredPids;
          return reply.send({
            accepted: result.accepted,
            duplicates: result.duplicates,
            ignored,
            rejected,
            ...(rejectedTotal > rejected.length ? { rejectedTotal } : {}),
          });
        } catch (err) {
          if (err instanceof ForeignVehiclesError)
            throw new ForbiddenError(
              `this API key's fleet may not post frames for ${err.vehicleIds.join(', ')}: registered to another fleet; nothing was stored`,
            );
          throw err;
        }
      },
    );
  }
};

export default framesRoutes;
