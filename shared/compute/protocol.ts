/**
 * Messages between the engine worker pool and its workers (browser Web Workers or Node worker_threads).
 *
 * Requests and responses are discriminated unions on `type`; every message carries the request `id` so a worker's
 * replies can be matched. Typed arrays in results are transferred, not copied. A worker handles one request at a
 * time and answers with any number of `progress` messages and then exactly one of `result`, `error` or
 * `cancelled`.
 */
import type { CaseParams } from '../case/case-schema';
import type { Grid2 } from '../engine/chart';
import type { FitModel, FitResult } from '../engine/fit';
import type { OverlayResult } from '../engine/trace-drive';
import type { FloquetAnalysis } from '../engine/floquet';
import type { MotionResult } from '../engine/motion';
import type { BasinCell, MapCell, SweepPoint, SweepSpec, SweepThreshold, ThresholdBracket } from '../engine/sweep';

/** Simulate the motion of one case. */
export interface MotionRequest {
  type: 'motion';
  id: string;
  params: CaseParams;
}

/** Floquet analysis: upright multipliers, periodic motions, drive limits and margins. */
export interface MarginsRequest {
  type: 'margins';
  id: string;
  params: CaseParams;
  relTolerance?: number;
}

/** Part of a 1-D sweep: the points with index in [from, to), or the thresholds inside the given brackets. */
export interface SweepChunkRequest {
  type: 'sweep-chunk';
  id: string;
  params: CaseParams;
  spec: SweepSpec;
  part: { kind: 'points'; from: number; to: number } | { kind: 'thresholds'; brackets: ThresholdBracket[] };
}

/** Rows [rowFrom, rowTo) of a stability chart. */
export interface ChartChunkRequest {
  type: 'chart-chunk';
  id: string;
  params: CaseParams;
  grid: Grid2;
  rowFrom: number;
  rowTo: number;
}

/** Rows [rowFrom, rowTo) of a basin map (start angle along x, start rate along y). */
export interface BasinChunkRequest {
  type: 'basin-chunk';
  id: string;
  params: CaseParams;
  grid: Grid2;
  rowFrom: number;
  rowTo: number;
}

/** Rows [rowFrom, rowTo) of an outcome map over two case fields. */
export interface MapChunkRequest {
  type: 'map-chunk';
  id: string;
  params: CaseParams;
  grid: Grid2;
  rowFrom: number;
  rowTo: number;
}

/** Fit a free swing (times s, angles rad from any fixed zero); no case needed. */
export interface FitRequest {
  type: 'fit';
  id: string;
  trace: { time: number[]; angle: number[] };
  model: FitModel;
  gravity?: number;
  frictionSmoothing?: number;
}

/** Measured against simulated motion of a driven trace (angles rad from the upright, pivot m). */
export interface OverlayRequest {
  type: 'overlay';
  id: string;
  params: CaseParams;
  trace: { time: number[]; angle: number[]; pivot: number[] };
  partAngle?: number;
  holdLimit?: number;
}

export type EngineRequest =
  | FitRequest
  | OverlayRequest
  | MotionRequest
  | MarginsRequest
  | SweepChunkRequest
  | ChartChunkRequest
  | BasinChunkRequest
  | MapChunkRequest;

export type EngineRequestType = EngineRequest['type'];

/** Result payloads, one per request type. */
export type EngineResult =
  | { kind: 'motion'; motion: MotionResult }
  | { kind: 'margins'; analysis: FloquetAnalysis }
  | { kind: 'sweep-points'; points: SweepPoint[] }
  | { kind: 'sweep-thresholds'; thresholds: SweepThreshold[] }
  | { kind: 'chart-rows'; rowFrom: number; rowTo: number; values: Float64Array }
  | { kind: 'basin-rows'; rowFrom: number; rowTo: number; cells: BasinCell[] }
  | { kind: 'map-rows'; rowFrom: number; rowTo: number; cells: MapCell[] }
  | { kind: 'fit'; fit: FitResult }
  | { kind: 'overlay'; overlay: OverlayResult };

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

const REQUEST_TYPES: readonly string[] = ['fit', 'overlay', 'motion', 'margins', 'sweep-chunk', 'chart-chunk', 'basin-chunk', 'map-chunk'];
const RESPONSE_TYPES: readonly string[] = ['progress', 'result', 'error', 'cancelled'];

/** Shape check of an incoming request (the case itself is validated by the handler). */
export function isEngineRequest(value: unknown): value is EngineRequest {
  return isRecord(value) && typeof value['id'] === 'string' && REQUEST_TYPES.includes(String(value['type']));
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
