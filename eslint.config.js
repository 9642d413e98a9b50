// Lint gate: typescript-eslint's recommended rules plus the layer boundaries of the architecture.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

const cliOnlyFromCli = {
  group: ['**/cli/*', '**/cli/**'],
  message: 'only src/cli may import src/cli (the CLI is the top layer)',
};

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'bench-results/**', '**/*.mjs', '**/*.cjs'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    rules: {
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' },
      ],
    },
  },
  {
    // Type-aware rules that catch real bugs in an event-driven tool (a promise nobody awaits loses its error).
    files: ['src/**/*.ts', 'bench/**/*.ts'],
    languageOptions: { parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname } },
    rules: {
      '@typescript-eslint/no-floating-promises': 'error',
      '@typescript-eslint/no-misused-promises': ['error', { checksVoidReturn: false }],
      '@typescript-eslint/await-thenable': 'error',
    },
  },
  {
    // A bare NaN or Infinity is a global variable: in a branch V8 has never run it cannot fold it to a number, and
    // the other branch's number is then boxed (a heap allocation) at every frame. Number.NaN folds either way.
    files: ['src/**/*.ts'],
    rules: {
      'no-restricted-globals': [
        'error',
        { name: 'NaN', message: 'use Number.NaN (see eslint.config.js: a bare NaN costs an allocation per frame)' },
        { name: 'Infinity', message: 'use Number.POSITIVE_INFINITY (a bare Infinity costs an allocation per frame)' },
      ],
    },
  },
  {
    // Tests read terminal output: escape sequences in regular expressions are the point there.
    files: ['test/**/*.ts'],
    rules: { 'no-control-regex': 'off' },
  },
  {
    files: ['src/**/*.ts'],
    ignores: ['src/cli/**'],
    rules: { 'no-restricted-imports': ['error', { patterns: [cliOnlyFromCli] }] },
  },
  {
    files: ['src/core/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['node:*'], message: 'src/core is pure: no node:* imports' },
            {
              group: ['**/sources/*', '**/recording/*', '**/dashboard/*', '**/serve/*'],
              message: 'src/core imports nothing outward',
            },
            cliOnlyFromCli,
          ],
        },
      ],
    },
  },
);
