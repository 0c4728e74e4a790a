/**
 * The case library as the client sees it: the API contract's types (shared/api), plus the few views the pages
 * need on top (a revision's parameters checked against this build's case schema, a trace's series as arrays).
 * Replies are parsed with the contract's schemas in the API classes; nothing here fills in defaults.
 */
import { parseCase, type CaseParams } from '../../../../shared/case';
import type { TraceDetail } from '../../../../shared/api/bench-traces';
import type { RevisionDetail as RevisionReply } from '../../../../shared/api/cases';

export { RECHECK_STATES } from '../../../../shared/api/common';
export type { Paged as Page, PersonRef, RecheckState } from '../../../../shared/api/common';
export type {
  CaseDetail,
  CaseListItem as CaseSummary,
  CommentView,
  ComparedNumberView,
  RecheckRequestView,
  RecheckVerdict,
  RecheckView,
  RunComparison as RunComparisonView,
  RunView,
  VerificationState,
  VerificationView,
} from '../../../../shared/api/cases';
export type { CreatedLink as CaseLinkCreated, LinkView as CaseLinkView, PublicCaseView } from '../../../../shared/api/case-links';
export type { TraceSummary as BenchTraceSummary } from '../../../../shared/api/bench-traces';
export type { OutboxMailView as OutboxEntry, SinkMailView as SinkMail } from '../../../../shared/api/admin';

export type SummaryValue = number | string | boolean | null;

export interface RevisionDetail extends Omit<RevisionReply, 'params' | 'comments'> {
  /** Checked against this build's case schema; null when the stored parameters no longer parse. */
  readonly params: CaseParams | null;
  /** The stored parameters as sent, for display even when they do not validate. */
  readonly rawParams: Record<string, unknown>;
  /** Empty where the reply leaves comments out (case links). */
  readonly comments: RevisionReply['comments'] & object;
}

export function revisionView(reply: RevisionReply): RevisionDetail {
  const parsed = parseCase(reply.params);
  return { ...reply, params: parsed.ok ? parsed.value : null, rawParams: reply.params, comments: reply.comments ?? [] };
}

export interface PublicCaseLink {
  readonly caseTitle: string;
  readonly labName: string;
  readonly revision: RevisionDetail;
  readonly expiresAt: string;
}

/** A trace with its SI series as plain arrays: time s, angle rad from the upright, pivot m (null without that column). */
export interface BenchTrace extends Omit<TraceDetail, 'series'> {
  readonly time: number[];
  readonly angle: number[];
  readonly pivot: number[] | null;
}

export function benchTraceView({ series, ...summary }: TraceDetail): BenchTrace {
  return { ...summary, time: series.time, angle: series.angle, pivot: series.pivot ?? null };
}

export function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}
