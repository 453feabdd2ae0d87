// ESLint (flat config): the recommended rules of ESLint and typescript-eslint, and the allowed
// direction of imports between the folders of services/ (DEVELOPERS.md, "Architecture").
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

/** Folders of services/ and the folders each may not import from. */
const FORBIDDEN_IMPORTS = {
  analysis: ['api', 'db', 'worker', 'report', 'processes', 'simulator', 'evaluation', 'demo', 'bus-decoding'],
  'bus-decoding': ['api', 'db', 'worker', 'report', 'processes', 'simulator', 'evaluation', 'demo', 'analysis'],
  time: ['api', 'db', 'worker', 'report', 'processes', 'simulator', 'evaluation', 'demo', 'analysis', 'bus-decoding'],
  simulator: ['api', 'db', 'worker', 'report', 'processes', 'evaluation', 'demo', 'analysis'],
  db: ['api', 'worker', 'report', 'processes', 'simulator', 'evaluation', 'demo'],
  worker: ['api', 'report', 'processes', 'simulator', 'evaluation', 'demo'],
  report: ['api', 'worker', 'processes', 'simulator', 'evaluation', 'demo'],
  api: ['processes', 'simulator', 'evaluation', 'demo'],
  processes: ['simulator', 'evaluation', 'demo'],
};

export default tseslint.config(
  { ignores: ['node_modules/**', 'coverage/**', '**/*.d.ts', 'bin/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    rules: {
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' },
      ],
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'inline-type-imports' }],
      eqeqeq: ['error', 'always', { null: 'ignore' }],
      'no-console': 'error',
    },
  },
  ...Object.entries(FORBIDDEN_IMPORTS).map(([folder, forbidden]) => ({
    files: [`services/${folder}/**/*.ts`],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            {
              group: forbidden.map((f) => `**/${f}/**`),
              message: `services/${folder}/ may not import from ${forbidden.join(', ')} (DEVELOPERS.md, "Architecture")`,
            },
          ],
        },
      ],
    },
  })),
  {
    // Migrations and the migration/partition code work on the schema as it is at their point in
    // history, not on the current `Database` type: Kysely<any> is Kysely's own convention there.
    files: ['migrations/**/*.ts', 'services/db/migrator.ts', 'services/db/partitions.ts'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
  {
    // The web view's own modules run in the browser (plain ES modules, no build step).
    files: ['services/api/web/assets/**/*.js'],
    languageOptions: {
      sourceType: 'module',
      globals: Object.fromEntries(
        [
          'window',
          'document',
          'location',
          'history',
          'fetch',
          'URLSearchParams',
          'FormData',
          'Node',
          'Element',
          'ResizeObserver',
          'AbortController',
          'setTimeout',
          'clearTimeout',
        ].map((name) => [name, 'readonly']),
      ),
    },
  },
  {
    files: ['test/**/*.ts', 'bench/**/*.ts'],
    rules: { '@typescript-eslint/no-non-null-assertion': 'off', 'no-console': 'off' },
  },
);
