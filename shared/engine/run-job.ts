/**
 * Run jobs: how a run is split into engine tasks, written once per kind and driven either in this thread
 * (`runJobInThread`: the CLI, the server's recheck) or by a worker pool (shared/compute/worker-pool.ts).
 *
 * A job is a generator. Each `yield` hands over one stage, a list of independent tasks, and receives their results in
 * the same order; a later stage may depend on an earlier one's results (a sweep's threshold brackets come from its
 * points). The generator's return value is the run's result. Because both drivers run the same generator over the
 * same tasks, a run's numbers do not depend on where or on how many workers it ran.
 */
import { computeTask, type EngineTask, type TaskResult } from './engine-task';
import type { ChunkHooks } from './sweep';

/** One stage of a job: tasks to compute in any order, and the span [from, to] of the job's progress they cover. */
export interface JobStage {
  tasks: EngineTask[];
  span: readonly [number, number];
}

/**
 * What a driver tells a job: how many tasks it computes at once (1 in this thread, the pool's size on a pool) and
 * whether a stage costs a round trip far longer than a task (the server's job queue). A job's numbers must not
 * depend on it; it may only decide how much work to do ahead of need and in how many stages (the sweep's threshold
 * rounds evaluate midpoints the bisection may take later, for idle workers).
 */
export interface JobContext {
  workers: number;
  costlyStages?: boolean;
}

/** The context of a job computed in this thread. */
export const IN_THREAD: JobContext = { workers: 1 };

/** A job yielding stages, receiving their results, returning the run's result. */
export type RunJob<T> = Generator<JobStage, T, TaskResult[]>;

/** Computes every task of a job in this thread, one after another. Throws EngineCancelledError when cancelled. */
export function runJobInThread<T>(job: RunJob<T>, hooks: ChunkHooks = {}): T {
  let step = job.next();
  while (!step.done) {
    const { tasks, span } = step.value;
    const [from, to] = span;
    const results = tasks.map((task, i) =>
      computeTask(task, {
        shouldCancel: hooks.shouldCancel,
        onProgress: (f) => hooks.onProgress?.(from + ((to - from) * (i + f)) / tasks.length),
      }),
    );
    step = job.next(results);
  }
  return step.value;
}

/** [from, to) ranges of `size` covering 0..count. */
export function rowRanges(count: number, size: number): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  for (let from = 0; from < count; from += size) out.push([from, Math.min(count, from + size)]);
  return out;
}

/** Narrows a task result to the expected kind; anything else is a programming error. */
export function expectResult<K extends TaskResult['kind']>(result: TaskResult, kind: K): Extract<TaskResult, { kind: K }> {
  if (result.kind !== kind) throw new Error(`unexpected ${result.kind} result, expected ${kind}`);
  return result as Extract<TaskResult, { kind: K }>;
}
