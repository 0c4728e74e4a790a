/**
 * The shared engine bundled for a plain page, so a browser test can run it in Chromium's own JavaScript engine and
 * compare with Node. Exposes `qpRunDigests(jobs)` on the page: the result digest of each run (run-record.ts).
 */
import { computeRun, makeRunRecord, type RunSettings } from '../../../shared/engine/run-record';
import type { CaseParams } from '../../../shared/case/case-schema';

export interface ParityJob {
  params: CaseParams;
  settings: RunSettings;
}

export function runDigests(jobs: readonly ParityJob[]): string[] {
  return jobs.map(({ params, settings }) => makeRunRecord(params, settings, computeRun(params, settings)).resultDigest);
}

(globalThis as { qpRunDigests?: typeof runDigests }).qpRunDigests = runDigests;
