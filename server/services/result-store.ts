/**
 * Stored run results: the compact text form (shared/engine/result-codec.ts) gzip-compressed for the run_results
 * table, with the size limits every stored result must meet.
 *
 * Limits: at most RESULT_MAX_RAW_BYTES of encoded text and RESULT_MAX_COMPRESSED_BYTES after gzip. The largest
 * results the run registry accepts (shared/engine/run-kinds.ts: MAX_SWEEP_STEPS, MAX_CHART_COUNT, MAX_MAP_COUNT)
 * fit with room to spare (a motion at the case limit of 200,000 output points is about 13 MB of text; a 200x200
 * stability chart about 0.45 MB; a 400-point sweep about 0.1 MB; a 200x200 outcome map about 5 MB before
 * compression; a 120x120 leanest-drive search with its chart and admissible cells about 0.5 MB; a 4096-sample hold
 * probability over 12 tolerances about 1.4 MB), so a run the registry accepts is a run the server stores.
 */
import { gunzipSync, gzipSync } from 'node:zlib';
import { RESULT_ENCODING, decodeRunResult, encodeRunResult } from '../../shared/engine/result-codec';
import type { RunResult } from '../../shared/engine/run-record';

export const RESULT_MAX_RAW_BYTES = 32 * 1024 * 1024;
export const RESULT_MAX_COMPRESSED_BYTES = 16 * 1024 * 1024;

export interface CompressedResult {
  encoding: string;
  compressed: Buffer;
  rawBytes: number;
  compressedBytes: number;
}

export class ResultTooLargeError extends Error {
  constructor(what: string, bytes: number, limit: number) {
    super(`the result is ${bytes} bytes ${what}, over the ${limit}-byte limit`);
  }
}

export interface ResultLimits {
  maxRawBytes: number;
  maxCompressedBytes: number;
}

const LIMITS: ResultLimits = { maxRawBytes: RESULT_MAX_RAW_BYTES, maxCompressedBytes: RESULT_MAX_COMPRESSED_BYTES };

/** Encodes and compresses a result; throws ResultTooLargeError past either limit. */
export function compressResult(result: RunResult, limits: ResultLimits = LIMITS): CompressedResult {
  const raw = Buffer.from(encodeRunResult(result), 'utf8');
  if (raw.length > limits.maxRawBytes) throw new ResultTooLargeError('of text', raw.length, limits.maxRawBytes);
  const compressed = gzipSync(raw, { level: 6 });
  if (compressed.length > limits.maxCompressedBytes) throw new ResultTooLargeError('compressed', compressed.length, limits.maxCompressedBytes);
  return { encoding: RESULT_ENCODING, compressed, rawBytes: raw.length, compressedBytes: compressed.length };
}

/** The result back from its stored form. */
export function decompressResult(stored: { encoding: string; compressed: Buffer }): RunResult {
  if (stored.encoding !== RESULT_ENCODING) throw new Error(`unknown result encoding ${stored.encoding}`);
  return decodeRunResult(gunzipSync(stored.compressed).toString('utf8'));
}
