/**
 * A pool of engine workers behind RxJS Observables.
 *
 * Each public method splits its job into fixed chunks (the split depends only on the job, never on the number of
 * workers, and every chunk's numbers are independent of the others), hands the chunks to idle workers, reports
 * progress as a non-decreasing fraction, and emits the assembled result once. Unsubscribing cancels: queued
 * chunks are dropped and workers busy with the job are terminated (their computation is synchronous, so a message
 * could not reach them) and replaced on demand. Works over any `WorkerLike`, so the browser passes Web Workers and
 * Node passes worker_threads (node-pool.ts).
 */
import { Observable } from 'rxjs';
import type { CaseParams } from '../case/case-schema';
import { assembleChart, type Grid2, type StabilityChart } from '../engine/chart';
import type { FitResult } from '../engine/fit';
import type { FloquetAnalysis } from '../engine/floquet';
import type { MotionResult } from '../engine/motion';
import type { OverlayResult } from '../engine/trace-drive';
import {
  assembleCellMap, assembleSweep, thresholdBrackets, sweepValues, type BasinCell, type CellMap, type MapCell,
  type SweepPoint, type SweepResult, type SweepSpec, type SweepThreshold,
} from '../engine/sweep';
import {
  isEngineResponse, type EngineRequest, type EngineResponse, type EngineResult, type FitRequest, type OverlayRequest,
} from './protocol';

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

/** Partial results of chunked jobs. */
export interface RowsPartial<V> {
  rowFrom: number;
  rowTo: number;
  values: V;
}

type DistributiveOmit<T, K extends PropertyKey> = T extends unknown ? Omit<T, K> : never;
/** A request before the pool gives it an id. */
export type RequestBody = DistributiveOmit<EngineRequest, 'id'>;

/** Rows per chunk of charts and maps, points per chunk of sweeps: fixed so the split never depends on the pool. */
export const CHART_ROWS_PER_CHUNK = 8;
export const MAP_ROWS_PER_CHUNK = 1;
export const SWEEP_POINTS_PER_CHUNK = 2;

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

/** Thrown inside a cancelled job's orchestration; never reaches subscribers. */
class JobCancelled extends Error {}

interface JobContext {
  /** Runs the requests on the pool; progress of the whole call spans [spanFrom, spanTo] of the job. */
  runAll(
    requests: RequestBody[], spanFrom: number, spanTo: number, onChunk?: (result: EngineResult) => void,
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

  /** Simulated motion of one case. */
  motion(params: CaseParams): Observable<PoolEvent<MotionResult>> {
    return this.job(async (ctx) => {
      const [r] = await ctx.runAll([{ type: 'motion', params }], 0, 1);
      if (r.kind !== 'motion') throw new Error(`unexpected ${r.kind} result`);
      return r.motion;
    });
  }

  /** Free-swing fit of a bench trace. */
  fit(request: Omit<FitRequest, 'id' | 'type'>): Observable<PoolEvent<FitResult>> {
    return this.job(async (ctx) => {
      const [r] = await ctx.runAll([{ type: 'fit', ...request }], 0, 1);
      if (r.kind !== 'fit') throw new Error(`unexpected ${r.kind} result`);
      return r.fit;
    });
  }

  /** Driven bench trace against the case's simulation with the drive read from the pivot column. */
  overlay(request: Omit<OverlayRequest, 'id' | 'type'>): Observable<PoolEvent<OverlayResult>> {
    return this.job(async (ctx) => {
      const [r] = await ctx.runAll([{ type: 'overlay', ...request }], 0, 1);
      if (r.kind !== 'overlay') throw new Error(`unexpected ${r.kind} result`);
      return r.overlay;
    });
  }

  /** Floquet analysis with drive limits and margins. */
  margins(params: CaseParams, relTolerance?: number): Observable<PoolEvent<FloquetAnalysis>> {
    return this.job(async (ctx) => {
      const [r] = await ctx.runAll([{ type: 'margins', params, relTolerance }], 0, 1);
      if (r.kind !== 'margins') throw new Error(`unexpected ${r.kind} result`);
      return r.analysis;
    });
  }

  /** Stability chart, split into row ranges. */
  chart(params: CaseParams, grid: Grid2): Observable<PoolEvent<StabilityChart, RowsPartial<Float64Array>>> {
    return this.job<StabilityChart, RowsPartial<Float64Array>>(async (ctx, partial) => {
      const requests: RequestBody[] = rowRanges(grid.y.count, CHART_ROWS_PER_CHUNK).map(([rowFrom, rowTo]) => ({
        type: 'chart-chunk', params, grid, rowFrom, rowTo,
      }));
      const parts = await ctx.runAll(requests, 0, 1, (p) => {
        if (p.kind === 'chart-rows') partial({ rowFrom: p.rowFrom, rowTo: p.rowTo, values: p.values.slice() });
      });
      const values = new Float64Array(grid.x.count * grid.y.count);
      for (const p of parts) {
        if (p.kind !== 'chart-rows') throw new Error(`unexpected ${p.kind} result`);
        values.set(p.values, p.rowFrom * grid.x.count);
      }
      return assembleChart(params, grid, values);
    });
  }

  /** 1-D sweep: points in chunks, then each threshold between differing outcomes by bisection. */
  sweep(params: CaseParams, spec: SweepSpec): Observable<PoolEvent<SweepResult, SweepPoint[]>> {
    return this.job<SweepResult, SweepPoint[]>(async (ctx, partial) => {
      const values = sweepValues(spec);
      const requests: RequestBody[] = rowRanges(values.length, SWEEP_POINTS_PER_CHUNK).map(([from, to]) => ({
        type: 'sweep-chunk', params, spec, part: { kind: 'points', from, to },
      }));
      const pointParts = await ctx.runAll(requests, 0, 0.7, (p) => {
        if (p.kind === 'sweep-points') partial(p.points);
      });
      const points: SweepPoint[] = [];
      for (const p of pointParts) {
        if (p.kind !== 'sweep-points') throw new Error(`unexpected ${p.kind} result`);
        points.push(...p.points);
      }
      const brackets = thresholdBrackets(points);
      const thresholdParts = await ctx.runAll(
        brackets.map((b) => ({ type: 'sweep-chunk', params, spec, part: { kind: 'thresholds', brackets: [b] } })),
        0.7, 1,
      );
      const thresholds: SweepThreshold[] = [];
      for (const p of thresholdParts) {
        if (p.kind !== 'sweep-thresholds') throw new Error(`unexpected ${p.kind} result`);
        thresholds.push(...p.thresholds);
      }
      return assembleSweep(spec, points, thresholds);
    });
  }

  /** Outcome map over two case fields. */
  outcomeMap(params: CaseParams, grid: Grid2): Observable<PoolEvent<CellMap, RowsPartial<MapCell[]>>> {
    return this.job<CellMap, RowsPartial<MapCell[]>>(async (ctx, partial) => {
      const requests: RequestBody[] = rowRanges(grid.y.count, MAP_ROWS_PER_CHUNK).map(([rowFrom, rowTo]) => ({
        type: 'map-chunk', params, grid, rowFrom, rowTo,
      }));
      const cells: MapCell[] = [];
      const rows = await ctx.runAll(requests, 0, 1, (p) => {
        if (p.kind === 'map-rows') partial({ rowFrom: p.rowFrom, rowTo: p.rowTo, values: p.cells });
      });
      for (const p of rows) {
        if (p.kind !== 'map-rows') throw new Error(`unexpected ${p.kind} result`);
        cells.push(...p.cells);
      }
      return assembleCellMap(grid, cells);
    });
  }

  /** Basin map over start angle (x) and start rate (y). */
  basin(params: CaseParams, grid: Grid2): Observable<PoolEvent<CellMap, RowsPartial<BasinCell[]>>> {
    return this.job<CellMap, RowsPartial<BasinCell[]>>(async (ctx, partial) => {
      const requests: RequestBody[] = rowRanges(grid.y.count, MAP_ROWS_PER_CHUNK).map(([rowFrom, rowTo]) => ({
        type: 'basin-chunk', params, grid, rowFrom, rowTo,
      }));
      const cells: BasinCell[] = [];
      const rows = await ctx.runAll(requests, 0, 1, (p) => {
        if (p.kind === 'basin-rows') partial({ rowFrom: p.rowFrom, rowTo: p.rowTo, values: p.cells });
      });
      for (const p of rows) {
        if (p.kind !== 'basin-rows') throw new Error(`unexpected ${p.kind} result`);
        cells.push(...p.cells);
      }
      return assembleCellMap(grid, cells);
    });
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
          task.reject(new Error(msg.message));
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

/** [from, to) ranges of `size` covering 0..count. */
export function rowRanges(count: number, size: number): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  for (let from = 0; from < count; from += size) out.push([from, Math.min(count, from + size)]);
  return out;
}
