/**
 * A pool of engine workers behind RxJS Observables.
 *
 * Each public method drives a job (shared/engine/run-job.ts; one per run kind in the run registry, run-kinds.ts):
 * the job's tasks come in fixed chunks (the split depends only on the job, never on the number of workers, and every
 * chunk's numbers are independent of the others); the pool hands them to idle workers, reports
 * progress as a non-decreasing fraction, and emits the assembled result once. Unsubscribing cancels: queued
 * chunks are dropped and workers busy with the job are terminated (their computation is synchronous, so a message
 * could not reach them) and replaced on demand. Works over any `WorkerLike`, so the browser passes Web Workers and
 * Node passes worker_threads (node-pool.ts).
 */
import { Observable } from 'rxjs';
import type { CaseParams } from '../case/case-schema';
import type { Grid2, StabilityChart } from '../engine/chart';
import type { EngineTask, FitTask, OverlayTask, TaskResult } from '../engine/engine-task';
import type { FitResult } from '../engine/fit';
import type { FloquetAnalysis } from '../engine/floquet';
import type { HoldProbResult, HoldSample } from '../engine/holdprob';
import type { LeanestResult } from '../engine/leanest';
import type { MotionResult } from '../engine/motion';
import type { OverlayResult } from '../engine/trace-drive';
import { expectResult, type RunJob } from '../engine/run-job';
import {
  runJob, runKind, type HoldProbSettings, type LeanestSettings, type RowsPartial, type RunKind, type RunPartialOf, type RunResult, type RunSettings, type RunSettingsOf,
  type RunValueOf,
} from '../engine/run-kinds';
import type { BasinCell, CellMap, MapCell, SweepPoint, SweepResult, SweepSpec } from '../engine/sweep';
import { isEngineResponse, type EngineRequest, type EngineResponse, type EngineResult } from './protocol';

export type { RowsPartial } from '../engine/run-kinds';

/** The part of a Worker the pool uses; Web Workers fit as they are, worker_threads through an adapter. */
export interface WorkerLike {
  postMessage(message: EngineRequest): void;
  onmessage: ((event: { data: EngineResponse }) => void) | null;
  onerror: ((event: { message?: string }) => void) | null;
  terminate(): void;
}

export type WorkerFactory = () => WorkerLike;

/**
 * The structural part of a browser `Worker` the adapter needs (no DOM types in shared code; a DOM Worker fits).
 * Handlers are typed `unknown` so the DOM's MessageEvent handler types do not have to match ours.
 */
export interface WebWorkerHandle {
  postMessage(message: unknown): void;
  terminate(): void;
  onmessage: unknown;
  onerror: unknown;
}

/**
 * Adapts a browser Web Worker: `new WorkerPool(() => fromWebWorker(new Worker(new URL(...), { type: 'module' })), n)`.
 * Messages that are not engine responses are ignored.
 */
export function fromWebWorker(worker: WebWorkerHandle): WorkerLike {
  const like: WorkerLike = {
    postMessage: (message) => worker.postMessage(message),
    onmessage: null,
    onerror: null,
    terminate: () => worker.terminate(),
  };
  worker.onmessage = (event: unknown) => {
    const data = typeof event === 'object' && event !== null && 'data' in event ? event.data : undefined;
    if (isEngineResponse(data)) like.onmessage?.({ data });
  };
  worker.onerror = (event: unknown) => {
    const message = typeof event === 'object' && event !== null && 'message' in event ? String(event.message) : undefined;
    like.onerror?.({ message });
  };
  return like;
}

/**
 * What a job's Observable emits: progress fractions, for chunked jobs a `partial` event per finished chunk (so a
 * plot can fill in while the job runs; chunks arrive in completion order, each says where it belongs), then one
 * result.
 */
export type PoolEvent<T, P = never> =
  | { type: 'progress'; fraction: number }
  | { type: 'result'; value: T }
  | ([P] extends [never] ? never : { type: 'partial'; value: P });

interface Task {
  jobId: number;
  id: string;
  request: EngineRequest;
  onProgress(fraction: number): void;
  resolve(result: EngineResult): void;
  reject(error: Error): void;
}

interface Slot {
  worker: WorkerLike | null;
  task: Task | null;
}

/** The engine answered a task with an error (input it cannot compute), as opposed to a worker that was lost. */
export class EngineTaskError extends Error {
  override name = 'EngineTaskError';
}

/** Thrown inside a cancelled job's orchestration; never reaches subscribers. */
class JobCancelled extends Error {}

interface JobContext {
  /** Runs the requests on the pool; progress of the whole call spans [spanFrom, spanTo] of the job. */
  runAll(
    requests: EngineTask[], spanFrom: number, spanTo: number, onChunk?: (result: EngineResult) => void,
  ): Promise<EngineResult[]>;
}

export class WorkerPool {
  private readonly slots: Slot[];
  private readonly queue: Task[] = [];
  private nextId = 1;
  private nextJob = 1;
  private disposed = false;

  /**
   * @param factory creates one worker
   * @param size number of workers (at least 1), normally the number of cores
   */
  constructor(private readonly factory: WorkerFactory, size: number) {
    const n = Math.max(1, Math.floor(Number.isFinite(size) ? size : 1));
    this.slots = Array.from({ length: n }, () => ({ worker: null, task: null }));
  }

  /** Number of workers. */
  get size(): number {
    return this.slots.length;
  }

  /** A run of any kind, computed by the registry's job for it; partial results are not reported. */
  run(params: CaseParams, settings: RunSettings): Observable<PoolEvent<RunResult>> {
    return this.runJob<RunResult, never>(runJob(params, settings, { workers: this.size }), () => undefined);
  }

  /** One engine task as it is (the server's job workers compute a job's chunks one at a time). */
  task(task: EngineTask): Observable<PoolEvent<TaskResult>> {
    return this.runJob<TaskResult, never>(oneTask(task, (r) => r), () => undefined);
  }

  /** Free-swing fit of a bench trace. */
  fit(request: Omit<FitTask, 'type'>): Observable<PoolEvent<FitResult>> {
    return this.runJob<FitResult, never>(oneTask({ type: 'fit', ...request }, (r) => expectResult(r, 'fit').fit), () => undefined);
  }

  /** Driven bench trace against the case's simulation with the drive read from the pivot column. */
  overlay(request: Omit<OverlayTask, 'type'>): Observable<PoolEvent<OverlayResult>> {
    return this.runJob<OverlayResult, never>(
      oneTask({ type: 'overlay', ...request }, (r) => expectResult(r, 'overlay').overlay), () => undefined,
    );
  }

  /** Simulated motion of one case. */
  motion(params: CaseParams): Observable<PoolEvent<MotionResult>> {
    return this.runKind('motion', params, { kind: 'motion' });
  }

  /** Floquet analysis with drive limits and margins. */
  margins(params: CaseParams, relTolerance = 1e-6): Observable<PoolEvent<FloquetAnalysis>> {
    return this.runKind('margins', params, { kind: 'margins', relTolerance });
  }

  /** Stability chart, split into row ranges. */
  chart(params: CaseParams, grid: Grid2): Observable<PoolEvent<StabilityChart, RowsPartial<Float64Array>>> {
    return this.runKind('chart', params, { kind: 'chart', grid });
  }

  /** 1-D sweep: points in chunks, then the thresholds between differing outcomes by bisection in parallel rounds. */
  sweep(params: CaseParams, spec: SweepSpec): Observable<PoolEvent<SweepResult, SweepPoint[]>> {
    return this.runKind('sweep', params, { kind: 'sweep', spec });
  }

  /** Outcome map over two case fields. */
  outcomeMap(params: CaseParams, grid: Grid2): Observable<PoolEvent<CellMap, RowsPartial<MapCell[]>>> {
    return this.runKind('map', params, { kind: 'map', grid });
  }

  /** Basin map over start angle (x) and start rate (y). */
  basin(params: CaseParams, grid: Grid2): Observable<PoolEvent<CellMap, RowsPartial<BasinCell[]>>> {
    return this.runKind('basin', params, { kind: 'basin', grid });
  }

  /** Leanest drive: the chart's row blocks and the limit columns, then the refinement; partials are chart rows. */
  leanest(params: CaseParams, settings: LeanestSettings): Observable<PoolEvent<LeanestResult, RowsPartial<Float64Array>>> {
    return this.runKind('leanest', params, settings);
  }

  /** Hold probability: blocks of samples in chunks of 8; partials are the chunks' samples. */
  holdprob(params: CaseParams, settings: HoldProbSettings): Observable<PoolEvent<HoldProbResult, { from: number; samples: HoldSample[] }>> {
    return this.runKind('holdprob', params, settings);
  }

  /** Terminates every worker; later jobs fail. */
  dispose(): void {
    this.disposed = true;
    for (const task of this.queue.splice(0)) task.reject(new Error('worker pool disposed'));
    for (const slot of this.slots) {
      const task = slot.task;
      slot.worker?.terminate();
      slot.worker = null;
      slot.task = null;
      task?.reject(new Error('worker pool disposed'));
    }
  }

  private runKind<K extends RunKind>(
    kind: K, params: CaseParams, settings: RunSettingsOf<K>,
  ): Observable<PoolEvent<RunValueOf<K>, RunPartialOf<K>>> {
    const def = runKind(kind);
    return this.runJob(def.job(params, settings, { workers: this.size }), (r) => def.partial(r));
  }

  /** Drives a job: each stage's tasks go to idle workers, its results back into the job. */
  private runJob<T, P>(job: RunJob<T>, partialOf: (result: TaskResult) => P | undefined): Observable<PoolEvent<T, P>> {
    return this.job<T, P>(async (ctx, partial) => {
      let step = job.next();
      while (!step.done) {
        const [from, to] = step.value.span;
        const results = await ctx.runAll(step.value.tasks, from, to, (r) => {
          const p = partialOf(r);
          if (p !== undefined) partial(p);
        });
        step = job.next(results);
      }
      return step.value;
    });
  }

  private job<T, P = never>(
    body: (ctx: JobContext, partial: (value: P) => void) => Promise<T>,
  ): Observable<PoolEvent<T, P>> {
    return new Observable<PoolEvent<T, P>>((subscriber) => {
      const jobId = this.nextJob++;
      let cancelled = false;
      let reported = 0;
      const report = (fraction: number): void => {
        const f = Math.min(1, Math.max(reported, fraction));
        if (f > reported && !cancelled) {
          reported = f;
          subscriber.next({ type: 'progress', fraction: f });
        }
      };
      const ctx: JobContext = {
        runAll: (requests, spanFrom, spanTo, onChunk) => {
          if (cancelled) return Promise.reject(new JobCancelled());
          if (requests.length === 0) return Promise.resolve([]);
          const fractions = new Array<number>(requests.length).fill(0);
          const update = (): void => {
            const mean = fractions.reduce((s, f) => s + f, 0) / fractions.length;
            report(spanFrom + (spanTo - spanFrom) * mean);
          };
          return Promise.all(
            requests.map(
              (body, i) =>
                new Promise<EngineResult>((resolve, reject) => {
                  const id = `r${this.nextId++}`;
                  this.enqueue({
                    jobId,
                    id,
                    request: { ...body, id } as EngineRequest,
                    onProgress: (f) => {
                      fractions[i] = Math.max(fractions[i], Math.min(1, f));
                      update();
                    },
                    resolve: (r) => {
                      fractions[i] = 1;
                      if (!cancelled) onChunk?.(r);
                      update();
                      resolve(r);
                    },
                    reject,
                  });
                }),
            ),
          );
        },
      };
      const partial = (value: P): void => {
        if (!cancelled) subscriber.next({ type: 'partial', value } as PoolEvent<T, P>);
      };
      body(ctx, partial).then(
        (value) => {
          if (cancelled) return;
          report(1);
          subscriber.next({ type: 'result', value });
          subscriber.complete();
        },
        (error: unknown) => {
          if (cancelled || error instanceof JobCancelled) return;
          this.cancelJob(jobId);
          subscriber.error(error instanceof Error ? error : new Error(String(error)));
        },
      );
      return () => {
        if (cancelled) return;
        cancelled = true;
        this.cancelJob(jobId);
      };
    });
  }

  private enqueue(task: Task): void {
    if (this.disposed) {
      task.reject(new Error('worker pool disposed'));
      return;
    }
    this.queue.push(task);
    this.dispatch();
  }

  private dispatch(): void {
    for (const slot of this.slots) {
      if (slot.task || this.queue.length === 0) continue;
      const task = this.queue.shift();
      if (!task) return;
      this.start(slot, task);
    }
  }

  private start(slot: Slot, task: Task): void {
    const worker = slot.worker ?? this.spawn(slot);
    slot.task = task;
    worker.postMessage(task.request);
  }

  private spawn(slot: Slot): WorkerLike {
    const worker = this.factory();
    slot.worker = worker;
    worker.onmessage = (event) => {
      const msg = event.data;
      const task = slot.task;
      if (!task || msg.id !== task.id) return;
      switch (msg.type) {
        case 'progress':
          task.onProgress(msg.fraction);
          return;
        case 'result':
          slot.task = null;
          task.resolve(msg.result);
          break;
        case 'error':
          slot.task = null;
          task.reject(new EngineTaskError(msg.message));
          break;
        case 'cancelled':
          slot.task = null;
          task.reject(new JobCancelled());
          break;
      }
      this.dispatch();
    };
    worker.onerror = (event) => {
      const task = slot.task;
      slot.task = null;
      slot.worker = null;
      worker.terminate();
      task?.reject(new Error(`engine worker failed: ${event.message ?? 'unknown error'}`));
      this.dispatch();
    };
    return worker;
  }

  private cancelJob(jobId: number): void {
    for (let i = this.queue.length - 1; i >= 0; i--) {
      if (this.queue[i].jobId === jobId) this.queue.splice(i, 1);
    }
    for (const slot of this.slots) {
      if (slot.task?.jobId === jobId) {
        slot.worker?.terminate();
        slot.worker = null;
        slot.task = null;
      }
    }
    this.dispatch();
  }
}

/** A job of one task. */
function* oneTask<T>(task: EngineTask, read: (result: TaskResult) => T): RunJob<T> {
  const [r] = yield { tasks: [task], span: [0, 1] };
  return read(r);
}
