// Lint, and the dependency rules of the layout: sim/ imports nothing of ours but
// itself and nothing of React, the DOM, Node or the database; src/ never imports
// server/; shared/ imports neither; no import cycles anywhere. Inside server/,
// http/ and db/ import no domain folder, and route files make no queries.
import js from '@eslint/js';
import { createTypeScriptImportResolver } from 'eslint-import-resolver-typescript';
import importX from 'eslint-plugin-import-x';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';
import tseslint from 'typescript-eslint';

const nodeOrDb = ['node:*', 'fs', 'path', 'os', 'crypto', 'child_process', 'http', 'pg', 'drizzle-orm', 'drizzle-orm/*', 'express', 'express-*'];

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'server/db/migrations/**', 'screenshots/**', '.data/**', '.test-data/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.{ts,tsx}'],
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    plugins: { 'import-x': importX, 'react-hooks': reactHooks },
    settings: { 'import-x/resolver-next': [createTypeScriptImportResolver({ project: './tsconfig.json' })] },
    rules: {
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'separate-type-imports' }],
      '@typescript-eslint/no-explicit-any': 'error',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      'import-x/no-cycle': ['error', { maxDepth: 12 }],
      'import-x/no-restricted-paths': [
        'error',
        {
          zones: [
            { target: './sim', from: ['./src', './server', './shared', './tests', './scripts'], message: 'sim/ imports nothing of ours but itself.' },
            { target: './src', from: './server', message: 'The client never imports server code.' },
            { target: './shared', from: ['./src', './server'], message: 'shared/ is imported by client and server, never the reverse.' },
            {
              target: ['./server/http', './server/db'],
              from: './server',
              except: ['./http', './db', './env.ts', './context.ts', './background.ts'],
              message: 'http/ and db/ are the bottom of the server: they import no domain folder, and no app or route list.',
            },
            {
              target: './server',
              from: './server/lti/local-platform.ts',
              message: 'The local LTI platform is for development and tests: scripts/ and tests/ start it, the server never imports it.',
            },
          ],
        },
      ],
      'react-hooks/rules-of-hooks': 'error',
      'react-hooks/exhaustive-deps': 'error',
    },
  },
  {
    files: ['sim/**/*.ts'],
    languageOptions: { globals: {} },
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['react', 'react-*', 'react/*', 'zustand', 'd3-*'], message: 'sim/ is free of React and the view.' },
            { group: nodeOrDb, message: 'sim/ is free of Node and the database.' },
            { group: ['zod'], message: 'sim/ has no dependencies; validation lives in shared/.' },
          ],
        },
      ],
      'no-restricted-globals': ['error', 'window', 'document', 'process', 'Date', 'performance', 'setTimeout', 'setInterval', 'requestAnimationFrame'],
      'no-restricted-properties': ['error', { object: 'Math', property: 'random', message: 'Use the seeded generator in the state.' }],
    },
  },
  {
    // A domain's route file parses, checks access, calls its domain and answers: its queries live in the domain.
    files: ['server/**/routes.ts', 'server/**/*-routes.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        { patterns: [{ group: ['drizzle-orm', 'drizzle-orm/*', '**/db/schema.ts', '**/tables.ts'], message: 'Route files make no queries: call the domain.' }] },
      ],
    },
  },
  {
    files: ['src/**/*.{ts,tsx}'],
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ group: nodeOrDb, message: 'The client runs in the browser.' }] }],
    },
  },
);
