import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { jsonRecords } from '../../../services/api/ingest/body-records.js';
import { MALFORMED } from '../../../services/api/ingest/malformed-record.js';

// A small JSON batch is parsed whole with JSON.parse, a large one streams through the scanner.
// Whatever the body, both ways must give the same readings and unit, or both refuse it (400,
// nothing stored). Which error is reported first can depend on where the body was cut into
// network chunks, as it always could.

interface Outcome {
  records: unknown[];
  units: string[];
  error?: string;
}

async function outcome(text: string, cuts: number[], wholeMaxChars: number | undefined): Promise<Outcome> {
  const pieces: string[] = [];
  let at = 0;
  for (const cut of [...cuts].sort((a, b) => a - b)) {
    const end = Math.min(text.length, cut);
    if (end > at) pieces.push(text.slice(at, end));
    at = Math.max(at, end);
  }
  pieces.push(text.slice(at));
  async function* chunks() {
    for (const p of pieces) if (p) yield p;
  }
  const out: Outcome = { records: [], units: [] };
  try {
    for await (const batch of jsonRecords(chunks(), (u) => out.units.push(u), wholeMaxChars))
      out.records.push(...batch);
  } catch (err) {
    out.error = (err as Error).message;
  }
  // A failed body stores nothing, so only the failure matters then.
  return out.error ? { records: [], units: [], error: 'refused' } : out;
}

const reading = fc.oneof(
  fc.record(
    {
      vehicleId: fc.constantFrom('V1', 'V-2', 'readings', 'unit'),
      ts: fc.integer({ min: 946_684_800_000, max: 1_900_000_000_000 }),
      coolant: fc.double({ noNaN: true, noDefaultInfinity: true }),
    },
    { requiredKeys: ['vehicleId'] },
  ),
  fc.jsonValue({ maxDepth: 2 }),
);
const readingText = fc.oneof(
  { weight: 8, arbitrary: reading.map((r) => JSON.stringify(r)) },
  { weight: 1, arbitrary: fc.constantFrom('{"vehicleId":', 'nul', '{"a":1}}', '"x', '[1,2') },
);
const unitText = fc.oneof(
  fc.constantFrom('"C"', '"F"', '"K"', '"X"', '5', 'null', '"\\u0046"'),
  fc.jsonValue({ maxDepth: 1 }).map((v) => JSON.stringify(v)),
);
const field = fc.oneof(
  { weight: 3, arbitrary: fc.array(readingText, { maxLength: 6 }).map((rs) => `"readings":[${rs.join(',')}]`) },
  { weight: 2, arbitrary: unitText.map((u) => `"unit":${u}`) },
  {
    weight: 1,
    arbitrary: fc
      .tuple(
        fc.constantFrom('"meta"', '"gateway"', '"read\\u0069ngs"', '"\\u0075nit"', '"readings"'),
        fc.jsonValue({ maxDepth: 2 }),
      )
      .map(([k, v]) => `${k}:${JSON.stringify(v)}`),
  },
);
const body = fc.oneof(
  {
    weight: 6,
    arbitrary: fc
      .tuple(fc.array(field, { maxLength: 4 }), fc.constantFrom('', ' ', '\n  '))
      .map(([fs, ws]) => `${ws}{${ws}${fs.join(`,${ws}`)}${ws}}${ws}`),
  },
  {
    weight: 1,
    arbitrary: fc.constantFrom(
      '[]',
      'null',
      '{',
      '{"readings":[}',
      '{"readings":5}',
      '\uFEFF{"readings":[]}',
      '{"readings":[],}',
      '{"readings":[]} x',
    ),
  },
);

describe('JSON batch bodies', () => {
  it('give the same readings and unit, or the same refusal, parsed whole as scanned while streaming', async () => {
    await fc.assert(
      fc.asyncProperty(body, fc.array(fc.nat({ max: 400 }), { maxLength: 4 }), async (text, cuts) => {
        const whole = await outcome(text, cuts, undefined);
        const scanned = await outcome(text, cuts, 0);
        expect(whole).toEqual(scanned);
      }),
      { numRuns: 2000 },
    );
  });

  it('parses a typical gateway batch whole, unit first, malformed readings marked', async () => {
    const text = '{"unit":"F","readings":[{"vehicleId":"V1","ts":1790000000000,"coolant":190},{"vehicleId":}]}';
    const got = await outcome(text, [], undefined);
    // The second element is not valid JSON, so the whole body goes to the scanner, which marks it.
    expect(got).toEqual({ records: [{ vehicleId: 'V1', ts: 1790000000000, coolant: 190 }, MALFORMED], units: ['F'] });
    const unitAfterReadings = jsonRecords(
      (async function* () {
        yield '{"readings":[{"vehicleId":"V1"}],"unit":"F"}';
      })(),
      () => undefined,
    );
    await expect(unitAfterReadings.next()).rejects.toThrow('put "unit" before "readings"');
  });
});
