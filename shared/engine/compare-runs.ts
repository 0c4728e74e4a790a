/**
 * The one comparison of a stored run with a rerun of it, used by the server (verification of every stored run, the
 * comparison kept with a recheck), the browser (display) and the CLI.
 *
 * Numbers agree when |rerun - stored| <= max(relTolerance * |stored|, SUMMARY_ABS_TOLERANCE); words, flags and
 * nulls must be equal; non-finite numbers stored as the words "Infinity", "-Infinity" or "NaN" are revived first.
 * A run is reproduced when the digests are equal and every number agrees. `match` is the gentler reading used when
 * the engine changed since the run: a digest difference alone then does not fail, the numbers decide.
 */
import type { RunRecord, RunSummary } from './run-record';

/** Default relative tolerance when a rerun's summary numbers are compared with the stored ones. */
export const SUMMARY_REL_TOLERANCE = 1e-6;
/** Absolute floor of that comparison (numbers that should be zero). */
export const SUMMARY_ABS_TOLERANCE = 1e-12;

export type SummaryValue = number | string | boolean | null;

/** One compared summary entry. */
export interface ComparedNumber {
  key: string;
  stored: SummaryValue;
  rerun: SummaryValue;
  /** |rerun - stored| / max(|stored|, tiny) for numbers, null otherwise. */
  relDiff: number | null;
  ok: boolean;
}

/** Compares two summaries: numbers within relTolerance (or SUMMARY_ABS_TOLERANCE), everything else equal. */
export function compareSummaries(stored: RunSummary, rerun: RunSummary, relTolerance = SUMMARY_REL_TOLERANCE): ComparedNumber[] {
  const keys = [...new Set([...Object.keys(stored), ...Object.keys(rerun)])].sort();
  // JSON cannot hold non-finite numbers: stored records carry them as "Infinity", "-Infinity" or "NaN".
  const revive = (v: SummaryValue): SummaryValue => (v === 'Infinity' || v === '-Infinity' || v === 'NaN' ? Number(v) : v);
  return keys.map((key) => {
    const a = revive(key in stored ? (stored[key] ?? null) : null);
    const b = revive(key in rerun ? (rerun[key] ?? null) : null);
    if (typeof a === 'number' && typeof b === 'number') {
      if (!Number.isFinite(a) || !Number.isFinite(b)) {
        return { key, stored: a, rerun: b, relDiff: null, ok: a === b || (Number.isNaN(a) && Number.isNaN(b)) };
      }
      const diff = Math.abs(a - b);
      const relDiff = diff / Math.max(Math.abs(a), SUMMARY_ABS_TOLERANCE);
      return { key, stored: a, rerun: b, relDiff, ok: diff <= Math.max(relTolerance * Math.abs(a), SUMMARY_ABS_TOLERANCE) };
    }
    return { key, stored: a, rerun: b, relDiff: null, ok: a === b };
  });
}

/** What is compared of the stored run: its claim. */
export interface StoredRunClaim {
  id: string;
  kind: string;
  summary: RunSummary;
  resultDigest: string;
  engineVersion: string;
}

export interface NumberComparison {
  name: string;
  stored: SummaryValue;
  rerun: SummaryValue;
  /** |rerun - stored| for two numbers, null otherwise. */
  difference: number | null;
  /** Largest difference allowed for a number (relative tolerance x |stored|, at least the absolute floor); null for words. */
  tolerance: number | null;
  match: boolean;
}

export interface RunComparison {
  runId: string;
  kind: string;
  storedDigest: string;
  rerunDigest: string;
  digestMatch: boolean;
  engineVersionStored: string;
  engineVersionNow: string;
  numbers: NumberComparison[];
  numbersMatch: boolean;
  /** Same digest and every number within tolerance: the run is reproduced (the server's `verified`). */
  reproduced: boolean;
  /** Numbers within tolerance and, unless the engine version changed since the run, the same digest. */
  match: boolean;
}

/** Compares a stored run's claim with a rerun of its record. */
export function compareRun(stored: StoredRunClaim, rerun: RunRecord, relTolerance = SUMMARY_REL_TOLERANCE): RunComparison {
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
    engineVersionNow: rerun.engineVersion,
    numbers,
    numbersMatch,
    reproduced: digestMatch && numbersMatch,
    match: numbersMatch && (digestMatch || versionChanged),
  };
}

/** The comparison as JSON can hold it: non-finite numbers become words. */
export function comparisonPayload(comparison: RunComparison): RunComparison {
  const json = (v: SummaryValue): SummaryValue => (typeof v === 'number' && !Number.isFinite(v) ? String(v) : v);
  const finite = (v: number | null): number | null => (v !== null && Number.isFinite(v) ? v : null);
  return {
    ...comparison,
    numbers: comparison.numbers.map((n) => ({ ...n, stored: json(n.stored), rerun: json(n.rerun), difference: finite(n.difference), tolerance: finite(n.tolerance) })),
  };
}
