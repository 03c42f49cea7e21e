import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

/** End-to-end tests: the built client and the real server, driven in Debian's headless Chromium. */
export default defineConfig({
  resolve: {
    alias: {
      '@emberline/shared': fileURLToPath(new URL('./shared/src/index.ts', import.meta.url)),
    },
  },
  test: {
    name: 'e2e',
    include: ['test/e2e/**/*.spec.ts'],
    environment: 'node',
    globalSetup: ['test/e2e/e2e-setup.ts'],
    fileParallelism: false,
    testTimeout: 60_000,
    hookTimeout: 120_000,
  },
});
