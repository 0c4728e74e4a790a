/**
 * The server reproduces every stored run. Storing a run queues its id here; the verifier reruns the run's record on
 * the server's own engine, in worker threads off the request path, compares its numbers and digest with what the
 * browser posted (shared/engine/compare-runs.ts), and writes one run_results row: `verified` when the digests are
 * equal and every number agrees, `unreproduced` otherwise (or when the rerun fails), with the server's summary,
 * digest and full result. Until then the run is `pending`.
 *
 * The queue lives in memory only: at start `resumePending()` queues every run that still has no verification, so a
 * restart loses nothing. One run is verified at a time; its sweep, chart or map chunks spread over the threads.
 */
import { last, lastValueFrom } from 'rxjs';
import { UniqueConstraintError, type InferCreationAttributes } from 'sequelize';
import { parseCase } from '../../shared/case/validate';
import type { WorkerPool } from '../../shared/compute/worker-pool';
import { compareRun, comparisonPayload } from '../../shared/engine/compare-runs';
import { parseRunSettingsFor } from '../../shared/engine/run-kinds';
import { makeRunRecord, type RunResult, type RunSettings, type RunSummary } from '../../shared/engine/run-record';
import { ENGINE_VERSION } from '../../shared/engine/version';
import { createEnginePool } from '../compute/engine-pool';
import { Revision, Run, RunVerification } from '../db/models';
import type { Logger } from '../logger';
import { compressResult } from './result-store';

/** What the verifier needs of a stored run. */
export interface RunToVerify {
  id: string;
  kind: string;
  settings: Record<string, unknown>;
  summary: Record<string, unknown>;
  resultDigest: string;
  engineVersion: string;
}

type VerificationRow = Omit<InferCreationAttributes<RunVerification>, 'createdAt'>;

/** The verification row of `run` from the server's own result (or the failure that stopped it). */
export function verificationRow(run: RunToVerify, outcome: { params: unknown; result: RunResult } | { failure: string }): VerificationRow {
  if ('failure' in outcome) {
    return { runId: run.id, state: 'unreproduced', summary: null, resultDigest: null, engineVersion: ENGINE_VERSION, comparison: null, failure: outcome.failure, encoding: null, compressed: null, rawBytes: 0, compressedBytes: 0 };
  }
  const parsed = parseCase(outcome.params);
  if (!parsed.ok) return verificationRow(run, { failure: 'the revision parameters no longer validate' });
  const record = makeRunRecord(parsed.value, run.settings as unknown as RunSettings, outcome.result);
  const comparison = compareRun(
    { id: run.id, kind: run.kind, summary: run.summary as RunSummary, resultDigest: run.resultDigest, engineVersion: run.engineVersion },
    record,
  );
  let stored: ReturnType<typeof compressResult> | null = null;
  let failure: string | null = null;
  try {
    stored = compressResult(outcome.result);
  } catch (error: unknown) {
    failure = error instanceof Error ? error.message : String(error);
  }
  return {
    runId: run.id,
    state: comparison.reproduced && stored ? 'verified' : 'unreproduced',
    summary: jsonSummary(record.summary),
    resultDigest: record.resultDigest,
    engineVersion: record.engineVersion,
    comparison: comparisonPayload(comparison),
    failure,
    encoding: stored?.encoding ?? null,
    compressed: stored?.compressed ?? null,
    rawBytes: stored?.rawBytes ?? 0,
    compressedBytes: stored?.compressedBytes ?? 0,
  };
}

/** A summary as JSON can hold it: non-finite numbers as their names. */
export function jsonSummary(summary: RunSummary): RunSummary {
  return JSON.parse(JSON.stringify(summary, (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? String(v) : v))) as RunSummary;
}

/**
 * Writes the verification of `run` from the server's own result (or the failure that stopped it). Idempotent: a
 * run verified meanwhile (another server process) keeps its first verification.
 */
export async function settleRun(run: RunToVerify, outcome: { params: unknown; result: RunResult } | { failure: string }): Promise<RunVerification | null> {
  try {
    return await RunVerification.create(verificationRow(run, outcome));
  } catch (error: unknown) {
    if (error instanceof UniqueConstraintError) return null;
    throw error;
  }
}

export interface RunVerifierOptions {
  logger?: Pick<Logger, 'info' | 'warn' | 'error'>;
  /** engine threads (default 1: the request path keeps the other core) */
  threads?: number;
  /** the pool factory (tests and benches may pass their own) */
  createPool?: (threads: number) => WorkerPool;
}

export class RunVerifier {
  private pool: WorkerPool | null = null;
  private readonly queue: string[] = [];
  private readonly queued = new Set<string>();
  private current: Promise<void> | null = null;
  private stopped = false;
  private idleWaiters: Array<() => void> = [];

  constructor(private readonly options: RunVerifierOptions = {}) {}

  /** Queues a stored run for verification (once). */
  enqueue(runId: string): void {
    if (this.stopped || this.queued.has(runId)) return;
    this.queued.add(runId);
    this.queue.push(runId);
    this.pump();
  }

  /** Queues every run that has no verification yet; returns how many. */
  async resumePending(): Promise<number> {
    const pending = await Run.findAll({
      attributes: ['id'],
      include: [{ model: RunVerification, as: 'verification', attributes: ['runId'], required: false }],
      where: { '$verification.run_id$': null },
      order: [['createdAt', 'ASC']],
    });
    for (const run of pending) this.enqueue(run.id);
    return pending.length;
  }

  /** Resolves once the queue is empty and nothing is being verified. */
  whenIdle(): Promise<void> {
    if (!this.current && this.queue.length === 0) return Promise.resolve();
    return new Promise((resolve) => this.idleWaiters.push(resolve));
  }

  /** Stops taking work, waits for the run in hand, ends the threads. Queued runs stay pending for the next start. */
  async stop(): Promise<void> {
    this.stopped = true;
    this.queue.length = 0;
    await this.current;
    this.pool?.dispose();
    this.pool = null;
    for (const resolve of this.idleWaiters.splice(0)) resolve();
  }

  private pump(): void {
    if (this.current || this.stopped) return;
    const runId = this.queue.shift();
    if (runId === undefined) {
      for (const resolve of this.idleWaiters.splice(0)) resolve();
      return;
    }
    this.current = this.verify(runId)
      .catch((error: unknown) => this.options.logger?.error({ err: error, runId }, 'run verification failed'))
      .finally(() => {
        this.queued.delete(runId);
        this.current = null;
        this.pump();
      });
  }

  private enginePool(): WorkerPool {
    const threads = this.options.threads ?? 1;
    this.pool ??= this.options.createPool ? this.options.createPool(threads) : createEnginePool(threads);
    return this.pool;
  }

  private async verify(runId: string): Promise<void> {
    const run = await Run.findByPk(runId);
    if (!run || (await RunVerification.count({ where: { runId } })) > 0) return;
    const revision = await Revision.findByPk(run.revisionId, { attributes: ['params'] });
    if (!revision) return;
    const parsed = parseCase(revision.params);
    let outcome: { params: unknown; result: RunResult } | { failure: string };
    if (!parsed.ok) {
      outcome = { failure: 'the revision parameters no longer validate' };
    } else {
      try {
        const settings = parseRunSettingsFor(parsed.value, run.settings);
        if (!settings.ok) throw new Error(`settings.${settings.field}: ${settings.message}`);
        const result = await lastValueFrom(this.enginePool().run(parsed.value, settings.value).pipe(last()));
        if (result.type !== 'result') throw new Error('the engine pool ended without a result');
        outcome = { params: parsed.value, result: result.value };
      } catch (error: unknown) {
        if (this.stopped) return;
        outcome = { failure: error instanceof Error ? error.message : String(error) };
      }
    }
    const row = await settleRun(run, outcome);
    this.options.logger?.info({ runId, state: row?.state ?? 'already settled' }, 'run verified');
  }
}
