/**
 * A reviewer's rerun set against a stored run: digest and every summary number, with the tolerance each number was
 * held to. The number rule is the engine's own (`compareSummaries` in shared/engine/run-record.ts), so the browser,
 * the server and the CLI agree on what "matches" means.
 */
import { ENGINE_VERSION } from '../../../../shared/engine/version';
import {
  SUMMARY_ABS_TOLERANCE,
  SUMMARY_REL_TOLERANCE,
  compareSummaries,
  type RunRecord,
} from '../../../../shared/engine/run-record';
import type { RunComparisonView, RunView, SummaryValue } from '../library/library-types';

export interface NumberComparison {
  readonly name: string;
  readonly stored: SummaryValue;
  readonly rerun: SummaryValue;
  /** |rerun − stored| for two numbers, null otherwise. */
  readonly difference: number | null;
  /** Largest difference allowed for a number (relative tolerance × |stored|, at least the absolute floor); null for words. */
  readonly tolerance: number | null;
  readonly match: boolean;
}

export interface RunComparison {
  readonly runId: string;
  readonly kind: string;
  readonly storedDigest: string;
  readonly rerunDigest: string;
  readonly digestMatch: boolean;
  readonly engineVersionStored: string;
  readonly engineVersionNow: string;
  readonly numbers: NumberComparison[];
  readonly numbersMatch: boolean;
  /**
   * The run stands: numbers within tolerance and the same digest. With a newer engine than the one that stored the
   * run, last-digit changes may alter the digest, so then the numbers alone decide.
   */
  readonly match: boolean;
}

export function compareRun(stored: RunView, rerun: RunRecord, relTolerance = SUMMARY_REL_TOLERANCE): RunComparison {
  const numbers = compareSummaries(stored.summary, rerun.summary, relTolerance).map((c): NumberComparison => {
    const bothNumbers = typeof c.stored === 'number' && typeof c.rerun === 'number';
    return {
      name: c.key,
      stored: c.stored,
      rerun: c.rerun,
      difference: bothNumbers ? Math.abs(Number(c.rerun) - Number(c.stored)) : null,
      tolerance: bothNumbers ? Math.max(relTolerance * Math.abs(Number(c.stored)), SUMMARY_ABS_TOLERANCE) : null,
      match: c.ok,
    };
  });
  const numbersMatch = numbers.every((n) => n.match);
  const digestMatch = stored.resultDigest === rerun.resultDigest;
  const versionChanged = stored.engineVersion !== rerun.engineVersion;
  return {
    runId: stored.id,
    kind: stored.kind,
    storedDigest: stored.resultDigest,
    rerunDigest: rerun.resultDigest,
    digestMatch,
    engineVersionStored: stored.engineVersion,
    engineVersionNow: rerun.engineVersion || ENGINE_VERSION,
    numbers,
    numbersMatch,
    match: numbersMatch && (digestMatch || versionChanged),
  };
}

/** What the API stores with a verdict. Infinite numbers travel as words: JSON has no Infinity. */
export function comparisonPayload(comparison: RunComparison): RunComparisonView {
  const json = (v: SummaryValue): SummaryValue => (typeof v === 'number' && !Number.isFinite(v) ? String(v) : v);
  return {
    runId: comparison.runId,
    digestMatch: comparison.digestMatch,
    numbers: comparison.numbers.map((n) => ({
      name: n.name,
      stored: json(n.stored),
      rerun: json(n.rerun),
      tolerance: n.tolerance,
      match: n.match,
    })),
  };
}
