/**
 * A job worker process: `npm run worker` (compiled: `node dist/server/server/worker.js`). Start any number, on any
 * machine that reaches the database through DATABASE_URL; each takes job chunks from the queue on its engine threads
 * (QP_WORKER_THREADS, default one per core). SIGINT/SIGTERM stop taking chunks; a chunk in hand goes back to the
 * queue (retried by another worker) rather than holding up the stop.
 */
import { config } from './config';
import { createEnginePool } from './compute/engine-pool';
import { createSequelize } from './db/sequelize';
import { startChunkWorker } from './jobs/chunk-worker';
import { queueOptions, startQueue } from './jobs/queue';
import { createLogger } from './logger';

async function main(): Promise<void> {
  const cfg = config();
  const logger = createLogger(cfg.logLevel);
  const sequelize = createSequelize(cfg.databaseUrl);
  const boss = await startQueue(queueOptions(cfg));
  boss.on('error', (err) => logger.error({ err }, 'queue error'));
  const pool = createEnginePool(cfg.workerThreads);
  const worker = await startChunkWorker({
    sequelize, boss, pool, logger, chunkTimeoutSeconds: cfg.chunkTimeoutSeconds, chunkRetries: cfg.chunkRetries,
    mail: { publicUrl: cfg.publicUrl, afterSeconds: cfg.jobMailAfterSeconds },
  });
  let closing = false;
  const shutdown = (signal: string) => {
    if (closing) return;
    closing = true;
    logger.info({ signal, worker: worker.name }, 'worker stopping');
    worker
      .stop()
      .then(() => pool.dispose())
      .then(() => boss.stop({ graceful: false, wait: false }))
      .finally(() => sequelize.close().finally(() => process.exit(0)));
    setTimeout(() => process.exit(1), 10_000).unref();
  };
  process.on('SIGINT', () => shutdown('SIGINT'));
  process.on('SIGTERM', () => shutdown('SIGTERM'));
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
