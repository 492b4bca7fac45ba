/**
 * Builds the renderer into dist/ (served by browser mode, loaded from disk by Electron) and, after it,
 * the Electron main process and preload into dist-electron/ (what package.json "main" names).
 */
import { svelte } from '@sveltejs/vite-plugin-svelte';
import { builtinModules } from 'node:module';
import { fileURLToPath } from 'node:url';
import { build, defineConfig, type Plugin } from 'vite';

const root = fileURLToPath(new URL('.', import.meta.url));
const repo = fileURLToPath(new URL('..', import.meta.url));
const nodeBuiltins = [...builtinModules, ...builtinModules.map((m) => `node:${m}`)];

/** The main process (ES module) and the sandboxed preload (CommonJS), bundled for Electron. */
function electronEntries(): Plugin {
  return {
    name: 'loopwise-electron-entries',
    apply: 'build',
    async closeBundle() {
      const common = {
        configFile: false as const,
        root: repo,
        logLevel: 'warn' as const,
      };
      await build({
        ...common,
        build: {
          ssr: true,
          outDir: 'dist-electron',
          emptyOutDir: true,
          target: 'node20',
          sourcemap: true,
          rollupOptions: {
            input: {
              main: 'electron/main.ts',
              'filtration-worker': 'electron/workers/filtration-worker.ts',
              'statistics-worker': 'electron/workers/statistics-worker.ts',
            },
            external: ['electron', ...nodeBuiltins],
            output: { format: 'es', entryFileNames: '[name].js' },
          },
        },
      });
      await build({
        ...common,
        build: {
          ssr: true,
          outDir: 'dist-electron',
          emptyOutDir: false,
          target: 'node20',
          rollupOptions: {
            input: { preload: 'electron/preload.ts' },
            external: ['electron'],
            output: { format: 'cjs', entryFileNames: '[name].cjs' },
          },
        },
      });
    },
  };
}

export default defineConfig({
  root,
  base: './',
  plugins: [svelte(), electronEntries()],
  build: {
    outDir: '../dist',
    emptyOutDir: true,
    target: 'es2022',
    chunkSizeWarningLimit: 5000,
  },
  server: { host: '127.0.0.1' },
});
