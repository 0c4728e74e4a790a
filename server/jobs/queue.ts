/**
 * The job queue on the app's own PostgreSQL, through pg-boss (its tables live in the schema `pgboss`). One queue
 * message per chunk of a job, carrying only which chunk; the chunk's task and result live in job_chunks. pg-boss
 * gives each message to one worker at a time, retries it when the worker fails or goes silent past the expiry (a
 * killed process), and after the last retry moves it to the dead-letter queue, where the job is failed in words.
 */
import PgBoss from 'pg-boss';
import type { Transaction } from 'sequelize';
import type { Config } from '../config';

export const CHUNK_QUEUE = 'qp-chunks';
export const DEAD_CHUNK_QUEUE = 'qp-chunks-dead';

/** What a chunk message carries. */
export interface ChunkMessage {
  jobId: string;
  stage: number;
  idx: number;
}

export interface QueueOptions {
  databaseUrl: string;
  /** a chunk running longer than this is taken as lost and given to another worker */
  chunkTimeoutSeconds: number;
  /** retries of a chunk whose worker failed or vanished, before its job fails */
  chunkRetries: number;
  /** how often expired chunks are looked for */
  maintenanceSeconds: number;
}

/** The queue settings of the configuration (server and workers must agree on them). */
export function queueOptions(cfg: Pick<Config, 'databaseUrl' | 'chunkTimeoutSeconds' | 'chunkRetries' | 'queueMaintenanceSeconds'>): QueueOptions {
  return {
    databaseUrl: cfg.databaseUrl,
    chunkTimeoutSeconds: cfg.chunkTimeoutSeconds,
    chunkRetries: cfg.chunkRetries,
    maintenanceSeconds: cfg.queueMaintenanceSeconds,
  };
}

/** Starts pg-boss (creating or upgrading its schema) and makes sure both queues exist with our settings. */
export async function startQueue(options: QueueOptions): Promise<PgBoss> {
  const boss = new PgBoss({
    connectionString: options.databaseUrl,
    schema: 'pgboss',
    application_name: 'quiverpoint-queue',
    max: 4,
    maintenanceIntervalSeconds: options.maintenanceSeconds,
    monitorStateIntervalSeconds: Math.max(options.maintenanceSeconds, 30),
  });
  await boss.start();
  const chunkQueue = {
    name: CHUNK_QUEUE,
    policy: 'standard' as const,
    retryLimit: options.chunkRetries,
    retryDelay: 1,
    expireInSeconds: options.chunkTimeoutSeconds,
    retentionDays: 2,
    deadLetter: DEAD_CHUNK_QUEUE,
  };
  if (!(await boss.getQueue(DEAD_CHUNK_QUEUE))) await boss.createQueue(DEAD_CHUNK_QUEUE, { name: DEAD_CHUNK_QUEUE, retentionDays: 7 });
  if (await boss.getQueue(CHUNK_QUEUE)) await boss.updateQueue(CHUNK_QUEUE, chunkQueue);
  else await boss.createQueue(CHUNK_QUEUE, chunkQueue);
  return boss;
}

/** The raw pg client of a Sequelize transaction (what pg-boss needs to send inside it). */
function transactionDb(transaction: Transaction): { executeSql(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } {
  const connection = (transaction as unknown as { connection: { query(text: string, values: unknown[]): Promise<{ rows: unknown[] }> } }).connection;
  return { executeSql: (text, values) => connection.query(text, values) };
}

/** Queues chunk messages inside `transaction`, so they exist exactly when the chunk rows do. */
export async function queueChunks(boss: PgBoss, messages: readonly ChunkMessage[], transaction: Transaction): Promise<void> {
  if (messages.length === 0) return;
  await boss.insert(
    messages.map((data) => ({ name: CHUNK_QUEUE, data: { ...data } })),
    { db: transactionDb(transaction) },
  );
}

/**
 * Withdraws the messages of a job's chunks that no worker holds yet (a cancelled or failed job), so workers do not
 * spend a poll on each. Messages already in a worker's hands are dropped by the worker itself.
 */
export async function withdrawChunks(boss: PgBoss, jobId: string): Promise<void> {
  const rows = (await boss.getDb().executeSql(
    `SELECT id FROM pgboss.job WHERE name = $1 AND state IN ('created', 'retry') AND data->>'jobId' = $2`,
    [CHUNK_QUEUE, jobId],
  )) as { rows: Array<{ id: string }> };
  if (rows.rows.length) await boss.cancel(CHUNK_QUEUE, rows.rows.map((r) => r.id));
}
