// One lint configuration for the monorepo. Besides the usual rule sets it encodes the architecture in
// DEVELOPERS.md as import boundaries, so `npm test` fails when a layer reaches where it must not.
import { readdirSync } from 'node:fs';
import js from '@eslint/js';
import pluginQuery from '@tanstack/eslint-plugin-query';
import jsxA11y from 'eslint-plugin-jsx-a11y';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';
import tseslint from 'typescript-eslint';

const webFeatures = readdirSync(new URL('./apps/web/src/features', import.meta.url), { withFileTypes: true })
  .filter((entry) => entry.isDirectory())
  .map((entry) => entry.name);

/** `no-restricted-imports` patterns by regular expression (checked on the import's text). */
const forbid = (...patterns) => ({
  'no-restricted-imports': ['error', { patterns: patterns.map(([regex, message]) => ({ regex, message })) }],
});

// A path that climbs into another workspace (`../../apps/…`, `…/packages/…`) is caught beside the package name.
const anyApp = ['^@evenhand/(api|web)(/|$)|(^|/)apps/', 'Shared packages import neither app.'];
const webApp = ['^@evenhand/web(/|$)|(^|/)web/src/|^@/', 'The API never imports the web app: they meet over HTTP only.'];

export default tseslint.config(
  {
    ignores: [
      '**/dist/**',
      '**/node_modules/**',
      '**/.data/**',
      'apps/web/playwright-report/**',
      'apps/web/test-results/**',
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node } },
    linterOptions: { reportUnusedDisableDirectives: 'error' },
    rules: {
      // `_name` marks a parameter or binding kept for its position.
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none', ignoreRestSiblings: true },
      ],
    },
  },

  // ── The web app ─────────────────────────────────────────────────────────────────────────────
  {
    files: ['apps/web/**/*.{ts,tsx}'],
    languageOptions: { globals: { ...globals.browser } },
    plugins: { 'react-hooks': reactHooks },
    rules: {
      'react-hooks/rules-of-hooks': 'error',
      'react-hooks/exhaustive-deps': 'error',
    },
  },
  { files: ['apps/web/src/**/*.tsx'], ...jsxA11y.flatConfigs.recommended },
  {
    files: ['apps/web/src/**/*.tsx'],
    rules: {
      // A named region that scrolls sideways must take focus so the keyboard can scroll it (axe: scrollable-region-focusable).
      'jsx-a11y/no-noninteractive-tabindex': ['error', { tags: [], roles: ['tabpanel', 'region'] }],
    },
  },
  ...pluginQuery.configs['flat/recommended'].map((config) => ({ ...config, files: ['apps/web/src/**/*.{ts,tsx}'] })),

  // ── Import boundaries (DEVELOPERS.md, "Layout" and "Import boundaries") ────────────────────────
  {
    files: ['packages/stats/**/*.ts'],
    rules: forbid(['^@evenhand/|(^|/)(apps|packages)/|^@/', 'The statistics engine is pure: it imports nothing of ours.']),
  },
  { files: ['packages/entities/**/*.ts'], rules: forbid(anyApp) },
  { files: ['apps/api/**/*.ts'], rules: forbid(webApp) },

  // ── Data access (DEVELOPERS.md, "Data access") ─────────────────────────────────────────────────
  // A service runs SQL only by name: the statement's text lives in its resource's queries.ts, where a reader finds every
  // statement a table sees. Migrations, the seed, the job queue's and change feed's plumbing and tests write their own.
  {
    files: ['apps/api/src/**/*.ts'],
    ignores: ['apps/api/src/**/queries.ts', 'apps/api/src/**/*.test.ts', 'apps/api/src/db/**', 'apps/api/src/seed/**', 'apps/api/src/jobs/**'],
    rules: {
      'no-restricted-syntax': [
        'error',
        {
          selector: "CallExpression[callee.property.name='query'][arguments.0.type=/^(Literal|TemplateLiteral)$/]",
          message: "Write the SQL in this resource's queries.ts and run it by name (DEVELOPERS.md, \"Data access\").",
        },
      ],
    },
  },
  {
    files: ['apps/web/src/lib/**/*.{ts,tsx}', 'apps/web/src/components/**/*.{ts,tsx}'],
    rules: forbid(
      ['^@/(features|app)/|^\\.\\./(\\.\\./)*(features|app)/', 'lib/ and components/ serve every feature and import none (nor the app shell).'],
      ['^@evenhand/(api|web)(/|$)|(^|/)apps/', 'The web app reaches the API over HTTP only.'],
    ),
  },
  {
    files: ['apps/web/src/app/**/*.{ts,tsx}', 'apps/web/src/*.{ts,tsx}', 'apps/web/e2e/**/*.ts'],
    rules: forbid(
      ['^@/features/[^/]+/(?!(api|routes)$)', 'Outside a feature, use only its public entry: api.ts or routes.tsx.'],
      ['^@evenhand/api(/|$)|(^|/)apps/api/', 'The web app reaches the API over HTTP only.'],
    ),
  },
  // A feature reaches into its own folder freely, and into another feature only through that feature's
  // public entry. Relative paths may not climb out of a feature: cross with `@/features/<name>/api`.
  ...webFeatures.map((feature) => ({
    files: [`apps/web/src/features/${feature}/**/*.{ts,tsx}`],
    rules: forbid(
      [
        `^@/features/(?!${feature}/)[^/]+/(?!(api|routes)$)`,
        `Another feature is reached only through its public entry (@/features/<name>/api or /routes), not from ${feature}'s insides.`,
      ],
      ['^\\.\\./\\.\\./', 'Leave a feature folder with an @/ path (@/lib, @/components, @/features/<name>/api).'],
      ['^@/app/(?!query-client$)', 'Features do not import the app shell (only its one query client); tests may.'],
      ['^@evenhand/api(/|$)|(^|/)apps/api/', 'The web app reaches the API over HTTP only.'],
    ),
  })),
  // A feature's tests may mount the whole app shell (router, providers) around it.
  ...webFeatures.map((feature) => ({
    files: [`apps/web/src/features/${feature}/**/*.test.{ts,tsx}`],
    rules: forbid(
      [`^@/features/(?!${feature}/)[^/]+/(?!(api|routes)$)`, 'Another feature is reached only through its public entry.'],
      ['^\\.\\./\\.\\./', 'Leave a feature folder with an @/ path.'],
    ),
  })),
);
