import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const shared = fileURLToPath(new URL('./shared/src/index.ts', import.meta.url));

/** Unit tests of shared/ and server/, and the integration tests in test/integration. */
export default defineConfig({
  resolve: { alias: { '@emberline/shared': shared } },
  test: {
    projects: [
      {
        extends: true,
        test: { name: 'shared', include: ['shared/src/**/*.spec.ts'], environment: 'node' },
      },
      {
        extends: true,
        test: {
          name: 'server',
          include: ['server/src/**/*.spec.ts', 'test/integration/**/*.spec.ts'],
          environment: 'node',
          globalSetup: ['test/support/global-setup.ts'],
          fileParallelism: false,
          // MikroORM's migrator imports the .ts migrations natively: let tsx load them.
          execArgv: ['--import', 'tsx'],
          testTimeout: 30000,
          hookTimeout: 60000,
        },
      },
    ],
  },
});
