/**
 * Run records: what is stored with a revision for each computation, and how a reviewer's rerun is compared with it.
 *
 * A record holds the kind, the case, the settings, a flat summary of headline numbers, the result digest and the
 * engine version. The result digest is the SHA-256 of the canonical JSON of the result's numbers rounded to
 * DIGEST_SIGNIFICANT_DIGITS significant digits (non-finite values written as strings), so reruns by the same engine
 * in any runtime give the same digest while the summary numbers are compared with stated tolerances. The same code
 * runs in the server, the browser and the CLI.
 */
import type { CaseParams } from '../case/case-schema';
import { caseDigest, valueDigest } from '../case/canonical';
import { parseCase } from '../case/validate';
import type { MotionHooks } from './motion';
import type { SweepResult } from './sweep';
import { computeRun, isRunKind, parseRunSettings, RUN_KINDS, summariseRun, type RunKind, type RunResult, type RunSettings, type RunSummary } from './run-kinds';
import { compareSummaries, SUMMARY_REL_TOLERANCE, type ComparedNumber } from './compare-runs';
import { ENGINE_VERSION } from './version';

// The registry (run-kinds.ts) owns the kinds, their settings and how they are computed; records are built on it.
export { computeRun, defaultRunSettings, RUN_KINDS, summariseRun } from './run-kinds';
export type { RunKind, RunResult, RunSettings, RunSummary } from './run-kinds';

export interface RunRecord {
  kind: RunKind;
  params: CaseParams;
  settings: RunSettings;
  summary: RunSummary;
  resultDigest: string;
  engineVersion: string;
  /** SHA-256 of the case's canonical JSON. */
  caseDigest?: string;
}

/** Significant digits kept in the result digest. */
export const DIGEST_SIGNIFICANT_DIGITS = 9;

/** Copy of a JSON-like value with numbers rounded for the digest; typed arrays become arrays. */
export function digestView(value: unknown, depth = 0): unknown {
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) return String(value);
    return value === 0 ? 0 : Number(value.toPrecision(DIGEST_SIGNIFICANT_DIGITS));
  }
  if (value === null || typeof value !== 'object' || depth > 32) return value;
  if (ArrayBuffer.isView(value)) {
    return Array.from(value as unknown as ArrayLike<number>, (v) => digestView(v, depth + 1));
  }
  if (Array.isArray(value)) return value.map((v) => digestView(v, depth + 1));
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(value)) out[k] = digestView(v, depth + 1);
  return out;
}

/**
 * Digest of a run result: SHA-256 of the canonical JSON of its rounded numbers. The motion's rhsEvaluations and
 * step counts are included: they are deterministic for a given engine.
 */
export function resultDigest(result: RunResult): string {
  return valueDigest(digestView(result.kind === 'sweep' ? withoutProbes(result.value) : result.value));
}

/** A sweep without its thresholds' bisection probes, which postdate stored sweep digests and only show the working. */
function withoutProbes(sweep: SweepResult): unknown {
  return { ...sweep, thresholds: sweep.thresholds.map(({ probes: _probes, ...threshold }) => threshold) };
}

/** A run record for a computed result. */
export function makeRunRecord(params: CaseParams, settings: RunSettings, result: RunResult): RunRecord {
  return {
    kind: settings.kind,
    params,
    settings,
    summary: summariseRun(result),
    resultDigest: resultDigest(result),
    engineVersion: ENGINE_VERSION,
    caseDigest: caseDigest(params),
  };
}

export interface RecheckReport {
  /** Everything agrees (see `match` in compare-runs.ts). */
  ok: boolean;
  digestMatches: boolean;
  storedDigest: string;
  rerunDigest: string;
  engineVersionStored: string;
  engineVersionNow: string;
  summaryMatches: boolean;
  relTolerance: number;
  compared: ComparedNumber[];
  /** The rerun's record. */
  rerun: RunRecord;
}

/** Shape check of a stored run record read from JSON (the case itself is validated by recheckRun). */
export function parseRunRecord(input: unknown): { ok: true; value: RunRecord } | { ok: false; field: string; message: string } {
  if (typeof input !== 'object' || input === null) return { ok: false, field: '', message: 'a run record must be an object' };
  const r = input as Record<string, unknown>;
  if (!isRunKind(r['kind'])) return { ok: false, field: 'kind', message: `must be one of ${RUN_KINDS.join(', ')}` };
  const settings = parseRunSettings(r['settings']);
  if (!settings.ok) return { ok: false, field: `settings${settings.field ? `.${settings.field}` : ''}`, message: settings.message };
  if (settings.value.kind !== r['kind']) return { ok: false, field: 'settings.kind', message: 'must equal the record kind' };
  if (typeof r['summary'] !== 'object' || r['summary'] === null) return { ok: false, field: 'summary', message: 'must be an object' };
  if (typeof r['resultDigest'] !== 'string') return { ok: false, field: 'resultDigest', message: 'must be a hex string' };
  if (typeof r['engineVersion'] !== 'string') return { ok: false, field: 'engineVersion', message: 'must be a string' };
  const parsed = parseCase(r['params']);
  if (!parsed.ok) {
    const first = parsed.issues[0];
    return { ok: false, field: `params${first.field ? `.${first.field}` : ''}`, message: first.message };
  }
  return { ok: true, value: { ...(input as RunRecord), settings: settings.value, params: parsed.value } };
}

/**
 * Reruns a stored record and compares. ok when the summary matches within the tolerance and the digest matches;
 * when the engine version changed since the run, a digest difference alone does not fail the recheck (numbers may
 * move in the last digits), the summary decides.
 */
export function recheckRun(record: RunRecord, relTolerance = SUMMARY_REL_TOLERANCE, hooks: MotionHooks = {}): RecheckReport {
  const result = computeRun(record.params, record.settings, hooks);
  const rerun = makeRunRecord(record.params, record.settings, result);
  const compared = compareSummaries(record.summary, rerun.summary, relTolerance);
  const summaryMatches = compared.every((c) => c.ok);
  const digestMatches = rerun.resultDigest === record.resultDigest;
  const versionChanged = record.engineVersion !== ENGINE_VERSION;
  return {
    ok: summaryMatches && (digestMatches || versionChanged),
    digestMatches,
    storedDigest: record.resultDigest,
    rerunDigest: rerun.resultDigest,
    engineVersionStored: record.engineVersion,
    engineVersionNow: ENGINE_VERSION,
    summaryMatches,
    relTolerance,
    compared,
    rerun,
  };
}
