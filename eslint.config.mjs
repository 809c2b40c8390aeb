// ESLint flat config: typescript-eslint's recommended rules everywhere, React's hook rules in the
// app, and two project rules (see ./eslint/rules.mjs): no type assertion to a contract type, and no
// `expect(getBy…(…)).toBeTruthy()` (getBy throws before the assertion runs, so it cannot fail).
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import globals from 'globals';
import { emberlot, contractTypeNames } from './eslint/rules.mjs';

const contracts = contractTypeNames(import.meta.dirname);

export default tseslint.config(
  {
    ignores: [
      'node_modules/**',
      'dist/**',
      'web-build/**',
      'coverage/**',
      '.data/**',
      '.expo/**',
      'uploads/**',
      'bench/results/**',
      'tests/e2e/screenshots/**',
      'expo-env.d.ts',
    ],
  },
  { linterOptions: { reportUnusedDisableDirectives: 'error' } },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.{ts,tsx,mjs,js}'],
    languageOptions: { globals: { ...globals.node } },
    plugins: { emberlot },
    rules: {
      'emberlot/no-contract-cast': ['error', { types: contracts }],
      // Off on purpose: the project matches NUL and control characters deliberately (input that
      // PostgreSQL cannot store is refused at the edge; serials with line breaks are row errors).
      'no-control-regex': 'off',
      // `_`-prefixed names are deliberately unused (a positional parameter, a rest sibling).
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrorsIgnorePattern: '^_', ignoreRestSiblings: true },
      ],
    },
  },
  {
    // CommonJS config files.
    files: ['**/*.js'],
    languageOptions: { sourceType: 'commonjs' },
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
  {
    files: ['app/**/*.tsx', 'components/**/*.{ts,tsx}'],
    languageOptions: { globals: { ...globals.browser } },
    plugins: { 'react-hooks': reactHooks },
    rules: {
      'react-hooks/rules-of-hooks': 'error',
      'react-hooks/exhaustive-deps': 'error',
    },
  },
  {
    files: ['tests/**/*.{ts,tsx}'],
    languageOptions: { globals: { ...globals.jest } },
    rules: { 'emberlot/no-unfailable-getby': 'error' },
  },
  {
    // jest.mock factories are hoisted above the imports and must require() what they return;
    // setWidth spies on the react-native module object itself.
    files: ['tests/app/**/*.tsx'],
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
);
