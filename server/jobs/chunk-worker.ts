/**
 * A job worker: takes chunk messages from the queue, one per engine thread, computes each chunk's task on the
 * engine pool and stores its result (job-store.ts). What goes wrong decides what happens next:
 * - the engine refuses the input (EngineTaskError) or the job cannot be assembled (PoisonJobError): the job fails
 *   at once with the reason in words, and the message completes, so a poison input never loops;
 * - anything else (database gone, a thread lost): the message fails and the queue retries it after a second;
 * - the process dies: the message expires after the chunk time limit and the queue gives it to another worker;
 * - retries exhausted: the message lands on the dead-letter queue, whose handler fails the job in words.
 * Cancelled jobs are looked up every two seconds and their running chunks stopped.
 */
import { hostname } from 'node:os';
import type { Subscription } from 'rxjs';
import type PgBoss from 'pg-boss';
import type { Sequelize } from 'sequelize';
import { EngineTaskError, type WorkerPool } from '../../shared/compute/worker-pool';
import type { TaskResult } from '../../shared/engine/engine-task';
import type { Logger } from '../logger';
import { completeChunk, failJob, inactiveJobs, PoisonJobError, takeChunk } from './job-store';
import type { JobMailOptions } from './job-mail';
import { CHUNK_QUEUE, DEAD_CHUNK_QUEUE, withdrawChunks, type ChunkMessage } from './queue';

export interface ChunkWorkerOptions {
  sequelize: Sequelize;
  boss: PgBoss;
  pool: WorkerPool;
  logger: Pick<Logger, 'debug' | 'info' | 'warn' | 'error'>;
  /** chunk time limit and retries, for the dead-letter message */
  chunkTimeoutSeconds: number;
  chunkRetries: number;
  /** mail the submitter when a long job ends (none when absent) */
  mail?: JobMailOptions;
}

export interface ChunkWorker {
  /** this worker's name in job_chunks.worker */
  name: string;
  /** Stops taking messages and stops the chunks in hand (they go back to the queue on expiry or retry). */
  stop(): Promise<void>;
}

class JobStopped extends Error {}

export async function startChunkWorker(options: ChunkWorkerOptions): Promise<ChunkWorker> {
  const { sequelize, boss, pool, logger } = options;
  const name = `${hostname()}:${process.pid}`;
  // Chunks in hand, by job, so a cancelled job's chunks can be stopped.
  const running = new Map<string, Set<{ sub: Subscription | null; stop: () => void }>>();

  const compute = (task: Parameters<WorkerPool['task']>[0], jobId: string): Promise<TaskResult> =>
    new Promise<TaskResult>((resolve, reject) => {
      const entry = { sub: null as Subscription | null, stop: () => undefined as void };
      const set = running.get(jobId) ?? new Set();
      running.set(jobId, set);
      const done = () => {
        set.delete(entry);
        if (set.size === 0) running.delete(jobId);
      };
      entry.stop = () => {
        entry.sub?.unsubscribe();
        done();
        reject(new JobStopped());
      };
      set.add(entry);
      entry.sub = pool.task(task).subscribe({
        next: (event) => {
          if (event.type === 'result') {
            done();
            resolve(event.value);
          }
        },
        error: (error: unknown) => {
          done();
          reject(error);
        },
      });
    });

  const fail = async (jobId: string, words: string): Promise<boolean> => {
    const failed = await failJob(sequelize, jobId, words, options.mail);
    if (failed) await withdrawChunks(boss, jobId).catch((err: unknown) => logger.warn({ err, jobId }, 'cannot withdraw the chunks of a failed job'));
    return failed;
  };

  const handle = async (message: ChunkMessage): Promise<void> => {
    let task;
    try {
      task = await takeChunk(sequelize, message, name);
    } catch (error: unknown) {
      if (!(error instanceof PoisonJobError)) throw error;
      await fail(message.jobId, `The job cannot be computed: ${error.message}`);
      return;
    }
    if (!task) return;
    let result: TaskResult;
    try {
      result = await compute(task, message.jobId);
    } catch (error: unknown) {
      if (error instanceof JobStopped) return;
      if (error instanceof EngineTaskError) {
        await fail(message.jobId, `A chunk could not be computed: ${error.message}`);
        logger.warn({ ...message, err: error.message }, 'job failed: the engine refused a chunk');
        return;
      }
      throw error;
    }
    try {
      const outcome = await completeChunk(sequelize, boss, message, result, options.mail);
      logger.debug({ ...message, outcome }, 'chunk done');
      if (outcome === 'finished') logger.info({ jobId: message.jobId }, 'job finished');
    } catch (error: unknown) {
      if (!(error instanceof PoisonJobError)) throw error;
      await fail(message.jobId, `The run could not be completed: ${error.message}`);
      logger.warn({ ...message, err: error.message }, 'job failed while assembling');
    }
  };

  const workIds: string[] = [];
  for (let i = 0; i < pool.size; i++) {
    let id = '';
    id = await boss.work<ChunkMessage>(CHUNK_QUEUE, { batchSize: 1, pollingIntervalSeconds: 0.5 }, async ([job]) => {
        if (!job) return;
        try {
          await handle(job.data);
          // Ask for the next chunk at once rather than after the polling interval: a job's chunks follow each other.
          boss.notifyWorker(id);
        } catch (error: unknown) {
          // The queue retries the chunk; say why in the log.
          logger.warn({ ...job.data, err: error }, 'chunk failed; the queue will retry it');
          throw error;
        }
      });
    workIds.push(id);
  }
  workIds.push(
    await boss.work<ChunkMessage>(DEAD_CHUNK_QUEUE, { batchSize: 1, pollingIntervalSeconds: 2 }, async ([job]) => {
      if (!job) return;
      const tries = options.chunkRetries + 1;
      const failed = await fail(
        job.data.jobId,
        `A chunk failed ${tries} time${tries === 1 ? '' : 's'}: its worker stopped, lost its database connection, or ran past the chunk time limit of ${options.chunkTimeoutSeconds} s.`,
      );
      if (failed) logger.warn({ ...job.data }, 'job failed: a chunk used up its retries');
    }),
  );

  const watch = setInterval(() => {
    if (running.size === 0) return;
    inactiveJobs(sequelize, [...running.keys()])
      .then((gone) => {
        for (const jobId of gone) for (const entry of [...(running.get(jobId) ?? [])]) entry.stop();
      })
      .catch((err: unknown) => logger.warn({ err }, 'cannot check for cancelled jobs'));
  }, 2000);
  watch.unref();

  logger.info({ worker: name, threads: pool.size }, 'worker taking job chunks');
  return {
    name,
    async stop() {
      clearInterval(watch);
      for (const id of workIds) await boss.offWork({ id }).catch(() => undefined);
      for (const set of running.values()) for (const entry of [...set]) entry.stop();
    },
  };
}
