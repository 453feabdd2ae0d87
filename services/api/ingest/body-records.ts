import type { Readable } from 'node:stream';
import { StringDecoder } from 'node:string_decoder';
import { createGunzip } from 'node:zlib';
import { BadRequestError, PayloadTooLargeError, UnsupportedMediaTypeError } from '../errors.js';
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
 * the decompressed bytes (so a small compressed bomb is refused too).
 */
async function* textChunks(raw: Readable, encoding: string | undefined, maxBytes: number, stats: BodyStats): AsyncGenerator<string> {
  const enc = (encoding ?? 'identity').trim().toLowerCase();
  let source: Readable = raw;
  if (enc === 'gzip' || enc === 'x-gzip') {
    const gunzip = createGunzip();
    raw.on('error', (err) => gunzip.destroy(err));
    source = raw.pipe(gunzip);
  } else if (enc !== 'identity' && enc !== '') {
    throw new UnsupportedMediaTypeError(`Content-Encoding '${encoding}' is not supported; send gzip or no encoding`);
  }
  const decoder = new StringDecoder('utf8');
  try {
    // Leaving the loop early (a bad body, a failed insert) must not destroy the request stream:
    // that would reset the connection before the client could read the error reply. The error
    // handler answers with "Connection: close" instead.
    for await (const buf of source.iterator({ destroyOnReturn: false }) as AsyncIterable<Buffer>) {
      stats.bytes += buf.length;
      if (stats.bytes > maxBytes) throw new PayloadTooLargeError(`the body is larger than ${maxBytes} bytes (after decompression); split it into smaller batches`);
      const text = decoder.write(buf);
      if (text) yield text;
    }
  } catch (err) {
    if ((err as { code?: string }).code === 'Z_DATA_ERROR' || (err as { code?: string }).code === 'Z_BUF_ERROR') {
      throw new BadRequestError('the body is not valid gzip', 'malformed_body');
    }
    throw err;
  }
  const rest = decoder.end();
  if (rest) yield rest;
}

/** Splits text chunks into complete lines (without the newline), a batch per chunk. */
async function* lineBatches(chunks: AsyncIterable<string>): AsyncGenerator<string[]> {
  let carry = '';
  for await (const chunk of chunks) {
    const text = carry + chunk;
    const lines = text.split('\n');
    carry = lines.pop() ?? '';
    if (lines.length > 0) yield lines;
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

const CSV_COLUMNS = ['vehicleId', 'ts', 'coolant', 'ambient', 'speedKph', 'rpm', 'unit'] as const;

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
): AsyncGenerator<unknown[]> {
  const chunks = textChunks(raw, encoding, maxBytes, stats);
  if (format === 'json') {
    const scanner = new JsonBatchScanner();
    let seenReadings = 0;
    for await (const chunk of chunks) {
      const records: unknown[] = [];
      for (const ev of scanner.push(chunk)) {
        if (ev.type === 'reading') {
          records.push(ev.value);
          seenReadings++;
        } else if (ev.key === 'unit') {
          if (typeof ev.value !== 'string' || !UNITS.includes(ev.value as TemperatureUnit)) throw new BadRequestError('unit must be "C", "F" or "K"', 'bad_unit');
          if (seenReadings > 0 && ev.value !== 'C') throw new BadRequestError('put "unit" before "readings" in the JSON object: readings are converted as they stream in', 'bad_unit');
          onUnit(ev.value as TemperatureUnit);
        }
      }
      if (records.length > 0) yield records;
    }
    scanner.end();
    if (!scanner.sawReadings) throw new BadRequestError('the JSON object has no "readings" array', 'malformed_body');
    return;
  }

  if (format === 'ndjson') {
    for await (const lines of lineBatches(chunks)) {
      const records: unknown[] = [];
      for (const line of lines) {
        const trimmed = line.endsWith('\r') ? line.slice(0, -1) : line;
        if (trimmed.trim() === '') continue;
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
      if (trimmed.trim() === '') continue;
      const fields = splitCsvLine(trimmed);
      if (!columns) {
        if (!fields) throw new BadRequestError('the CSV header row is malformed', 'malformed_body');
        columns = fields.map((f) => CSV_COLUMNS.find((c) => c.toLowerCase() === f.trim().replace(/^\uFEFF/, '').toLowerCase()));
        for (const required of ['vehicleId', 'ts', 'coolant']) {
          if (!columns.includes(required)) throw new BadRequestError(`the CSV header must name the columns vehicleId, ts and coolant (optional: ambient, speedKph, rpm, unit); '${required}' is missing`, 'malformed_body');
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
  if (!columns) throw new BadRequestError('the CSV body is empty: it needs a header row (vehicleId,ts,coolant,…)', 'malformed_body');
}
