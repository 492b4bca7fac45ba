import { defineConfig } from 'vitest/config';

// End-to-end: the built renderer (npm run build) in Debian's Chromium against browser mode.
export default defineConfig({
  test: {
    include: ['test/e2e/**/*.e2e.test.ts'],
    testTimeout: 180_000,
    hookTimeout: 120_000,
    pool: 'forks',
    fileParallelism: false,
  },
});
