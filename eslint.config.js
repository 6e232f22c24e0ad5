// Lint rules that keep the layout honest: the client never imports the server, the server
// never imports the client, and shared/ imports neither.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import importX from 'eslint-plugin-import-x';
import globals from 'globals';
import { createTypeScriptImportResolver } from 'eslint-import-resolver-typescript';

export default tseslint.config(
  { ignores: ['dist/', 'node_modules/', '.data/', 'media/', 'tests/artifacts/'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.{ts,tsx,js,mjs}'],
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    plugins: { 'import-x': importX },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      'import-x/no-restricted-paths': [
        'error',
        {
          zones: [
            { target: './src', from: './server', message: 'The client talks to the server over HTTP only.' },
            { target: './server', from: './src', message: 'The server never imports client code.' },
            { target: './shared', from: './server', message: 'shared/ is isomorphic: no server imports.' },
            { target: './shared', from: './src', message: 'shared/ is isomorphic: no client imports.' },
          ],
        },
      ],
    },
    settings: { 'import-x/resolver-next': [createTypeScriptImportResolver({ project: './tsconfig.json' })] },
  },
);
