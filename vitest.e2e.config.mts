import { defineConfig } from 'vitest/config';

// Browser tests: one file at a time, one worker, generous timeouts (a fresh database, a server and Chromium).
export default defineConfig({
  test: {
    include: ['tests/e2e/**/*.e2e.ts'],
    environment: 'node',
    pool: 'forks',
    maxWorkers: 1,
    fileParallelism: false,
    testTimeout: 120_000,
    hookTimeout: 300_000,
    teardownTimeout: 60_000,
  },
});
