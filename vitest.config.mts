// Node-side tests. The Angular unit tests under src/ run through `ng test`; browser tests through
// vitest.e2e.config.mts.
import { defineConfig } from 'vitest/config';

// src/** belongs to `ng test`; build output and dependencies hold no tests of ours.
const elsewhere = { exclude: ['src/**', 'node_modules/**', 'dist/**'] };

export default defineConfig({
  test: {
    projects: [
      // Engine specs run whole charts and fits: seconds each on an idle core, several times that on 2 busy ones.
      { test: { name: 'shared', environment: 'node', include: ['shared/**/*.spec.ts'], ...elsewhere, testTimeout: 60_000 } },
      { test: { name: 'reference', environment: 'node', include: ['tests/reference/**/*.spec.ts'], ...elsewhere, testTimeout: 60_000 } },
      { test: { name: 'server', environment: 'node', include: ['server/**/*.spec.ts'], ...elsewhere, testTimeout: 30_000 } },
      {
        test: {
          name: 'api',
          environment: 'node',
          include: ['tests/api/**/*.spec.ts'],
          ...elsewhere,
          globalSetup: ['tests/api/global-setup.ts'],
          // One shared database and argon2 hashing on 2 cores: API files run one after another.
          fileParallelism: false,
          testTimeout: 20_000,
          hookTimeout: 60_000,
        },
      },
      // The job queue with real processes (server, two workers) on its own database.
      { test: { name: 'queue', environment: 'node', include: ['tests/queue/**/*.spec.ts'], ...elsewhere, testTimeout: 300_000, hookTimeout: 180_000 } },
    ],
  },
});
