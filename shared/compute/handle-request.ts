/**
 * The one request handler behind every engine worker (browser Web Worker, Node worker_threads): validates the
 * case, calls the engine, reports progress and answers with exactly one result, error or cancelled message.
 */
import { parseCase } from '../case/validate';
import { computeTask, type TaskResult } from '../engine/engine-task';
import { EngineCancelledError } from '../engine/motion';
import { isEngineRequest, resultTransferables, type EngineRequest, type EngineResponse } from './protocol';

/** Sends a response; `transfer` lists buffers to move instead of copy. */
export type PostResponse = (response: EngineResponse, transfer: ArrayBuffer[]) => void;

/** Minimum spacing of progress messages, as a fraction of the request. */
const PROGRESS_STEP = 0.01;

/**
 * Handles one request synchronously. Never throws: failures become `error` responses, a true `shouldCancel`
 * becomes `cancelled`.
 */
export function handleEngineRequest(message: unknown, post: PostResponse, shouldCancel?: () => boolean): void {
  if (!isEngineRequest(message)) {
    const id = typeof message === 'object' && message !== null && 'id' in message ? String(message.id) : '';
    post({ type: 'error', id, message: 'not an engine request' }, []);
    return;
  }
  const id = message.id;
  let last = 0;
  const onProgress = (fraction: number): void => {
    if (fraction >= last + PROGRESS_STEP && fraction < 1) {
      last = fraction;
      post({ type: 'progress', id, fraction }, []);
    }
  };
  try {
    const result = compute(message, onProgress, shouldCancel);
    post({ type: 'result', id, result }, resultTransferables(result));
  } catch (error: unknown) {
    if (error instanceof EngineCancelledError) {
      post({ type: 'cancelled', id }, []);
      return;
    }
    post({ type: 'error', id, message: error instanceof Error ? error.message : String(error) }, []);
  }
}

function compute(request: EngineRequest, onProgress: (fraction: number) => void, shouldCancel?: () => boolean): TaskResult {
  const hooks = { onProgress, shouldCancel };
  if (request.type === 'fit') return computeTask(request, hooks);
  const parsed = parseCase(request.params);
  if (!parsed.ok) {
    throw new Error(`invalid case: ${parsed.issues.map((i) => `${i.field || '(case)'}: ${i.message}`).join('; ')}`);
  }
  return computeTask({ ...request, params: parsed.value }, hooks);
}
