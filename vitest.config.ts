import { defineConfig } from 'vitest/config';

// Database and API suites run twice: on a real PostgreSQL server and on the embedded PGlite.
const DB_SUITES = [
  'test/api/**/*.test.ts',
  'test/db/**/*.test.ts',
  'test/worker/**/*.test.ts',
  'test/report/**/*.test.ts',
  'test/demo/**/*.test.ts',
  'test/evaluation/**/*.e2e.test.ts',
];

export default defineConfig({
  test: {
    // Vitest's default is one worker fewer than the cores: one on a 2-core machine. Most files wait
    // on PostgreSQL, PGlite's WebAssembly or Chromium, so two workers use both cores.
    maxWorkers: 2,
    testTimeout: 60_000,
    hookTimeout: 120_000,
    projects: [
      {
        test: {
          name: 'pure',
          include: [
            'test/analysis/**/*.test.ts',
            'test/bus-decoding/**/*.test.ts',
            'test/reference/**/*.test.ts',
            'test/simulator/**/*.test.ts',
            'test/evaluation/**/*.test.ts',
            'test/config.test.ts',
          ],
          // The field evaluation's API run needs a database: it is in DB_SUITES.
          exclude: ['**/node_modules/**', 'test/evaluation/**/*.e2e.test.ts'],
          testTimeout: 120_000,
        },
      },
      {
        test: {
          name: 'postgres',
          include: DB_SUITES,
          env: { TEST_DATABASE: 'postgres' },
          globalSetup: ['test/helpers/postgres-global-setup.ts'],
          testTimeout: 120_000,
          hookTimeout: 120_000,
        },
      },
      {
        test: {
          name: 'pglite',
          include: DB_SUITES,
          env: { TEST_DATABASE: 'pglite' },
          testTimeout: 120_000,
          hookTimeout: 120_000,
        },
      },
    ],
  },
});
