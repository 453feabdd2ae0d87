import { existsSync } from 'node:fs';

/** The flags the CI's Debian chromium runs with (no sandbox as root, nothing fetched in the background). */
export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--no-first-run',
];

/**
 * Debian's chromium (`.ci/run` installs it; `apt-get install chromium` elsewhere), or
 * CHROMIUM_PATH. Without one the browser checks are skipped with a notice, except in CI,
 * where they fail.
 */
export const CHROMIUM = [process.env.CHROMIUM_PATH, '/usr/bin/chromium', '/usr/bin/chromium-browser'].find(
  (p) => p && existsSync(p),
);

/** True when the browser checks of `testFile` are to be skipped (no Chromium, not in CI); says so on stderr. */
export function skipBrowserChecks(testFile: string): boolean {
  if (CHROMIUM || process.env.CI) return false;
  process.stderr.write(
    `${testFile}: no Chromium found (apt-get install chromium, or set CHROMIUM_PATH): the browser checks are skipped\n`,
  );
  return true;
}

/** For the browser suite's beforeAll: the Chromium path, or an error saying CI needs it. */
export function requireChromium(what: string): string {
  if (!CHROMIUM)
    throw new Error(`CI needs Chromium for the browser test of ${what}: /usr/bin/chromium not found (see .ci/run)`);
  return CHROMIUM;
}
