import { defineConfig } from 'vitest/config';

// The page is built later (web/ui); the test section configures vitest for Node-only tests.
export default defineConfig({
  root: 'web',
  test: {
    root: '.',
    include: ['test/**/*.test.ts'],
    exclude: ['test/browser/**', 'node_modules/**'],
    environment: 'node',
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
