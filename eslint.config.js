// Lint rules: the recommended sets of ESLint and typescript-eslint, plus the project's layer rule
// (loopwise/layers, below): which folders may import which.
import js from '@eslint/js';
import { builtinModules } from 'node:module';
import { dirname, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import tseslint from 'typescript-eslint';

const REPO = dirname(fileURLToPath(import.meta.url));
const NODE_BUILTINS = new Set(builtinModules);

/** The layer a repository-relative path belongs to, or null when it is in none. */
function layerOf(path) {
  if (path.startsWith('electron/engine/')) return 'engine';
  if (path.startsWith('electron/shared/')) return 'shared';
  if (path.startsWith('electron/workers/')) return 'workers';
  if (path.startsWith('electron/service/')) return 'service';
  if (path.startsWith('electron/io/')) return 'io';
  if (path.startsWith('electron/cli/') || path === 'electron/cli.ts') return 'cli';
  if (path === 'electron/api.ts') return 'api';
  if (/^electron\/(main|preload|web|web-client|start)\.ts$/.test(path)) return 'doors';
  if (path.startsWith('renderer/')) return 'renderer';
  return null;
}

/**
 * What each layer must not import, by the imported file's layer (`api` only as a value: types
 * from the contract are allowed), plus whether node built-ins and electron are off limits.
 * The engine is pure computation on typed arrays; the workers run engine code and never the
 * service (which runs them); electron/shared holds what both need; the renderer talks to the
 * service only through the contract and a door.
 */
const FORBIDDEN = {
  engine: {
    layers: ['shared', 'workers', 'service', 'io', 'cli', 'doors', 'renderer', 'api'],
    node: true,
    why: 'the engine is pure computation: it imports only engine modules (and types from api.ts)',
  },
  shared: {
    layers: ['workers', 'service', 'io', 'cli', 'doors', 'renderer'],
    node: false,
    why: 'electron/shared sits below the service and the workers and imports neither',
  },
  workers: {
    layers: ['service', 'cli', 'doors', 'renderer'],
    node: false,
    why: 'workers never import the service that runs them (shared pieces live in electron/shared)',
  },
  renderer: {
    layers: ['service', 'io', 'workers', 'shared'],
    node: false,
    why: 'the renderer reaches the service only through api.ts and a door',
  },
};

/** Enforces FORBIDDEN on every import, export-from and literal dynamic import, at any folder depth. */
const layers = {
  meta: {
    type: 'problem',
    docs: { description: "Keeps each layer's imports within the layers it may use." },
    schema: [],
    messages: { forbidden: "'{{source}}' is in {{target}}: {{why}}." },
  },
  create(context) {
    const file = relative(REPO, context.filename).split('\\').join('/');
    const rule = FORBIDDEN[layerOf(file)];
    if (!rule) return {};
    const check = (node, source, typeOnly) => {
      if (typeof source !== 'string') return;
      let target;
      if (source.startsWith('.')) {
        target = layerOf(
          relative(REPO, resolve(dirname(context.filename), source))
            .split('\\')
            .join('/'),
        );
        if (target === 'api' && typeOnly) return;
        if (!rule.layers.includes(target)) return;
      } else {
        const bare = source.startsWith('node:') ? source.slice(5) : source;
        const isNode = NODE_BUILTINS.has(bare) || NODE_BUILTINS.has(bare.split('/')[0]);
        if (!rule.node || !(isNode || source === 'electron' || source.startsWith('electron/'))) return;
        target = isNode ? 'node built-ins' : 'electron';
      }
      context.report({ node, messageId: 'forbidden', data: { source, target, why: rule.why } });
    };
    const typeOnly = (node) =>
      node.importKind === 'type' ||
      node.exportKind === 'type' ||
      (node.specifiers?.length > 0 &&
        node.specifiers.every((s) => s.importKind === 'type' || s.exportKind === 'type'));
    return {
      ImportDeclaration: (node) => check(node, node.source.value, typeOnly(node)),
      ExportNamedDeclaration: (node) => node.source && check(node, node.source.value, typeOnly(node)),
      ExportAllDeclaration: (node) => check(node, node.source.value, node.exportKind === 'type'),
      ImportExpression: (node) => node.source.type === 'Literal' && check(node, node.source.value, false),
    };
  },
};

export default tseslint.config(
  {
    ignores: [
      'node_modules/**',
      'dist/**',
      'dist-electron/**',
      'dist-node/**',
      'release/**',
      'renderer/**/*.svelte',
      'test/reference/**/*.py',
      '**/*.cjs',
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: {
      globals: {
        console: 'readonly',
        process: 'readonly',
        URL: 'readonly',
        performance: 'readonly',
        setTimeout: 'readonly',
        clearTimeout: 'readonly',
        TextDecoder: 'readonly',
        TextEncoder: 'readonly',
        Buffer: 'readonly',
        window: 'readonly',
        document: 'readonly',
      },
    },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/no-explicit-any': 'error',
    },
  },
  {
    files: ['electron/**/*.ts', 'renderer/**/*.ts'],
    plugins: { loopwise: { rules: { layers } } },
    rules: { 'loopwise/layers': 'error' },
  },
);
