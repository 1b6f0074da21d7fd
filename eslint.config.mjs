// Lint configuration (ESLint flat config). Formatting is prettier's job (.prettierrc.json); the
// rules here are the ones that find bugs: promises nobody awaits, values that are not what their
// type says, dead code. TypeScript files in a project (tsconfig) get the type-aware rules;
// plain scripts (.mjs/.js/.cjs) and root config files get the rules that need no types.
import js from '@eslint/js';
import globals from 'globals';
import tseslint from 'typescript-eslint';

const TYPED = ['server/src/**/*.ts', 'shared-math/src/**/*.ts', 'client/src/**/*.ts', 'test/**/*.ts', 'bench/**/*.ts'];

export default tseslint.config(
  {
    ignores: [
      '**/node_modules/**',
      '**/dist/**',
      'build/**',
      'out/**',
      'coverage/**',
      'examples/**',
      'test/**/fixtures/**',
      'test/e2e/artifacts/**',
      'bench/corpus/**',
      'bench/corpus-rss/**',
      'bench/monorepo/**',
      '.vscode-test/**',
      'client/media/plot.js*',
      'client/docs/**',
    ],
  },
  { linterOptions: { reportUnusedDisableDirectives: 'error' } },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.{js,mjs,cjs,ts}'],
    languageOptions: { ecmaVersion: 2022, sourceType: 'module', globals: { ...globals.node } },
    rules: {
      // Unused names are errors, except ones that say so with a leading underscore, rest
      // siblings used to drop a key, and caught errors that are deliberately ignored.
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none', ignoreRestSiblings: true },
      ],
      eqeqeq: ['error', 'always', { null: 'ignore' }],
      // An empty catch is how best-effort clean-up says "ignore this failure".
      'no-empty': ['error', { allowEmptyCatch: true }],
      'no-constant-binary-expression': 'error',
      'no-self-compare': 'error',
      'no-unmodified-loop-condition': 'error',
      'prefer-const': ['error', { destructuring: 'all' }],
      // Off: the token readers and writers and the terminal output match control characters on purpose.
      'no-control-regex': 'off',
    },
  },
  {
    // CommonJS: .cjs files, and .js files (the root package is not "type": "module").
    files: ['**/*.cjs', '**/*.js'],
    languageOptions: { sourceType: 'commonjs' },
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
  {
    files: ['client/src/webview/**/*.ts'],
    languageOptions: { globals: { ...globals.browser } },
  },
  {
    files: TYPED,
    languageOptions: { parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname } },
    rules: {
      '@typescript-eslint/await-thenable': 'error',
      '@typescript-eslint/no-floating-promises': 'error',
      '@typescript-eslint/no-misused-promises': 'error',
      '@typescript-eslint/return-await': ['error', 'in-try-catch'],
      '@typescript-eslint/no-unnecessary-type-assertion': 'error',
      '@typescript-eslint/no-for-in-array': 'error',
      '@typescript-eslint/no-implied-eval': 'error',
      '@typescript-eslint/only-throw-error': 'error',
      '@typescript-eslint/prefer-promise-reject-errors': 'error',
      '@typescript-eslint/switch-exhaustiveness-check': ['error', { considerDefaultExhaustiveForUnions: true }],
      '@typescript-eslint/no-duplicate-type-constituents': 'error',
      '@typescript-eslint/no-redundant-type-constituents': 'error',
      '@typescript-eslint/unbound-method': 'error',
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'separate-type-imports' }],
      '@typescript-eslint/no-import-type-side-effects': 'error',
    },
  },
);
