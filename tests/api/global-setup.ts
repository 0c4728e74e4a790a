/**
 * Once per API test run: make sure PostgreSQL is up, then recreate and migrate `quiverpoint_test` (fresh every
 * run). Two runs on one checkout would drop each other's database, so a run holds a lock until it ends and a
 * second run waits. Stops the private cluster afterwards only if this run started it.
 */
import type { TestProject } from 'vitest/node';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';
import { ensurePostgres, stopPostgres } from '../../server/scripts/pg';
import { holdRunLock } from '../../server/scripts/run-lock';

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string;
  }
}

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const cluster = await ensurePostgres({ fsync: false, log: () => undefined });
  const lock = await holdRunLock(cluster.url, 'quiverpoint_test', (line) => console.log(`[api tests] ${line}`));
  const url = await recreateDatabase(cluster.url, 'quiverpoint_test');
  await prepareDatabase(url, { seed: false });
  project.provide('databaseUrl', url);
  return async () => {
    await lock.release();
    if (cluster.startedNow) stopPostgres(() => undefined);
  };
}
