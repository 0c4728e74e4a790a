/**
 * Server jobs in one process for API tests: the app with a JobService on the test database's queue, and a chunk
 * worker (one engine thread) that can be stopped and started again. The multi-process faults (killed workers,
 * server restarts) are tested with real processes in tests/queue.
 */
import type PgBoss from 'pg-boss';
import { createApp } from '../../server/app';
import { createEnginePool } from '../../server/compute/engine-pool';
import { startChunkWorker, type ChunkWorker } from '../../server/jobs/chunk-worker';
import { JobService } from '../../server/jobs/job-service';
import { startQueue } from '../../server/jobs/queue';
import type { WorkerPool } from '../../shared/compute/worker-pool';
import { startApi, type TestApi } from './support';

export interface JobsApi extends TestApi {
  boss: PgBoss;
  /** starts the in-process worker (if stopped) */
  startWorker(): Promise<void>;
  /** stops taking chunks (messages stay queued) */
  stopWorker(): Promise<void>;
}

// Retries and failures are part of what these tests look at; print them so a failing run says why.
const quiet = { debug: () => undefined, info: () => undefined, warn: (o: unknown, m?: string) => console.warn(m, o), error: (o: unknown, m?: string) => console.error(m, o) };

export async function startJobsApi(): Promise<JobsApi> {
  const base = startApi();
  const boss = await startQueue({ databaseUrl: base.config.databaseUrl, chunkTimeoutSeconds: 120, chunkRetries: 2, maintenanceSeconds: 5 });
  boss.on('error', () => undefined);
  const jobs = new JobService(base.sequelize, boss);
  const app = createApp({ config: base.config, sequelize: base.sequelize, serveClient: false, checkResponses: true, verifier: base.verifier, jobs });
  let pool: WorkerPool | null = null;
  let worker: ChunkWorker | null = null;
  const startWorker = async () => {
    if (worker) return;
    pool = createEnginePool(1);
    worker = await startChunkWorker({ sequelize: base.sequelize, boss, pool, logger: quiet, chunkTimeoutSeconds: 120, chunkRetries: 2,
      // every job mails its submitter here (the server's default waits 5 minutes), so the tests can read the mail
      mail: { publicUrl: 'http://quiverpoint.example', afterSeconds: 0 } });
  };
  const stopWorker = async () => {
    await worker?.stop();
    pool?.dispose();
    worker = null;
    pool = null;
  };
  await startWorker();
  return {
    ...base,
    app,
    boss,
    startWorker,
    stopWorker,
    close: async () => {
      await stopWorker();
      await boss.stop({ graceful: false, wait: true });
      await base.close();
    },
  };
}
