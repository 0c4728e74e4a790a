/**
 * The one request handler behind every engine worker (browser Web Worker, Node worker_threads): validates the
 * case, calls the engine, reports progress and answers with exactly one result, error or cancelled message.
 */
import { parseCase } from '../case/validate';
import { stabilityChartRows } from '../engine/chart';
import { fitFreeSwing } from '../engine/fit';
import { floquetAnalysis } from '../engine/floquet';
import { EngineCancelledError, simulateMotion } from '../engine/motion';
import { basinMapRows, outcomeMapRows, sweepPoints, sweepThresholds } from '../engine/sweep';
import { overlayDrivenTrace } from '../engine/trace-drive';
import {
  isEngineRequest, resultTransferables, type EngineRequest, type EngineResponse, type EngineResult,
} from './protocol';

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
    if (result === null) {
      post({ type: 'cancelled', id }, []);
      return;
    }
    post({ type: 'result', id, result }, resultTransferables(result));
  } catch (error: unknown) {
    if (error instanceof EngineCancelledError) {
      post({ type: 'cancelled', id }, []);
      return;
    }
    post({ type: 'error', id, message: error instanceof Error ? error.message : String(error) }, []);
  }
}

function compute(
  request: EngineRequest, onProgress: (fraction: number) => void, shouldCancel?: () => boolean,
): EngineResult | null {
  const hooks = { onProgress, shouldCancel };
  if (request.type === 'fit') {
    const { trace, model, gravity, frictionSmoothing } = request;
    return { kind: 'fit', fit: fitFreeSwing(trace, { model, gravity, frictionSmoothing, ...hooks }) };
  }
  const parsed = parseCase(request.params);
  if (!parsed.ok) {
    throw new Error(`invalid case: ${parsed.issues.map((i) => `${i.field || '(case)'}: ${i.message}`).join('; ')}`);
  }
  const params = parsed.value;
  switch (request.type) {
    case 'overlay': {
      const { trace, partAngle, holdLimit } = request;
      return { kind: 'overlay', overlay: overlayDrivenTrace(params, trace, { partAngle, holdLimit, ...hooks }) };
    }
    case 'motion':
      return { kind: 'motion', motion: simulateMotion(params, hooks) };
    case 'margins':
      return { kind: 'margins', analysis: floquetAnalysis(params, { relTolerance: request.relTolerance }) };
    case 'sweep-chunk': {
      const part = request.part;
      if (part.kind === 'points') {
        return { kind: 'sweep-points', points: sweepPoints(params, request.spec, part.from, part.to, hooks) };
      }
      return { kind: 'sweep-thresholds', thresholds: sweepThresholds(params, request.spec, part.brackets, hooks) };
    }
    case 'chart-chunk': {
      const { values, cancelled } = stabilityChartRows(params, request.grid, request.rowFrom, request.rowTo, onProgress, shouldCancel);
      return cancelled ? null : { kind: 'chart-rows', rowFrom: request.rowFrom, rowTo: request.rowTo, values };
    }
    case 'basin-chunk':
      return {
        kind: 'basin-rows', rowFrom: request.rowFrom, rowTo: request.rowTo,
        cells: basinMapRows(params, request.grid, request.rowFrom, request.rowTo, hooks),
      };
    case 'map-chunk':
      return {
        kind: 'map-rows', rowFrom: request.rowFrom, rowTo: request.rowTo,
        cells: outcomeMapRows(params, request.grid, request.rowFrom, request.rowTo, hooks),
      };
  }
}
