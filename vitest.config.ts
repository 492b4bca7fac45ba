import { svelte } from '@sveltejs/vite-plugin-svelte';
import { svelteTesting } from '@testing-library/svelte/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['test/e2e/**', 'node_modules/**'],
    testTimeout: 60_000,
    pool: 'forks',
    projects: [
      {
        extends: true,
        test: { name: 'node', exclude: ['test/e2e/**', 'test/renderer/**', 'node_modules/**'] },
      },
      {
        // The renderer's views and components: Svelte compiled for the browser, in jsdom.
        extends: true,
        plugins: [svelte(), svelteTesting()],
        test: {
          name: 'renderer',
          include: ['test/renderer/**/*.test.ts'],
          exclude: ['test/!(renderer)/**', 'node_modules/**'],
          environment: 'jsdom',
        },
      },
    ],
  },
});
