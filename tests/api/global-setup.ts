/**
 * Once per API test run: make sure PostgreSQL is up, then recreate and migrate `quiverpoint_test` (fresh every
 * run). Stops the private cluster afterwards only if this run started it.
 */
import type { TestProject } from 'vitest/node';
import { ensurePostgres, stopPostgres } from '../../server/scripts/pg';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string;
  }
}

export default async function setup(project: TestProject): Promise<() => void> {
  const cluster = await ensurePostgres({ fsync: false, log: () => undefined });
  const url = await recreateDatabase(cluster.url, 'quiverpoint_test');
  await prepareDatabase(url, { seed: false });
  project.provide('databaseUrl', url);
  return () => {
    if (cluster.startedNow) stopPostgres(() => undefined);
  };
}
