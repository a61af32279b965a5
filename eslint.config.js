import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';

const serverImportsClient = { group: ['**/client/**', '@client/*'], message: 'The server never imports client code.' };
const clientImportsServer = { group: ['**/server/**', 'node:*'], message: 'Client code never imports the server or Node built-ins.' };

// Routes parse, call a service and respond; the service checks rights and opens the one transaction.
const routeFiles = ['server/src/modules/**/*.routes.ts'];
const routeTransactionMessage = 'A route handler does not open transactions: call a service function that runs withTenant.';

// Shared server code knows no feature: the database layer, lib and middleware are imported by the
// features (and the demo, which drives them), never the other way round.
const serverImportsFeature = {
  regex: '(^|/)(modules|demo)(/|$)',
  message: 'server/src/db, lib and middleware import no feature: move what both need into server/src/lib, or wire it up in the feature or the demo.',
};
// The client's shared code (lib, components) knows no feature either: the signed-in shell passes in what it needs.
const sharedClientImportsFeature = {
  regex: '(^|/)features(/|$)',
  message: 'Shared client code imports no feature: take what it needs as a prop or argument from the app shell.',
};

// A feature is used by others only through its public index (client/src/features/<name>/index.ts).
const featureDeepImport = {
  regex: '^@client/features/[^/]+/(?!index$).+',
  message: "Import another feature through its public index ('@client/features/<name>'); inside one feature use relative paths.",
};
/** A relative import that climbs out of the feature of a file `depth` levels down in it (1: directly in the feature folder). */
const leavesFeature = (depth) => ({
  regex: `^(\\.\\./){${depth}}`,
  message: "This relative import leaves the feature: use '@client/features/<name>' for another feature's public index, or '@client/…' for shared code.",
});
const FEATURE_DEPTHS = [1, 2, 3, 4, 5, 6, 7, 8];

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', '.data/**', '.tmp/**', 'test-results/**', 'playwright-report/**', 'bench/results/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_' }],
      '@typescript-eslint/no-namespace': 'off',
    },
  },
  {
    files: ['client/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: { ...reactHooks.configs.recommended.rules },
  },
  {
    // shared/ runs in the browser and on the server: no Node built-ins, and it never imports client/ or server/.
    files: ['shared/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', { patterns: ['node:*', '**/client/**', '**/server/**', '@client/*'] }],
    },
  },
  {
    files: ['client/**/*.{ts,tsx}'],
    rules: { 'no-restricted-imports': ['error', { patterns: [clientImportsServer] }] },
  },
  {
    files: ['client/src/lib/**/*.{ts,tsx}', 'client/src/components/**/*.{ts,tsx}'],
    rules: { 'no-restricted-imports': ['error', { patterns: [clientImportsServer, sharedClientImportsFeature] }] },
  },
  // One block per folder depth inside a feature, so "climbs out of the feature" is a plain count of '../'.
  ...FEATURE_DEPTHS.map((depth) => ({
    files: [`client/src/features/*/${'*/'.repeat(depth - 1)}*.{ts,tsx}`],
    rules: { 'no-restricted-imports': ['error', { patterns: [clientImportsServer, featureDeepImport, leavesFeature(depth)] }] },
  })),
  {
    files: ['server/**/*.ts'],
    rules: { 'no-restricted-imports': ['error', { patterns: [serverImportsClient] }] },
  },
  {
    files: ['server/src/db/**/*.ts', 'server/src/lib/**/*.ts', 'server/src/middleware/**/*.ts'],
    rules: { 'no-restricted-imports': ['error', { patterns: [serverImportsClient, serverImportsFeature] }] },
  },
  {
    files: routeFiles,
    rules: {
      'no-restricted-imports': ['error', { patterns: [serverImportsClient, { regex: '(^|/)db(/|$)', message: routeTransactionMessage }] }],
      'no-restricted-syntax': [
        'error',
        { selector: "CallExpression[callee.name='withTenant'], CallExpression[callee.property.name='withTenant']", message: routeTransactionMessage },
        { selector: "CallExpression[callee.property.name='transaction']", message: routeTransactionMessage },
      ],
    },
  },
);
