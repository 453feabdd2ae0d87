import { parseArgs } from 'node:util';
import { evaluateFleets } from './field-evaluation.js';
import { formatScoreTable } from './score-table.js';
import { planForSeed, SEED_RANGES, type SeedRange } from './seed-ranges.js';
import { processServiceFactory } from './service-process.js';

const HELP = `usage: npm run evaluate [-- options]

Measures detection as production would see it. Simulates randomised fleets (the field scenario:
every nuisance of field-variation.ts on), starts the service as npm start does for each (a fresh
embedded database, or a fresh database on --database-url), posts each fleet's readings through
the HTTP API in fleet-wide time order while its worker analyses, collects every finding a planner
could have seen, then posts the same data again and analyses it once. Prints both beside an
on-board-monitor style baseline (two-trip thermostat monitor, over-temperature, sensor circuit).

options:
  --fleets N          fleets to run (default 2; the full run is --fleets 8)
  --vehicles N        vehicles per fleet (default 10)
  --days D            days per fleet (default 28)
  --seeds RANGE       reporting (held out, default) or tuning (${SEED_RANGES.tuning.first}–${SEED_RANGES.tuning.last})
  --first-seed S      first seed, inside the range (default its first)
  --analyse-every H   hours of data between analyses the stream waits for (default 6)
  --database-url URL  a PostgreSQL server (default: embedded PGlite in a temporary directory)
  --no-one-pass       skip the one-analysis-after-all-arrived pass
  --json              print the scores as JSON instead of the table
  --help
`;

function whole(text: string | undefined, name: string, min: number): number {
  const n = Number(text);
  if (!Number.isInteger(n) || n < min) throw new RangeError(`--${name} must be a whole number ≥ ${min}, got '${text}'`);
  return n;
}

export async function run(argv: string[]): Promise<number> {
  const { values } = parseArgs({
    args: argv,
    options: {
      fleets: { type: 'string', default: '2' },
      vehicles: { type: 'string', default: '10' },
      days: { type: 'string', default: '28' },
      seeds: { type: 'string', default: 'reporting' },
      'first-seed': { type: 'string' },
      'analyse-every': { type: 'string', default: '6' },
      'database-url': { type: 'string' },
      'no-one-pass': { type: 'boolean', default: false },
      json: { type: 'boolean', default: false },
      help: { type: 'boolean', short: 'h' },
    },
  });
  if (values.help) {
    process.stdout.write(HELP);
    return 0;
  }
  let plans;
  let analyseEveryH: number;
  let rangeName: SeedRange;
  try {
    if (values.seeds !== 'reporting' && values.seeds !== 'tuning')
      throw new RangeError(`--seeds must be reporting or tuning, got '${values.seeds}'`);
    rangeName = values.seeds;
    const range = SEED_RANGES[rangeName];
    const fleets = whole(values.fleets, 'fleets', 1);
    const size = { vehicles: whole(values.vehicles, 'vehicles', 2), days: whole(values.days, 'days', 14) };
    const first = values['first-seed'] === undefined ? range.first : whole(values['first-seed'], 'first-seed', 0);
    if (first < range.first || first + fleets - 1 > range.last)
      throw new RangeError(
        `seeds ${first}–${first + fleets - 1} leave the ${rangeName} range ${range.first}–${range.last}`,
      );
    analyseEveryH = whole(values['analyse-every'], 'analyse-every', 1);
    plans = Array.from({ length: fleets }, (_, i) => planForSeed(first + i, size));
  } catch (err) {
    process.stderr.write(`evaluate: ${err instanceof Error ? err.message : String(err)}\n`);
    return 2;
  }
  const databaseUrl = values['database-url'];
  const say = (line: string) => process.stderr.write(`${line}\n`);
  say(
    `evaluate: ${plans.length} ${rangeName} fleets (seeds ${plans[0]!.seed}–${plans[plans.length - 1]!.seed}), ${plans[0]!.fleet.length} vehicles × ${plans[0]!.days} days each, on ${databaseUrl ? 'a PostgreSQL server' : 'embedded PGlite'}`,
  );
  const result = await evaluateFleets({
    plans,
    services: processServiceFactory(databaseUrl),
    analyseEveryH,
    onePass: !values['no-one-pass'],
    say,
  });
  if (values.json) {
    process.stdout.write(
      `${JSON.stringify({ seeds: rangeName, analyseEveryH, database: databaseUrl ? 'postgres' : 'pglite', ...result }, null, 2)}\n`,
    );
    return 0;
  }
  const readings = result.fleets.reduce((s, f) => s + f.readings, 0);
  process.stdout.write(
    `\nField evaluation: ${plans.length} ${rangeName} fleets, seeds ${plans[0]!.seed}–${plans[plans.length - 1]!.seed}, ` +
      `${plans[0]!.fleet.length} vehicles × ${plans[0]!.days} days each, ${readings.toLocaleString('en-US')} readings; analysis awaited every ${analyseEveryH} h of data\n\n`,
  );
  process.stdout.write(
    `${formatScoreTable([
      { title: 'thermocline, streamed', score: result.streamed },
      { title: 'thermocline, one pass', score: result.onePass },
      { title: 'on-board-monitor rules', score: result.baseline },
    ])}\n\nrun time ${(result.seconds / 60).toFixed(1)} min\n`,
  );
  return 0;
}
