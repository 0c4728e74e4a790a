// Node-side tests. The Angular unit tests under src/ run through `ng test`; browser tests through
// vitest.e2e.config.mts.
import { defineConfig } from 'vitest/config';

const notHere = { exclude: ['src/**', 'node_modules/**', 'dist/**'] };

export default defineConfig({
  test: {
    projects: [
      { test: { name: 'shared', environment: 'node', include: ['shared/**/*.spec.ts'], ...notHere } },
      { test: { name: 'reference', environment: 'node', include: ['tests/reference/**/*.spec.ts'], ...notHere, testTimeout: 60_000 } },
      { test: { name: 'server', environment: 'node', include: ['server/**/*.spec.ts'], ...notHere } },
      {
        test: {
          name: 'api',
          environment: 'node',
          include: ['tests/api/**/*.spec.ts'],
          ...notHere,
          globalSetup: ['tests/api/global-setup.ts'],
          // One shared database; files run one after another so row counts and rate limits stay predictable.
          fileParallelism: false,
          testTimeout: 20_000,
          hookTimeout: 60_000,
        },
      },
    ],
  },
});
