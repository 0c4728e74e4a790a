/**
 * A chunk's result as stored in job_chunks.result: the structured clone of the engine's answer (typed arrays and
 * non-finite numbers survive, unlike JSON), gzipped. Read back only by the job that wrote it, with the same code.
 */
import { deserialize, serialize } from 'node:v8';
import { gunzipSync, gzipSync } from 'node:zlib';
import type { TaskResult } from '../../shared/engine/engine-task';

export function encodeChunkResult(result: TaskResult): Buffer {
  return gzipSync(serialize(result), { level: 3 });
}

export function decodeChunkResult(bytes: Buffer): TaskResult {
  return deserialize(gunzipSync(bytes)) as TaskResult;
}
