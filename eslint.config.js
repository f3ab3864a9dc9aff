// Lint, and the layering of the three rooms (GUIDE section 2):
//   src/core      pure computation: imports only core files and ml-matrix; no Node, Electron or DOM.
//   src/main      the Node side: may import core and anything from Node or the registry.
//   src/common    the contract between main and the page (API types, channel names, export formats):
//                 imports only types from core; no Node, Electron or DOM. main and renderer import it.
//   src/renderer  the page: may import core and common; no Node module and no Electron (type-only imports aside).
//   tools         code the tests and the bench both use (fixture paths, frame making, file writers,
//                 the OpenCV loader); ships nowhere. tools and bench never import from test/.
// Every source file must belong to a layer; a file no rule classifies fails the lint. Do not relax
// these rules to make a file pass: move the code to the layer it belongs to.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';
import { builtinModules } from 'node:module';

const nodeBuiltins = [...builtinModules, ...builtinModules.map((m) => `node:${m}`)];

const layers = {
  core: ['src/core/**/*.ts'],
  common: ['src/common/**/*.ts'],
  main: ['src/main/**/*.ts', 'src/main/**/*.cts'],
  renderer: ['src/renderer/**/*.ts'],
  tests: ['test/**/*.ts', 'bench/**/*.ts', 'tools/**/*.ts'],
  tooling: ['*.config.js', '*.config.ts', 'bin/**/*.js', '.ci/**/*.js', 'scripts/**/*.ts'],
};

const layering = {
  rules: {
    unclassified: {
      meta: { type: 'problem', messages: { none: 'This file belongs to no layer (see eslint.config.js): move it into src/core, src/main, src/renderer, test, bench or tools.' } },
      create(context) {
        return { Program(node) { context.report({ node, messageId: 'none' }); } };
      },
    },
  },
};

const corePatterns = [
  { regex: '^(?!\\./|\\.\\./|ml-matrix$)', message: 'src/core imports only core files and ml-matrix (no Node, Electron, DOM or I/O libraries).' },
  { group: ['../main/**', '../renderer/**', '../common/**', '../../**'], message: 'src/core must not reach into src/main, src/common or src/renderer.' },
];
/** The core's folders, each importing only from those before it. */
const coreRooms = ['image', 'numeric', 'features', 'geometry', 'pair', 'sequence', 'raw', 'exports', 'demo'];

export default tseslint.config(
  { ignores: ['node_modules/**', 'dist/**', 'out/**', 'coverage/**', 'test-results/**', '.bench-cache/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/consistent-type-imports': 'error',
    },
  },
  {
    files: layers.core,
    languageOptions: { globals: { ...globals.es2021 } },
    rules: {
      'no-restricted-imports': ['error', {
        patterns: corePatterns,
      }],
      'no-restricted-globals': ['error', 'window', 'document', 'process', 'Buffer', 'require', 'fetch', 'navigator', 'console'],
      // A dynamic import() loads code at run time past the import rules above (and is I/O of a kind).
      'no-restricted-syntax': ['error', { selector: 'ImportExpression', message: 'src/core loads no code at run time: use a static import.' }],
    },
  },
  // The core's folders in the order a frame meets them: each imports only from folders before it
  // (DEVELOPERS.md, "Layout"), so the folders form no cycle. A later block's no-restricted-imports
  // replaces the one above for the same files, so each repeats the core's own patterns.
  ...coreRooms.map((room, i) => ({
    files: [`src/core/${room}/**/*.ts`],
    rules: {
      'no-restricted-imports': ['error', {
        patterns: [
          ...corePatterns,
          ...(i + 1 < coreRooms.length ? [{ group: coreRooms.slice(i + 1).map((r) => `../${r}/**`), message: `src/core/${room} imports only from the folders before it: ${coreRooms.slice(0, i).join(', ') || 'none'}.` }] : []),
        ],
      }],
    },
  })),
  {
    files: layers.common,
    languageOptions: { globals: { ...globals.es2021 } },
    rules: {
      'no-restricted-imports': ['error', {
        patterns: [
          { regex: '^(?!\\./|\\.\\./core/)', message: 'src/common imports only common files and types from src/core (no Node, Electron, DOM, main or renderer).' },
          { group: ['../core/**'], allowTypeImports: true, message: 'src/common imports only types from src/core.' },
        ],
      }],
      'no-restricted-globals': ['error', 'window', 'document', 'process', 'Buffer', 'require', 'fetch', 'navigator', 'console'],
    },
  },
  {
    files: layers.renderer,
    languageOptions: { globals: { ...globals.browser } },
    rules: {
      'no-restricted-imports': ['error', {
        paths: [...nodeBuiltins, 'electron', 'sharp', 'exifr', 'piscina'].map((name) => ({ name, allowTypeImports: true, message: 'src/renderer talks to main only through the API object.' })),
        patterns: [{ group: ['../main/**'], allowTypeImports: true, message: 'src/renderer may import types only from src/main.' }],
      }],
      'no-restricted-globals': ['error', 'process', 'Buffer', 'require'],
    },
  },
  {
    files: layers.main,
    languageOptions: { globals: { ...globals.node } },
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ group: ['../renderer/**'], message: 'src/main does not import the renderer.' }] }],
    },
  },
  {
    files: [...layers.tests, ...layers.tooling],
    languageOptions: { globals: { ...globals.node } },
  },
  {
    files: ['bench/**/*.ts', 'tools/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ group: ['../test/**', '../../test/**'], message: 'bench/ and tools/ do not import test code: move what both use to tools/.' }] }],
    },
  },
  {
    files: ['**/*.ts', '**/*.cts', '**/*.js'],
    ignores: Object.values(layers).flat(),
    plugins: { layering },
    rules: { 'layering/unclassified': 'error' },
  },
);
