/**
 * Messages between the engine worker pool and its workers (browser Web Workers or Node worker_threads).
 *
 * Requests and responses are discriminated unions on `type`; every message carries the request `id` so a worker's
 * replies can be matched. Typed arrays in results are transferred, not copied. A worker handles one request at a
 * time and answers with any number of `progress` messages and then exactly one of `result`, `error` or
 * `cancelled`.
 */
import { ENGINE_TASK_TYPES, type EngineTask, type FitTask, type OverlayTask, type TaskResult } from '../engine/engine-task';

type WithId<T> = T extends unknown ? T & { id: string } : never;

/** One engine task (shared/engine/engine-task.ts) with the id its replies carry. */
export type EngineRequest = WithId<EngineTask>;

export type FitRequest = FitTask & { id: string };
export type OverlayRequest = OverlayTask & { id: string };

/** Result payloads, one per request type. */
export type EngineResult = TaskResult;

export interface ProgressResponse {
  type: 'progress';
  id: string;
  /** Fraction of this request done, 0..1, non-decreasing. */
  fraction: number;
}

export interface ResultResponse {
  type: 'result';
  id: string;
  result: EngineResult;
}

export interface ErrorResponse {
  type: 'error';
  id: string;
  message: string;
}

export interface CancelledResponse {
  type: 'cancelled';
  id: string;
}

export type EngineResponse = ProgressResponse | ResultResponse | ErrorResponse | CancelledResponse;

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null;
}

const RESPONSE_TYPES: readonly string[] = ['progress', 'result', 'error', 'cancelled'];

/** Shape check of an incoming request (the case itself is validated by the handler). */
export function isEngineRequest(value: unknown): value is EngineRequest {
  return isRecord(value) && typeof value['id'] === 'string' && (ENGINE_TASK_TYPES as readonly string[]).includes(String(value['type']));
}

/** Shape check of an incoming response. */
export function isEngineResponse(value: unknown): value is EngineResponse {
  return isRecord(value) && typeof value['id'] === 'string' && RESPONSE_TYPES.includes(String(value['type']));
}

/** The array buffers inside a result, to transfer rather than copy. */
export function resultTransferables(result: EngineResult): ArrayBuffer[] {
  const buffers: ArrayBuffer[] = [];
  const visit = (value: unknown, depth: number): void => {
    if (depth > 4 || !isRecord(value)) return;
    if (ArrayBuffer.isView(value)) {
      const buffer = value.buffer;
      if (buffer instanceof ArrayBuffer && !buffers.includes(buffer)) buffers.push(buffer);
      return;
    }
    for (const key of Object.keys(value)) visit(value[key], depth + 1);
  };
  visit(result, 0);
  return buffers;
}
