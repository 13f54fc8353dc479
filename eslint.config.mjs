// ESLint flat config. Two jobs: keep the tiers apart (docs/architecture.md, DEVELOPERS.md "Tiers") with
// no-restricted-imports, and catch a few correctness mistakes that the type checker does not.
// Run: `npm run lint` (also the `lint` stage of `npm test`).
import { builtinModules } from 'node:module';
import tseslint from 'typescript-eslint';

// every Node built-in, with and without the `node:` prefix
const nodeBuiltins = [...new Set(builtinModules.filter(m => !m.startsWith('_')))].flatMap(m => [m, `node:${m}`]);
const vscode = { name: 'vscode', message: 'Only src/host may import vscode.' };
const domOnly = ['chart.js'].map(name => ({ name, message: 'A browser-only module: it belongs to webview/.' }));
const nodeBuiltinRule = nodeBuiltins.map(name => ({ name, message: 'A Node built-in: this tier also runs in the browser.' }));

export default tseslint.config(
  { ignores: ['node_modules/**', 'dist/**', 'out/**', '.harness/**', 'media/**', 'test/fixtures/**', '**/*.js', '**/*.mjs'] },
  {
    files: ['**/*.ts'],
    languageOptions: { parser: tseslint.parser },
    plugins: { '@typescript-eslint': tseslint.plugin },
    rules: {
      // correctness, not style
      'no-dupe-keys': 'error',
      'no-dupe-else-if': 'error',
      'no-duplicate-case': 'error',
      'no-self-assign': 'error',
      'no-self-compare': 'error',
      'no-unreachable': 'error',
      'no-unsafe-finally': 'error',
      'no-unsafe-negation': 'error',
      'no-sparse-arrays': 'error',
      'no-cond-assign': ['error', 'except-parens'],
      'no-compare-neg-zero': 'error',
      'no-fallthrough': 'error',
      'use-isnan': 'error',
      'valid-typeof': 'error',
      'no-debugger': 'error',
      'no-var': 'error',
      '@typescript-eslint/no-duplicate-enum-values': 'error',
      '@typescript-eslint/no-misused-new': 'error',
      '@typescript-eslint/no-unsafe-declaration-merging': 'error',
      // an untyped require() hides a dependency from the type checker and the bundler; say why where one is needed
      '@typescript-eslint/no-require-imports': 'error',
    },
  },
  // the engine: pure TypeScript, runs in the worker, the CLI and the library; inside it, the folders form layers
  // (formula, solve → data, spec → models → stats → run): a folder never imports one above it
  ...[
    ['src/engine/**/*.ts', []],
    ['src/engine/formula/**/*.ts', ['solve', 'data', 'spec', 'models', 'stats']],
    ['src/engine/solve/**/*.ts', ['data', 'spec', 'models', 'stats']],
    ['src/engine/{data,spec}/**/*.ts', ['models', 'stats']],
    ['src/engine/models/**/*.ts', ['stats']],
    ['src/engine/stats/**/*.ts', []],
  ].map(([glob, above]) => ({
    files: [glob],
    rules: {
      'no-restricted-imports': ['error', {
        paths: [vscode, ...domOnly, ...(above.includes('spec') ? [{ name: '../spec', message: 'this folder sits below spec/ (docs/architecture.md): import spec/defaults or spec/limits directly.' }] : [])],
        patterns: [
          { group: ['**/host', '**/host/**'], message: 'The engine must not import the VS Code host (src/host).' },
          { group: ['**/webview', '**/webview/**'], message: 'The engine must not import the webview.' },
          ...(glob !== 'src/engine/**/*.ts' ? [{ group: ['../run', '../index', '../starter'], message: 'run.ts, starter.ts and index.ts sit above the engine folders.' }] : []),
          // spec/defaults.ts and spec/limits.ts are leaf tables (no imports) that every layer reads: the one DEFAULTS
          ...above.map(folder => ({ group: folder === 'spec' ? ['../spec/*', '!../spec/defaults', '!../spec/limits', '../spec/index'] : [`../${folder}`, `../${folder}/**`], message: `${glob.split('/')[2]} sits below ${folder}/ (docs/architecture.md): move the shared piece down instead.` })),
        ],
      }],
    },
  })),
  {
    // leaf tables that every engine layer reads (the one DEFAULTS, LIMITS, the PROBLEMS and TERMINATIONS tables):
    // they import nothing, so importing them can never make a cycle or cross a tier
    files: ['src/engine/spec/defaults.ts', 'src/engine/spec/limits.ts', 'src/engine/problems.ts', 'src/engine/terminations.ts'],
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ group: ['*', '**'], message: 'A leaf table imports nothing (eslint.config.mjs, "leaf tables").' }] }],
    },
  },
  {
    // the webview: browser code only; it draws a FitReport and never solves
    files: ['webview/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', {
        paths: [vscode, ...nodeBuiltinRule],
        patterns: [
          { group: ['**/engine/solve', '**/engine/solve/**'], message: 'The webview draws a FitReport; it never imports the solver.' },
          { group: ['**/host', '**/host/**'], message: 'The webview talks to the host through src/protocol messages only.' },
        ],
      }],
    },
  },
  {
    // every Chart.js call lives in webview/charts.ts, with options per chart (never the global Chart.defaults)
    files: ['webview/**/*.ts'],
    ignores: ['webview/charts.ts'],
    rules: {
      'no-restricted-imports': ['error', {
        paths: [vscode, ...nodeBuiltinRule, { name: 'chart.js', message: 'Chart.js is used in webview/charts.ts only.' }],
        patterns: [
          { group: ['**/engine/solve', '**/engine/solve/**'], message: 'The webview draws a FitReport; it never imports the solver.' },
          { group: ['**/host', '**/host/**'], message: 'The webview talks to the host through src/protocol messages only.' },
        ],
      }],
    },
  },
  {
    files: ['webview/charts.ts'],
    rules: {
      'no-restricted-syntax': ['error', { selector: "MemberExpression[object.name='Chart'][property.name='defaults']", message: 'Pass options per chart; a global Chart.defaults write leaks into every chart on the page.' }],
    },
  },
  {
    // src/shared: code on both sides of a process boundary, so neither vscode, nor Node, nor the DOM
    files: ['src/shared/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', {
        paths: [vscode, ...nodeBuiltinRule, ...domOnly],
        patterns: [
          { group: ['**/host', '**/host/**', '**/webview', '**/webview/**'], message: 'src/shared sits below the host and the webview.' },
        ],
      }],
      'no-restricted-globals': ['error', 'window', 'document', 'navigator', 'process', 'Buffer', '__dirname', 'require'],
    },
  },
  {
    // the CLI and the worker: Node, never vscode
    files: ['src/cli/**/*.ts', 'src/cli.ts', 'src/worker.ts', 'src/lib.ts'],
    rules: { 'no-restricted-imports': ['error', { paths: [vscode] }] },
  },
);
