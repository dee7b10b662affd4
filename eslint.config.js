import fs from 'node:fs';
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import { importX, createNodeResolver } from 'eslint-plugin-import-x';
import { createTypeScriptImportResolver } from 'eslint-import-resolver-typescript';
import jsxA11y from 'eslint-plugin-jsx-a11y';
import globals from 'globals';

/**
 * The import boundaries of HOUSE-STYLE.md, as import-x `no-restricted-paths` zones (a zone forbids
 * files under `target` to import files under `from`), plus `no-cycle` and restricted packages.
 */
const features = fs.readdirSync('src/features', { withFileTypes: true }).filter((d) => d.isDirectory()).map((d) => d.name);

const zones = [
  { target: './shared', from: ['./server', './src', './simulators', './tests', './bench', './perf'], message: 'shared/ imports nothing of ours outside shared/.' },
  { target: './src', from: ['./server', './simulators', './tests'], message: 'src/ never imports server/, simulators/ or tests/.' },
  { target: './server', from: './src', message: 'server/ never imports src/.' },
  { target: ['./src/components', './src/lib', './src/stores'], from: './src/features', message: 'components/, lib/ and stores/ do not import features.' },
  ...features.map((f) => ({ target: `./src/features/${f}`, from: './src/features', except: [`./${f}`], message: 'Features do not import each other.' })),
  { target: ['./server/http', './server/ws'], from: './server/db', message: 'HTTP and WS reach data only through services.' },
  { target: './server/bench', from: ['./server/http', './server/ws', './server/db'], message: 'bench/ never touches HTTP, WS or the db.' },
  { target: ['./server/services', './server/http', './server/ws'], from: './simulators', message: 'Only the composition root (server/boot.ts) wires the simulators in.' },
];

const SERIALPORT = { group: ['serialport', '@serialport/*'], message: 'Only server/bench/transport imports serialport.' };
const DRIZZLE = { group: ['drizzle-orm', 'drizzle-orm/*'], message: 'Only server/db (repositories, schema, client) imports drizzle.' };
const restrict = (...patterns) => ({ 'no-restricted-imports': ['error', { patterns }] });

export default tseslint.config(
  { ignores: ['dist', 'node_modules', 'data', 'drizzle', 'coverage', '.tmp'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.{ts,tsx,js}'],
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    plugins: { 'import-x': importX },
    settings: {
      'import-x/extensions': ['.ts', '.tsx', '.js'],
      'import-x/parsers': { '@typescript-eslint/parser': ['.ts', '.tsx'] },
      'import-x/resolver-next': [createTypeScriptImportResolver({ project: ['tsconfig.app.json', 'tsconfig.node.json'], noWarnOnMultipleProjects: true }), createNodeResolver()],
    },
    rules: {
      'import-x/no-restricted-paths': ['error', { zones }],
      'import-x/no-cycle': ['error', { ignoreExternal: true }],
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/consistent-type-imports': 'error',
    },
  },
  { files: ['**/*.{ts,tsx,js}'], rules: restrict(SERIALPORT, DRIZZLE) },
  { files: ['server/db/**'], rules: restrict(SERIALPORT) },
  { files: ['server/bench/transport/**', 'simulators/**', 'tests/**', 'bench/**', 'perf/**'], rules: restrict(DRIZZLE) },
  {
    // Promises that nobody awaits or handles lose their errors: type-aware, so only where a tsconfig covers the file.
    files: ['server/**/*.ts', 'shared/**/*.ts', 'simulators/**/*.ts', 'src/**/*.{ts,tsx}'],
    languageOptions: { parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname } },
    rules: { '@typescript-eslint/no-floating-promises': 'error', '@typescript-eslint/no-misused-promises': ['error', { checksVoidReturn: { attributes: false } }] },
  },
  {
    files: ['src/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: { 'react-hooks/rules-of-hooks': 'error', 'react-hooks/exhaustive-deps': 'warn' },
  },
  {
    files: ['src/**/*.tsx'],
    ...jsxA11y.flatConfigs.recommended,
    rules: { ...jsxA11y.flatConfigs.recommended.rules, 'jsx-a11y/aria-role': ['error', { ignoreNonDOM: true }] },
  },
);
