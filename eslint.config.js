import { readdirSync } from 'node:fs';
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';

/**
 * One lint run over every workspace (`npm run lint`, also in .ci/run). Import cycles are checked by
 * tests/src/architecture/import-cycles.test.ts (madge), not here: the type-aware walk is too slow
 * for an editor.
 */

/** The console's features: each may use app-wide code (components, lib, hooks) but no other feature and not the app shell. */
const FEATURES = readdirSync(new URL('./admin-ui/src/features', import.meta.url), { withFileTypes: true })
  .filter((d) => d.isDirectory())
  .map((d) => d.name);

const featureBoundary = (feature) => ({
  files: [`admin-ui/src/features/${feature}/**/*.{ts,tsx}`],
  rules: {
    'no-restricted-imports': [
      'error',
      {
        patterns: [
          { regex: '^@/app(/|$)', message: 'Features do not import the app shell (app → features → shared).' },
          { regex: `^@/features/(?!${feature}/)`, message: 'A feature does not import another feature; move what both need to components/, lib/ or hooks/.' },
          {
            regex: '^\\.\\./\\.\\./',
            message: 'Reach code outside this feature through @/… (components, lib, hooks), never by climbing out of the feature folder.',
          },
        ],
      },
    ],
  },
});

export default tseslint.config(
  { ignores: ['**/node_modules/**', '**/dist/**', '.data/**', '.tmp/**', 'coverage/**', 'artefacts/**', 'tests/reference/**/*.py', 'tests/.results/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/no-explicit-any': 'warn',
    },
  },

  // Environment globals per workspace: Node everywhere but the console, which runs in the browser.
  { files: ['**/*.{js,mjs,cjs,ts,tsx}'], ignores: ['admin-ui/src/**'], languageOptions: { globals: globals.node } },
  { files: ['admin-ui/src/**/*.{ts,tsx}'], languageOptions: { globals: globals.browser } },
  // TypeScript replaces no-undef, so name the globals that exist only on the other side.
  {
    files: ['admin-ui/src/**/*.{ts,tsx}'],
    ignores: ['admin-ui/src/**/*.test.{ts,tsx}', 'admin-ui/src/test/**'],
    rules: {
      'no-restricted-globals': [
        'error',
        ...['process', 'Buffer', 'global', 'require', '__dirname', '__filename', 'setImmediate'].map((name) => ({
          name,
          message: 'The console runs in the browser: no Node globals.',
        })),
      ],
    },
  },
  {
    files: ['{gateway,shared,simulator,mock-ehr}/src/**/*.ts'],
    rules: {
      'no-restricted-globals': [
        'error',
        ...['window', 'document', 'localStorage', 'sessionStorage', 'navigator'].map((name) => ({
          name,
          message: 'This code runs in Node: no browser globals.',
        })),
      ],
    },
  },
  // The console's tests run under vitest in Node with a DOM (happy-dom).
  { files: ['admin-ui/src/**/*.test.{ts,tsx}', 'admin-ui/src/test/**'], languageOptions: { globals: { ...globals.browser, ...globals.node } } },
  // End-to-end tests hand code to the browser (page.evaluate) that runs there.
  { files: ['tests/src/e2e/**', 'tests/src/support/browser.ts'], languageOptions: { globals: { ...globals.node, ...globals.browser } } },

  // React: the rules of hooks (and the React Compiler's checks) for the console.
  { files: ['admin-ui/src/**/*.{ts,tsx}'], ...reactHooks.configs.flat['recommended-latest'] },
  {
    files: ['admin-ui/src/**/*.{ts,tsx}'],
    rules: { 'react-hooks/set-state-in-effect': 'error', 'react-hooks/refs': 'error', 'react-hooks/purity': 'error' },
  },

  // Console layers: app → features → shared (components, lib, hooks); shared code imports neither.
  ...FEATURES.map(featureBoundary),
  {
    files: ['admin-ui/src/{components,lib,hooks}/**/*.{ts,tsx}'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { regex: '^(@/|(\\.\\./)+)(app|features)(/|$)', message: 'Shared console code (components, lib, hooks) imports no feature and not the app shell.' },
          ],
        },
      ],
    },
  },
);
