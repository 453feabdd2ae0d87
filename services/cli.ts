/**
 * The one entry point: `thermocline <command> [options]`.
 *
 * Each command lives in its own module exporting `run(argv): Promise<number>` (the exit code),
 * loaded lazily so that `thermocline simulate` does not pay for fastify or the database driver.
 */
type CommandModule = { run: (argv: string[]) => Promise<number> };

const COMMANDS: Record<string, { summary: string; load: () => Promise<CommandModule> }> = {
  serve: {
    summary: 'run the HTTP API (with an in-process analysis worker)',
    load: () => import('./processes/serve-command.js'),
  },
  worker: { summary: 'run a standalone analysis worker', load: () => import('./processes/worker-command.js') },
  migrate: { summary: 'apply database migrations and exit', load: () => import('./db/migrate-command.js') },
  keys: { summary: 'create, list or revoke API keys', load: () => import('./api/keys-command.js') },
  simulate: {
    summary: 'simulate a fleet and write readings.ndjson, vehicles.json, truth.json',
    load: () => import('./simulator/simulate-command.js'),
  },
  demo: {
    summary: 'simulate a demo fleet, ingest it over HTTP, analyse it, report',
    load: () => import('./demo/demo-command.js'),
  },
  report: { summary: 'build the weekly maintenance report', load: () => import('./report/report-command.js') },
  evaluate: {
    summary: 'score detection on randomised fleets streamed through the API, beside a baseline',
    load: () => import('./evaluation/evaluate-command.js'),
  },
};

function usage(): string {
  const lines = Object.entries(COMMANDS).map(([name, c]) => `  ${name.padEnd(10)} ${c.summary}`);
  return `usage: thermocline <command> [options]\n\ncommands:\n${lines.join('\n')}\n\n'thermocline <command> --help' shows a command's options.\n`;
}

async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    process.stdout.write(usage());
    return name ? 0 : 2;
  }
  const command = COMMANDS[name];
  if (!command) {
    process.stderr.write(`thermocline: unknown command '${name}'\n\n${usage()}`);
    return 2;
  }
  const mod = await command.load();
  return mod.run(rest);
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (err: unknown) => {
    process.stderr.write(`thermocline: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
    process.exitCode = 1;
  },
);
