import { defineConfig } from 'vitest/config';
import { viteSingleFile } from 'vite-plugin-singlefile';
import { contentSecurityPolicy } from './scripts/vite-csp.mjs';
import { ortWasmEmbedded } from './scripts/vite-ort.mjs';

// The page: web/index.html built into ONE self-contained dist/index.html (scripts, workers and
// the engine inlined), so it works from a static server and opened from disk; a strict
// Content-Security-Policy with hashes of the inline code forbids any network use. The network
// runtime's wasm is embedded by our build (scripts/build-ort.mjs); ortWasmEmbedded keeps Vite
// from inlining a second copy, in the page and in the workers (the model worker is nested in
// the coordinator worker).
// The test section configures vitest for the Node tests (browser tests: test/browser/run.mjs).
export default defineConfig({
  root: 'web',
  base: './',
  build: {
    outDir: '../dist',
    emptyOutDir: true,
    target: 'es2022',
    reportCompressedSize: false,
    chunkSizeWarningLimit: 20_000,
  },
  worker: { format: 'iife', plugins: () => [ortWasmEmbedded()] },
  plugins: [ortWasmEmbedded(), viteSingleFile({ removeViteModuleLoader: true }), contentSecurityPolicy()],
  test: {
    root: '.',
    environment: 'node',
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
    // Test tiers (README "Tests"): fast = `npm test` (Node only), slow = `npm run test:slow`
    // (end-to-end cases), reference = `npm run test:reference` (Python reference libraries run
    // live). The browser tests run apart (test/browser/run.mjs).
    projects: [
      { extends: true, test: { name: 'fast', include: ['test/**/*.test.ts'], exclude: ['test/**/*.slow.test.ts', 'test/**/*.ref.test.ts', 'test/browser/**', 'node_modules/**'] } },
      { extends: true, test: { name: 'slow', include: ['test/**/*.slow.test.ts'], exclude: ['test/browser/**', 'node_modules/**'] } },
      { extends: true, test: { name: 'reference', include: ['test/**/*.ref.test.ts'], exclude: ['test/browser/**', 'node_modules/**'] } },
    ],
  },
});
