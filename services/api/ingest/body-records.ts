import type { Readable } from 'node:stream';
import { StringDecoder } from 'node:string_decoder';
import { createGunzip, type Gunzip } from 'node:zlib';
import {
  BadRequestError,
  ClientClosedRequestError,
  PayloadTooLargeError,
  UnsupportedMediaTypeError,
} from '../errors.js';
import { JsonBatchScanner } from './json-batch-scanner.js';
import { MALFORMED, MALFORMED_CSV } from './malformed-record.js';
import { UNITS, type TemperatureUnit } from './validate-reading.js';

export type BodyFormat = 'json' | 'ndjson' | 'csv';

/** Maps a Content-Type header to a body format; undefined for anything else (415). */
export function bodyFormatOf(contentType: string | undefined): BodyFormat | undefined {
  const type = (contentType ?? '').split(';')[0]!.trim().toLowerCase();
  if (type === 'application/json') return 'json';
  if (type === 'application/x-ndjson' || type === 'application/ndjson' || type === 'application/jsonl') return 'ndjson';
  if (type === 'text/csv') return 'csv';
  return undefined;
}

export interface BodyStats {
  bytes: number;
}

/**
 * Decompresses (gzip) and decodes a request body as it streams in, enforcing the size limit on
 * the decompressed bytes (so a small compressed bomb is refused too). The one place where the
 * body's streams are wired: every stream gets an error listener for its whole life, and leaving
 * early (a bad body, a failed insert) unpipes and destroys the gunzip, so nothing it says later
 * (a truncated body's Z_BUF_ERROR) can go unheard and crash the process. The request stream
 * itself is left alone: the error handler drains it so the client reads the error reply.
 */
async function* textChunks(
  raw: Readable,
  encoding: string | undefined,
  maxBytes: number,
  stats: BodyStats,
): AsyncGenerator<string> {
  const enc = (encoding ?? 'identity').trim().toLowerCase();
  let clientGone = false;
  const onRawError = () => {
    clientGone = true;
  };
  raw.on('error', onRawError);
  raw.once('aborted', onRawError);
  let gunzip: Gunzip | undefined;
  let source: Readable = raw;
  let compressedBytes = 0;
  if (enc === 'gzip' || enc === 'x-gzip') {
    raw.on('data', (b: Buffer) => {
      compressedBytes += b.length;
    });
    gunzip = createGunzip();
    // Errors while we read reach the iterator below; this listener covers the time after.
    gunzip.on('error', () => undefined);
    const target = gunzip;
    raw.once('error', (err) => target.destroy(err));
    source = raw.pipe(gunzip);
  } else if (enc !== 'identity' && enc !== '') {
    throw new UnsupportedMediaTypeError(`Content-Encoding '${encoding}' is not supported; send gzip or no encoding`);
  }
  const decoder = new StringDecoder('utf8');
  try {
    // Leaving the loop early must not destroy the request stream: that would reset the connection
    // before the client could read the error reply.
    for await (const buf of source.iterator({ destroyOnReturn: false }) as AsyncIterable<Buffer>) {
      stats.bytes += buf.length;
      if (stats.bytes > maxBytes)
        throw new PayloadTooLargeError(
          `the body is larger than ${maxBytes} bytes (after decompression); split it into smaller batches`,
        );
      if (gunzip && stats.bytes > GZIP_RATIO_FREE_BYTES && stats.bytes > MAX_GZIP_RATIO * compressedBytes) {
        throw new PayloadTooLargeError(
          `the body expands more than ${MAX_GZIP_RATIO}-fold when decompressed, which telemetry does not; nothing was stored`,
          'compression_ratio',
        );
      }
      const text = decoder.write(buf);
      if (text) yield text;
    }
  } catch (err) {
    if (clientGone) throw new ClientClosedRequestError();
    const code = (err as { code?: string }).code;
    if (code === 'Z_DATA_ERROR' || code === 'Z_BUF_ERROR' || code === 'Z_STREAM_ERROR') {
      throw new BadRequestError('the body is not valid gzip', 'malformed_body');
    }
    throw err;
  } finally {
    if (gunzip) {
      raw.unpipe(gunzip);
      gunzip.destroy();
    }
  }
  if (clientGone) throw new ClientClosedRequestError();
  const rest = decoder.end();
  if (rest) yield rest;
}

/**
 * Blank lines one NDJSON or CSV body may hold. They cost no reading but do cost time (about 90 ns
 * each: 512 MiB of newlines, 0.5 MB gzipped, took 44 s to go through), so they are bounded too.
 */
export const MAX_BLANK_LINES = 100_000;

/**
 * Most a gzip body may expand, decompressed to compressed bytes, once past GZIP_RATIO_FREE_BYTES:
 * telemetry compresses some 5–20 fold (measured on simulator NDJSON and CSV, see the design log),
 * a bomb of zeros or newlines about 1,000 fold. Refusing early saves decompressing it to the limit.
 */
export const MAX_GZIP_RATIO = 100;
const GZIP_RATIO_FREE_BYTES = 8 * 1024 * 1024;

/**
 * Longest line of an NDJSON or CSV body, characters: a reading is about 100, so this leaves room
 * for long ids and extra fields and stops a body of one endless line from being held in memory.
 */
export const MAX_LINE_CHARS = 64 * 1024;

/**
 * Splits text chunks into complete lines (without the newline), a batch per chunk, in time linear
 * in the body: only the new chunk is searched for newlines, and the unfinished tail is carried
 * over as it is (a line that spans many chunks used to be re-split with every chunk).
 */
export async function* lineBatches(
  chunks: AsyncIterable<string>,
  maxLineChars = MAX_LINE_CHARS,
): AsyncGenerator<string[]> {
  let carry = '';
  let lineNumber = 1;
  const tooLong = () =>
    new PayloadTooLargeError(
      `line ${lineNumber} is longer than ${maxLineChars} characters: send one reading per line; nothing was stored`,
      'line_too_long',
    );
  for await (const chunk of chunks) {
    const first = chunk.indexOf('\n');
    if (first < 0) {
      carry += chunk;
      if (carry.length > maxLineChars) throw tooLong();
      continue;
    }
    const lines = chunk.split('\n');
    lines[0] = carry + lines[0]!;
    carry = lines.pop()!;
    for (const line of lines) {
      if (line.length > maxLineChars) throw tooLong();
      lineNumber++;
    }
    if (carry.length > maxLineChars) throw tooLong();
    yield lines;
  }
  if (carry.length > 0) yield [carry];
}

function parseNdjsonLine(line: string): unknown {
  try {
    return JSON.parse(line);
  } catch {
    return MALFORMED;
  }
}

/**
 * JSON bodies up to this many characters (about 10,000 readings) are parsed whole with
 * JSON.parse; longer ones stream through JsonBatchScanner. Measured on batches of 1,000
 * readings: the scanner cost the server about 1.3 ms of CPU per request.
 */
const WHOLE_JSON_MAX_CHARS = 1 << 20;

function checkUnit(value: unknown, readingsBefore: number, onUnit: (unit: TemperatureUnit) => void): void {
  if (typeof value !== 'string' || !UNITS.includes(value as TemperatureUnit))
    throw new BadRequestError('unit must be "C", "F" or "K"', 'bad_unit');
  if (readingsBefore > 0 && value !== 'C')
    throw new BadRequestError(
      'put "unit" before "readings" in the JSON object: readings are converted as they stream in',
      'bad_unit',
    );
  onUnit(value as TemperatureUnit);
}

/**
 * A whole JSON batch parsed at once, or undefined when the body must go through the scanner
 * instead, which then gives the same records and errors as it would have: not valid JSON, not
 * an object with a "readings" array, or a body where JSON.parse and the scanner could differ:
 * a repeated "readings" or "unit" key (JSON.parse keeps the last, the scanner sees each), or a
 * \u escape that could spell one.
 */
function parseWholeBatch(
  text: string,
  arrayKey = 'readings',
): { unitKey: 'before' | 'after' | 'none'; unit: unknown; readings: unknown[] } | undefined {
  if (text.includes('\\u')) return undefined;
  const quotedKey = `"${arrayKey}"`;
  const first = text.indexOf(quotedKey);
  if (first < 0 || text.indexOf(quotedKey, first + 1) >= 0) return undefined;
  const unitAt = text.indexOf('"unit"');
  if (unitAt >= 0 && text.indexOf('"unit"', unitAt + 1) >= 0) return undefined;
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    return undefined;
  }
  if (typeof parsed !== 'object' || parsed === null || Array.isArray(parsed)) return undefined;
  const batch = parsed as Record<string, unknown>;
  const readings = batch[arrayKey];
  if (!Array.isArray(readings)) return undefined;
  if (!('unit' in batch)) return { unitKey: 'none', unit: undefined, readings };
  const keys = Object.keys(batch);
  return { unitKey: keys.indexOf('unit') < keys.indexOf(arrayKey) ? 'before' : 'after', unit: batch.unit, readings };
}

/** Feeds text to the scanner and yields the readings it completes, handling "unit" as it comes. */
function* scannedRecords(
  scanner: JsonBatchScanner,
  text: string,
  counter: { readings: number },
  onUnit: (unit: TemperatureUnit) => void,
): Generator<unknown[]> {
  const records: unknown[] = [];
  for (const ev of scanner.push(text)) {
    if (ev.type === 'reading') {
      records.push(ev.value);
      counter.readings++;
    } else if (ev.key === 'unit') checkUnit(ev.value, counter.readings, onUnit);
  }
  if (records.length > 0) yield records;
}

/**
 * The readings of a JSON batch `{ "unit": …, "readings": [ … ] }`: a small body is parsed whole
 * (fast), a large one is scanned as it streams in (bounded memory). `wholeMaxChars` 0 scans
 * every body (tests compare the two ways).
 */
export async function* jsonRecords(
  chunks: AsyncIterable<string>,
  onUnit: (unit: TemperatureUnit) => void,
  wholeMaxChars = WHOLE_JSON_MAX_CHARS,
  arrayKey = 'readings',
): AsyncGenerator<unknown[]> {
  const scanner = new JsonBatchScanner(arrayKey);
  const counter = { readings: 0 };
  let held: string[] | undefined = [];
  let heldChars = 0;
  for await (const chunk of chunks) {
    if (held) {
      held.push(chunk);
      heldChars += chunk.length;
      if (heldChars <= wholeMaxChars) continue;
      const text = held.join('');
      held = undefined;
      yield* scannedRecords(scanner, text, counter, onUnit);
    } else yield* scannedRecords(scanner, chunk, counter, onUnit);
  }
  if (held) {
    const text = held.join('');
    const whole = parseWholeBatch(text, arrayKey);
    if (whole) {
      if (whole.unitKey !== 'none')
        checkUnit(whole.unit, whole.unitKey === 'after' ? whole.readings.length : 0, onUnit);
      if (whole.readings.length > 0) yield whole.readings;
      return;
    }
    yield* scannedRecords(scanner, text, counter, onUnit);
  }
  scanner.end();
  if (!scanner.sawReadings) throw new BadRequestError(`the JSON object has no "${arrayKey}" array`, 'malformed_body');
}

const CSV_COLUMNS = [
  'vehicleId',
  'ts',
  'coolant',
  'ambient',
  'speedKph',
  'rpm',
  'unit',
  'barometricKpa',
  'coolantLevelPct',
  'coolantPressureKpa',
] as const;

/** What a body's records are called: the JSON array's key and the CSV columns (bus frames use others). */
export interface RecordShape {
  arrayKey: string;
  csvColumns: readonly string[];
  csvRequired: readonly string[];
}

export const READINGS_SHAPE: RecordShape = {
  arrayKey: 'readings',
  csvColumns: CSV_COLUMNS,
  csvRequired: ['vehicleId', 'ts', 'coolant'],
};

/** Splits one CSV line (RFC 4180 quoting; a quoted field may not span lines). */
export function splitCsvLine(line: string): string[] | undefined {
  if (!line.includes('"')) return line.split(',');
  const out: string[] = [];
  let i = 0;
  while (i <= line.length) {
    if (line[i] === '"') {
      let value = '';
      i++;
      for (;;) {
        const q = line.indexOf('"', i);
        if (q < 0) return undefined;
        value += line.slice(i, q);
        if (line[q + 1] === '"') {
          value += '"';
          i = q + 2;
        } else {
          i = q + 1;
          break;
        }
      }
      out.push(value);
      if (i < line.length && line[i] !== ',') return undefined;
      i++;
    } else {
      const c = line.indexOf(',', i);
      const end = c < 0 ? line.length : c;
      out.push(line.slice(i, end));
      i = end + 1;
    }
  }
  return out;
}

/**
 * Yields the body's readings as raw records, batch by batch, without holding the body in
 * memory. Blank lines in NDJSON and CSV are skipped and do not count as readings; a reading's
 * index is its position among the body's readings, from 0.
 */
export async function* bodyRecords(
  raw: Readable,
  format: BodyFormat,
  encoding: string | undefined,
  maxBytes: number,
  stats: BodyStats,
  onUnit: (unit: TemperatureUnit) => void,
  shape: RecordShape = READINGS_SHAPE,
): AsyncGenerator<unknown[]> {
  const chunks = textChunks(raw, encoding, maxBytes, stats);
  let blankLines = 0;
  const countBlank = () => {
    if (++blankLines > MAX_BLANK_LINES)
      throw new PayloadTooLargeError(`more than ${MAX_BLANK_LINES} blank lines in one body; nothing was stored`);
  };
  if (format === 'json') {
    yield* jsonRecords(chunks, onUnit, WHOLE_JSON_MAX_CHARS, shape.arrayKey);
    return;
  }

  if (format === 'ndjson') {
    for await (const lines of lineBatches(chunks)) {
      const records: unknown[] = [];
      for (const line of lines) {
        const trimmed = line.endsWith('\r') ? line.slice(0, -1) : line;
        if (trimmed.trim() === '') {
          countBlank();
          continue;
        }
        records.push(parseNdjsonLine(trimmed));
      }
      if (records.length > 0) yield records;
    }
    return;
  }

  let columns: Array<string | undefined> | undefined;
  for await (const lines of lineBatches(chunks)) {
    const records: unknown[] = [];
    for (const line of lines) {
      const trimmed = line.endsWith('\r') ? line.slice(0, -1) : line;
      if (trimmed.trim() === '') {
        countBlank();
        continue;
      }
      const fields = splitCsvLine(trimmed);
      if (!columns) {
        if (!fields) throw new BadRequestError('the CSV header row is malformed', 'malformed_body');
        columns = fields.map((f) =>
          shape.csvColumns.find(
            (c) =>
              c.toLowerCase() ===
              f
                .trim()
                .replace(/^\uFEFF/, '')
                .toLowerCase(),
          ),
        );
        for (const required of shape.csvRequired) {
          if (!columns.includes(required)) {
            const optional = shape.csvColumns.filter((c) => !shape.csvRequired.includes(c)).join(', ');
            throw new BadRequestError(
              `the CSV header must name the columns ${shape.csvRequired.join(', ')} (optional: ${optional}); '${required}' is missing`,
              'malformed_body',
            );
          }
        }
        continue;
      }
      if (!fields || fields.length !== columns.length) {
        records.push(MALFORMED_CSV);
        continue;
      }
      const record: Record<string, string> = {};
      for (let i = 0; i < columns.length; i++) {
        const name = columns[i];
        if (name) record[name] = fields[i]!.trim();
      }
      records.push(record);
    }
    if (records.length > 0) yield records;
  }
  if (!columns)
    throw new BadRequestError(
      `the CSV body is empty: it needs a header row (${shape.csvRequired.join(',')},…)`,
      'malformed_body',
    );
}
