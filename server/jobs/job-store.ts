/**
 * A job's life in the database. A job replays the run kind's generator (shared/engine/run-job.ts): each non-empty
 * stage becomes rows of job_chunks (one task each, its case parameters left out and restored from the revision) and
 * one queue message per chunk. A worker stores a chunk's result with a conditional update, so a chunk retried after
 * a lost worker is counted once; the last chunk of a stage, under the job row's lock, replays the generator with
 * every stored result to make the next stage, or assembles the run, stores it with the server's verification and
 * ends the job. Everything a stage needs is in the database, so a restart of the server or of any worker loses
 * nothing, and the same generator fed the same results in the same order gives the same digest as the browser.
 */
import { randomUUID } from 'node:crypto';
import { deserialize, serialize } from 'node:v8';
import type PgBoss from 'pg-boss';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import type { CaseParams } from '../../shared/case/case-schema';
import { parseCase } from '../../shared/case/validate';
import type { EngineTask, TaskResult } from '../../shared/engine/engine-task';
import { makeRunRecord, type RunResult, type RunSettings } from '../../shared/engine/run-record';
import type { JobContext } from '../../shared/engine/run-job';
import { runJob } from '../../shared/engine/run-kinds';
import { Run, RunVerification } from '../db/models';
import { audit } from '../services/case-service';
import { jsonSummary, verificationRow } from '../services/run-verifier';
import { decodeChunkResult, encodeChunkResult } from './chunk-codec';
import { mailJobEnd, type JobMailOptions } from './job-mail';
import { queueChunks, type ChunkMessage } from './queue';

/**
 * How the queue drives a job: a stage costs a queue round trip (a poll and a transaction, about half a second), far
 * more than a typical task, so jobs use few stages (a sweep bisects each threshold in one task).
 */
const QUEUE_CONTEXT: JobContext = { workers: 1, costlyStages: true };

/** A stage still to compute, or the run's result. */
type Planned = { done: false; stage: number; tasks: EngineTask[]; span: readonly [number, number] } | { done: true; result: RunResult };

/**
 * Replays the run's job over the results of the stages already computed (in stage order, each in task order) and
 * says what comes next. Empty stages (a sweep without thresholds) are answered at once and not numbered.
 */
export function planNext(params: CaseParams, settings: RunSettings, computed: readonly TaskResult[][]): Planned {
  const job = runJob(params, settings, QUEUE_CONTEXT);
  let step = job.next();
  let stage = 0;
  while (!step.done) {
    if (step.value.tasks.length === 0) {
      step = job.next([]);
      continue;
    }
    if (stage === computed.length) return { done: false, stage, tasks: step.value.tasks, span: step.value.span };
    step = job.next(computed[stage]);
    stage += 1;
  }
  return { done: true, result: step.value };
}

/** A task as stored: without the case parameters when they are the revision's (nearly every task). */
export function encodeTask(task: EngineTask, params: CaseParams): Buffer {
  const shared = (task as { params?: unknown }).params === params;
  const stored = shared ? { ...task, params: undefined } : task;
  return serialize({ shared, task: stored });
}

export function decodeTask(bytes: Buffer, params: CaseParams): EngineTask {
  const { shared, task } = deserialize(bytes) as { shared: boolean; task: EngineTask };
  return shared ? ({ ...task, params } as EngineTask) : task;
}

/** The job row fields the store works with. */
interface JobRow {
  id: string;
  lab_id: string;
  case_id: string;
  revision_id: string;
  kind: string;
  settings: RunSettings;
  rerun_of: string | null;
  state: string;
  stage: number;
  chunks_total: number;
  chunks_done: number;
  submitted_by: string | null;
}

const ACTIVE = `state IN ('queued', 'running')`;

/** Parsed parameters of recent revisions: a revision never changes, and a worker takes many chunks of one. */
const paramsCache = new Map<string, CaseParams>();
const PARAMS_CACHE_SIZE = 32;

async function revisionParams(sequelize: Sequelize, revisionId: string, transaction?: Transaction): Promise<CaseParams> {
  const cached = paramsCache.get(revisionId);
  if (cached) return cached;
  const params = await readRevisionParams(sequelize, revisionId, transaction);
  if (paramsCache.size >= PARAMS_CACHE_SIZE) paramsCache.delete(paramsCache.keys().next().value as string);
  paramsCache.set(revisionId, params);
  return params;
}

async function readRevisionParams(sequelize: Sequelize, revisionId: string, transaction?: Transaction): Promise<CaseParams> {
  const [row] = await sequelize.query<{ params: unknown }>('SELECT params FROM revisions WHERE id = $1', {
    bind: [revisionId], type: QueryTypes.SELECT, transaction,
  });
  const parsed = parseCase(row?.params);
  if (!parsed.ok) throw new PoisonJobError('the revision parameters no longer validate');
  return parsed.value;
}

/** A job that cannot go on whatever worker tries: it fails at once with this message, without retries. */
export class PoisonJobError extends Error {
  override name = 'PoisonJobError';
}

/** Writes a stage's chunks and queues one message each, inside `transaction`. */
export async function insertStage(
  sequelize: Sequelize, boss: PgBoss, transaction: Transaction, jobId: string, params: CaseParams,
  plan: Extract<Planned, { done: false }>,
): Promise<void> {
  const messages: ChunkMessage[] = plan.tasks.map((_t, idx) => ({ jobId, stage: plan.stage, idx }));
  // A few rows per statement keeps each bind list small whatever the stage's size.
  for (let from = 0; from < plan.tasks.length; from += 200) {
    const part = plan.tasks.slice(from, from + 200);
    const values = part.map((_t, i) => `($1, $2, $${3 + 2 * i}, $${4 + 2 * i})`).join(', ');
    const bind: unknown[] = [jobId, plan.stage];
    part.forEach((task, i) => bind.push(from + i, encodeTask(task, params)));
    await sequelize.query(`INSERT INTO job_chunks (job_id, stage, idx, task) VALUES ${values}`, { bind, transaction });
  }
  await sequelize.query(
    `UPDATE jobs SET stage = $2, chunks_total = $3, chunks_done = 0, span_from = $4, span_to = $5, progress = GREATEST(progress, $4), updated_at = now() WHERE id = $1`,
    { bind: [jobId, plan.stage, plan.tasks.length, plan.span[0], plan.span[1]], transaction },
  );
  await queueChunks(boss, messages, transaction);
}

/** Creates a job for a revision and queues its first stage, all or nothing. Returns the job id. */
export async function createJob(
  sequelize: Sequelize, boss: PgBoss,
  input: { labId: string; caseId: string; revisionId: string; revision: number; params: CaseParams; settings: RunSettings; rerunOf: string | null; submittedBy: string },
): Promise<string> {
  const plan = planNext(input.params, input.settings, []);
  if (plan.done) throw new PoisonJobError('this run has nothing to compute on the workers');
  const id = randomUUID();
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(
      `INSERT INTO jobs (id, lab_id, case_id, revision_id, kind, settings, rerun_of, state, chunks_total, submitted_by)
       VALUES ($1, $2, $3, $4, $5, $6, $7, 'queued', 0, $8)`,
      {
        bind: [id, input.labId, input.caseId, input.revisionId, input.settings.kind, JSON.stringify(input.settings), input.rerunOf, input.submittedBy],
        transaction,
      },
    );
    await insertStage(sequelize, boss, transaction, id, input.params, plan);
    await audit(transaction, input.submittedBy, input.labId, 'job.submitted', input.caseId, {
      revision: input.revision, jobId: id, kind: input.settings.kind, ...(input.rerunOf ? { rerunOf: input.rerunOf } : {}),
    });
  });
  return id;
}

/** A chunk to compute, or null when there is nothing to do (job over, stage passed, chunk already done). */
export async function takeChunk(sequelize: Sequelize, message: ChunkMessage, worker: string): Promise<EngineTask | null> {
  const rows = await sequelize.query<{ task: Buffer; revision_id: string }>(
    `UPDATE job_chunks c SET attempts = c.attempts + 1, worker = $4
       FROM jobs j
      WHERE c.job_id = $1 AND c.stage = $2 AND c.idx = $3 AND c.state = 'pending'
        AND j.id = c.job_id AND j.${ACTIVE} AND j.stage = c.stage
      RETURNING c.task, j.revision_id`,
    { bind: [message.jobId, message.stage, message.idx, worker], type: QueryTypes.SELECT },
  );
  const row = rows[0];
  if (!row) return null;
  await sequelize.query(
    `UPDATE jobs SET state = 'running', started_at = COALESCE(started_at, now()), updated_at = now() WHERE id = $1 AND state = 'queued'`,
    { bind: [message.jobId] },
  );
  return decodeTask(row.task, await revisionParams(sequelize, row.revision_id));
}

/** Ids of the given jobs that are no longer active. */
export async function inactiveJobs(sequelize: Sequelize, jobIds: readonly string[]): Promise<Set<string>> {
  if (jobIds.length === 0) return new Set();
  const rows = await sequelize.query<{ id: string }>(`SELECT id FROM jobs WHERE id = ANY($1::uuid[]) AND NOT (${ACTIVE})`, {
    bind: [jobIds], type: QueryTypes.SELECT,
  });
  return new Set(rows.map((r) => r.id));
}

/**
 * Stores a chunk's result and moves the job on. Returns what happened, for the log: `counted` (stored, stage not
 * over), `stage` (next stage queued), `finished`, or `ignored` (job over, stage passed, or counted before).
 */
export async function completeChunk(
  sequelize: Sequelize, boss: PgBoss, message: ChunkMessage, result: TaskResult, mail?: JobMailOptions,
): Promise<'counted' | 'stage' | 'finished' | 'ignored'> {
  const bytes = encodeChunkResult(result);
  return sequelize.transaction(async (transaction) => {
    const [job] = await sequelize.query<JobRow>(`SELECT * FROM jobs WHERE id = $1 FOR UPDATE`, {
      bind: [message.jobId], type: QueryTypes.SELECT, transaction,
    });
    if (!job || !['queued', 'running'].includes(job.state) || job.stage !== message.stage) return 'ignored';
    // Only a pending chunk turns done: a retried chunk finishing twice is counted once.
    const stored = await sequelize.query(
      `UPDATE job_chunks SET state = 'done', result = $4, finished_at = now()
        WHERE job_id = $1 AND stage = $2 AND idx = $3 AND state = 'pending' RETURNING idx`,
      { bind: [message.jobId, message.stage, message.idx, bytes], type: QueryTypes.SELECT, transaction },
    );
    if (stored.length === 0) return 'ignored';
    const done = job.chunks_done + 1;
    await sequelize.query(
      `UPDATE jobs SET chunks_done = chunks_done + 1, chunks_finished = chunks_finished + 1,
              progress = GREATEST(progress, span_from + (span_to - span_from) * (chunks_done + 1)::double precision / GREATEST(chunks_total, 1)),
              updated_at = now()
        WHERE id = $1`,
      { bind: [job.id], transaction },
    );
    if (done < job.chunks_total) return 'counted';
    return advance(sequelize, boss, transaction, job, mail);
  });
}

/** Every chunk of the job done so far: the next stage, or the stored run. Runs under the job row's lock. */
async function advance(
  sequelize: Sequelize, boss: PgBoss, transaction: Transaction, job: JobRow, mail: JobMailOptions | undefined,
): Promise<'stage' | 'finished'> {
  const params = await revisionParams(sequelize, job.revision_id, transaction);
  const rows = await sequelize.query<{ stage: number; result: Buffer }>(
    `SELECT stage, result FROM job_chunks WHERE job_id = $1 AND state = 'done' ORDER BY stage, idx`,
    { bind: [job.id], type: QueryTypes.SELECT, transaction },
  );
  const computed: TaskResult[][] = [];
  for (const row of rows) (computed[row.stage] ??= []).push(decodeChunkResult(row.result));
  let plan: Planned;
  try {
    plan = planNext(params, job.settings, computed);
  } catch (error: unknown) {
    throw new PoisonJobError(`the run could not be assembled: ${error instanceof Error ? error.message : String(error)}`);
  }
  if (!plan.done) {
    await insertStage(sequelize, boss, transaction, job.id, params, plan);
    return 'stage';
  }
  await finishJob(sequelize, transaction, job, params, plan.result);
  await mailJobEnd(sequelize, transaction, job.id, mail);
  return 'finished';
}

/** Stores the assembled run with the server's verification (or, for a rerun, compares it), and ends the job. */
async function finishJob(sequelize: Sequelize, transaction: Transaction, job: JobRow, params: CaseParams, result: RunResult): Promise<void> {
  const record = makeRunRecord(params, job.settings, result);
  const [revision] = await sequelize.query<{ number: number }>('SELECT number FROM revisions WHERE id = $1', {
    bind: [job.revision_id], type: QueryTypes.SELECT, transaction,
  });
  let runId: string | null;
  let rerunMatches: boolean | null = null;
  if (job.rerun_of) {
    const original = await Run.findByPk(job.rerun_of, { transaction });
    runId = original?.id ?? null;
    rerunMatches = original ? original.resultDigest === record.resultDigest : null;
    if (original && (await RunVerification.count({ where: { runId: original.id }, transaction })) === 0) {
      await RunVerification.create(verificationRow(original, { params, result }), { transaction });
    }
    await audit(transaction, job.submitted_by, job.lab_id, 'run.rerun', job.case_id, {
      revision: revision?.number, jobId: job.id, runId, matches: rerunMatches,
    });
  } else {
    const run = await Run.create(
      {
        revisionId: job.revision_id,
        kind: record.kind,
        settings: record.settings as unknown as Run['settings'],
        summary: jsonSummary(record.summary),
        resultDigest: record.resultDigest,
        engineVersion: record.engineVersion,
        authorId: job.submitted_by,
      },
      { transaction },
    );
    runId = run.id;
    // The workers are the server's own engine: the run is verified by construction, its result stored at once.
    await RunVerification.create(verificationRow(run, { params, result }), { transaction });
    await audit(transaction, job.submitted_by, job.lab_id, 'run.stored', job.case_id, {
      revision: revision?.number, runId, kind: record.kind, jobId: job.id,
    });
  }
  await sequelize.query(
    `UPDATE jobs SET state = 'succeeded', progress = 1, run_id = $2, rerun_matches = $3, finished_at = now(), updated_at = now() WHERE id = $1`,
    { bind: [job.id, runId, rerunMatches], transaction },
  );
  await sequelize.query('DELETE FROM job_chunks WHERE job_id = $1', { bind: [job.id], transaction });
}

/** Fails an active job with `message` (in words) and drops its chunks. False when it had already ended. */
export async function failJob(sequelize: Sequelize, jobId: string, message: string, mail?: JobMailOptions): Promise<boolean> {
  return sequelize.transaction(async (transaction) => {
    const rows = await sequelize.query<{ id: string; lab_id: string; case_id: string; submitted_by: string | null }>(
      `UPDATE jobs SET state = 'failed', error = $2, finished_at = now(), updated_at = now() WHERE id = $1 AND ${ACTIVE}
       RETURNING id, lab_id, case_id, submitted_by`,
      { bind: [jobId, message.slice(0, 2000)], type: QueryTypes.SELECT, transaction },
    );
    const job = rows[0];
    if (!job) return false;
    await sequelize.query('DELETE FROM job_chunks WHERE job_id = $1', { bind: [jobId], transaction });
    await audit(transaction, null, job.lab_id, 'job.failed', job.case_id, { jobId, error: message.slice(0, 500) });
    await mailJobEnd(sequelize, transaction, jobId, mail);
    return true;
  });
}

/** Cancels an active job; false when it had already ended. */
export async function cancelJob(sequelize: Sequelize, jobId: string, actorId: string): Promise<boolean> {
  return sequelize.transaction(async (transaction) => {
    const rows = await sequelize.query<{ lab_id: string; case_id: string }>(
      `UPDATE jobs SET state = 'cancelled', cancelled_by = $2, finished_at = now(), updated_at = now() WHERE id = $1 AND ${ACTIVE}
       RETURNING lab_id, case_id`,
      { bind: [jobId, actorId], type: QueryTypes.SELECT, transaction },
    );
    const job = rows[0];
    if (!job) return false;
    await sequelize.query('DELETE FROM job_chunks WHERE job_id = $1', { bind: [jobId], transaction });
    await audit(transaction, actorId, job.lab_id, 'job.cancelled', job.case_id, { jobId });
    return true;
  });
}
