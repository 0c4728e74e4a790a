import { parseCase, type CaseParams } from '../../../../shared/case';
import type { RunSummary } from '../../../../shared/engine/run-record';
import { LabRole, isLabRole } from '../../core/session';

/** The review state of a revision (DESIGN.md: draft -> awaiting-recheck -> confirmed | disputed). */
export type RecheckState = 'draft' | 'awaiting-recheck' | 'confirmed' | 'disputed';
export const RECHECK_STATES: readonly RecheckState[] = ['draft', 'awaiting-recheck', 'confirmed', 'disputed'];

export interface PersonRef {
  readonly id: string;
  readonly name: string;
}

export interface Page<T> {
  readonly items: T[];
  readonly total: number;
  readonly page: number;
  readonly pageSize: number;
}

export interface CaseSummary {
  readonly id: string;
  readonly title: string;
  readonly tags: string[];
  readonly labId: string;
  readonly latestRevision: number;
  readonly recheckState: RecheckState;
  readonly author: PersonRef;
  readonly updatedAt: string;
  readonly archived: boolean;
}

export interface RevisionSummary {
  readonly number: number;
  readonly paramsDigest: string;
  readonly note: string;
  readonly author: PersonRef;
  readonly createdAt: string;
  readonly recheckState: RecheckState;
}

export interface CaseDetail {
  readonly id: string;
  readonly title: string;
  readonly tags: string[];
  readonly lab: { readonly id: string; readonly name: string };
  readonly archived: boolean;
  readonly latestRevision: number;
  readonly myRole: LabRole | null;
  readonly revisions: RevisionSummary[];
}

export type VerificationState = 'pending' | 'verified' | 'unreproduced';

/** The server's own rerun of a stored run: `verified` (same digest, same numbers) or `unreproduced`. */
export interface VerificationView {
  readonly state: VerificationState;
  readonly verifiedAt: string | null;
  /** Why the server could not compare (an engine error, a result over the size limit). */
  readonly failure: string | null;
  /** The numbers of the server's comparison that differ. */
  readonly differences: ComparedNumberView[];
  /** A full result is stored and can be opened without computing. */
  readonly hasResult: boolean;
}

export interface RunView {
  readonly id: string;
  readonly kind: string;
  /** As stored; narrowed to the engine's RunSettings where a rerun needs it. */
  readonly settings: unknown;
  /** The server's numbers once verified or unreproduced; what was posted while pending. */
  readonly summary: RunSummary;
  readonly resultDigest: string;
  readonly engineVersion: string;
  readonly verification: VerificationView;
  readonly author: PersonRef | null;
  readonly createdAt: string;
}

export type SummaryValue = number | string | boolean | null;

export interface ComparedNumberView {
  readonly name: string;
  readonly stored: SummaryValue;
  readonly rerun: SummaryValue;
  readonly tolerance: number | null;
  readonly match: boolean;
}

export interface RunComparisonView {
  readonly runId: string;
  readonly digestMatch: boolean;
  readonly numbers: ComparedNumberView[];
}

export type RecheckVerdict = 'confirmed' | 'disputed';

export interface RecheckView {
  readonly id: string;
  readonly reviewer: PersonRef;
  readonly state: RecheckVerdict;
  readonly digestMatch: boolean;
  readonly comparisons: RunComparisonView[];
  readonly comment: string;
  readonly createdAt: string;
}

export interface CommentView {
  readonly id: string;
  readonly author: PersonRef;
  readonly body: string;
  readonly createdAt: string;
}

export interface RecheckRequestView {
  readonly requestedBy: PersonRef | null;
  readonly reviewer: PersonRef | null;
  readonly message: string;
  readonly requestedAt: string;
}

export interface RevisionDetail {
  readonly caseId: string;
  readonly caseTitle: string;
  readonly number: number;
  /** Validated against the case schema; null when the stored parameters no longer parse. */
  readonly params: CaseParams | null;
  /** The stored parameters as sent, for display even when they do not validate. */
  readonly rawParams: unknown;
  readonly schemaVersion: number;
  readonly paramsDigest: string;
  readonly note: string;
  readonly author: PersonRef;
  readonly createdAt: string;
  readonly recheckState: RecheckState;
  readonly recheckRequest: RecheckRequestView | null;
  readonly runs: RunView[];
  readonly rechecks: RecheckView[];
  readonly comments: CommentView[];
}

export interface CaseLinkCreated {
  readonly id: string;
  readonly token: string;
  readonly url: string;
  readonly revision: number;
  readonly expiresAt: string;
}

export interface CaseLinkView {
  readonly id: string;
  readonly revision: number;
  readonly expiresAt: string;
  readonly revokedAt: string | null;
  readonly state: 'active' | 'expired' | 'revoked';
  readonly createdAt: string;
  readonly createdBy: PersonRef | null;
}

export interface PublicCaseLink {
  readonly caseTitle: string;
  readonly labName: string;
  readonly revision: RevisionDetail;
  readonly expiresAt: string;
}

export interface BenchTraceSummary {
  readonly id: string;
  readonly label: string;
  readonly fileName: string;
  readonly rows: number;
  readonly columns: string[];
  /** Seconds from the first to the last row. */
  readonly duration: number;
  readonly createdAt: string;
  readonly author: PersonRef | null;
}

export interface BenchTrace extends BenchTraceSummary {
  /** Seconds. */
  readonly time: number[];
  /** Radians from the upright, as the engine uses. */
  readonly angle: number[];
  /** Metres, when the file had a pivot position column. */
  readonly pivot: number[] | null;
}

export interface SinkMail {
  readonly id: string;
  readonly from: string;
  readonly to: string;
  readonly subject: string;
  readonly receivedAt: string;
  readonly text: string;
}

export interface OutboxEntry {
  readonly id: string;
  readonly to: string;
  readonly subject: string;
  readonly state: string;
  readonly attempts: number;
  readonly lastError: string | null;
  readonly nextAttemptAt: string | null;
  readonly createdAt: string;
  readonly sentAt: string | null;
}

type Json = Record<string, unknown>;

export function isRecord(value: unknown): value is Json {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** Ids travel as strings in the client, whatever the server sends. */
function id(value: unknown): string {
  if (typeof value === 'string' && value !== '') return value;
  if (typeof value === 'number' && Number.isFinite(value)) return String(value);
  throw new Error('The server sent an item without an id.');
}

function text(value: unknown, fallback = ''): string {
  return typeof value === 'string' ? value : fallback;
}

function optionalText(value: unknown): string | null {
  return typeof value === 'string' ? value : null;
}

function count(value: unknown, fallback = 0): number {
  if (typeof value === 'number' && Number.isFinite(value)) return value;
  if (typeof value === 'string' && value.trim() !== '' && Number.isFinite(Number(value))) return Number(value);
  return fallback;
}

function date(value: unknown): string {
  if (typeof value === 'string') return value;
  if (value instanceof Date) return value.toISOString();
  return '';
}

function strings(value: unknown): string[] {
  return Array.isArray(value) ? value.filter((v): v is string => typeof v === 'string') : [];
}

function list<T>(value: unknown, parse: (item: unknown) => T): T[] {
  return Array.isArray(value) ? value.map(parse) : [];
}

function numbers(value: unknown): number[] {
  return Array.isArray(value) ? value.map((v) => count(v, Number.NaN)) : [];
}

function summaryValue(value: unknown): SummaryValue {
  if (typeof value === 'number' || typeof value === 'string' || typeof value === 'boolean') return value;
  return null;
}

export function parsePerson(value: unknown): PersonRef {
  if (!isRecord(value)) return { id: '', name: 'someone' };
  return { id: typeof value['id'] === 'string' || typeof value['id'] === 'number' ? id(value['id']) : '', name: text(value['name'], 'someone') };
}

function optionalPerson(value: unknown): PersonRef | null {
  return isRecord(value) ? parsePerson(value) : null;
}

export function parseRecheckState(value: unknown): RecheckState {
  return (RECHECK_STATES as readonly unknown[]).includes(value) ? (value as RecheckState) : 'draft';
}

export function parsePage<T>(reply: unknown, parse: (item: unknown) => T): Page<T> {
  if (!isRecord(reply)) throw new Error('The server sent an unexpected list.');
  const items = list(reply['items'], parse);
  return {
    items,
    total: count(reply['total'], items.length),
    page: count(reply['page'], 1),
    pageSize: count(reply['pageSize'], items.length),
  };
}

export function parseCaseSummary(value: unknown): CaseSummary {
  if (!isRecord(value)) throw new Error('The server sent an unexpected case.');
  return {
    id: id(value['id']),
    title: text(value['title'], '(untitled)'),
    tags: strings(value['tags']),
    labId: text(value['labId']),
    latestRevision: count(value['latestRevision'], 1),
    recheckState: parseRecheckState(value['recheckState']),
    author: parsePerson(value['author']),
    updatedAt: date(value['updatedAt']),
    archived: value['archived'] === true,
  };
}

function parseRevisionSummary(value: unknown): RevisionSummary {
  const v = isRecord(value) ? value : {};
  return {
    number: count(v['number']),
    paramsDigest: text(v['paramsDigest']),
    note: text(v['note']),
    author: parsePerson(v['author']),
    createdAt: date(v['createdAt']),
    recheckState: parseRecheckState(v['recheckState']),
  };
}

export function parseCaseDetail(value: unknown): CaseDetail {
  if (!isRecord(value)) throw new Error('The server sent an unexpected case.');
  const lab = isRecord(value['lab']) ? value['lab'] : {};
  return {
    id: id(value['id']),
    title: text(value['title'], '(untitled)'),
    tags: strings(value['tags']),
    lab: { id: text(lab['id']) || text(value['labId']), name: text(lab['name']) },
    archived: value['archived'] === true,
    latestRevision: count(value['latestRevision'], 1),
    myRole: isLabRole(value['myRole']) ? value['myRole'] : null,
    revisions: list(value['revisions'], parseRevisionSummary).sort((a, b) => b.number - a.number),
  };
}

export function parseRunView(value: unknown): RunView {
  if (!isRecord(value)) throw new Error('The server sent an unexpected run.');
  const summary: RunSummary = {};
  if (isRecord(value['summary'])) {
    for (const [key, entry] of Object.entries(value['summary'])) summary[key] = summaryValue(entry);
  }
  return {
    id: id(value['id']),
    kind: text(value['kind']),
    settings: value['settings'],
    summary,
    resultDigest: text(value['resultDigest']),
    engineVersion: text(value['engineVersion']),
    verification: parseVerification(value['verification']),
    author: optionalPerson(value['author']),
    createdAt: date(value['createdAt']),
  };
}

function parseVerification(value: unknown): VerificationView {
  const v = isRecord(value) ? value : {};
  const state = v['state'] === 'verified' || v['state'] === 'unreproduced' ? v['state'] : 'pending';
  return {
    state,
    verifiedAt: typeof v['verifiedAt'] === 'string' ? v['verifiedAt'] : null,
    failure: typeof v['failure'] === 'string' ? v['failure'] : null,
    differences: list(v['differences'], parseComparedNumber),
    hasResult: isRecord(v['resultBytes']),
  };
}

function parseComparedNumber(value: unknown): ComparedNumberView {
  const v = isRecord(value) ? value : {};
  return {
    name: text(v['name']),
    stored: summaryValue(v['stored']),
    rerun: summaryValue(v['rerun']),
    tolerance: typeof v['tolerance'] === 'number' ? v['tolerance'] : null,
    match: v['match'] === true,
  };
}

function parseComparison(value: unknown): RunComparisonView {
  const v = isRecord(value) ? value : {};
  return {
    runId: typeof v['runId'] === 'string' || typeof v['runId'] === 'number' ? id(v['runId']) : '',
    digestMatch: v['digestMatch'] === true,
    numbers: list(v['numbers'], parseComparedNumber),
  };
}

export function parseRecheckView(value: unknown): RecheckView {
  if (!isRecord(value)) throw new Error('The server sent an unexpected recheck.');
  return {
    id: id(value['id']),
    reviewer: parsePerson(value['reviewer']),
    state: value['state'] === 'disputed' || value['verdict'] === 'disputed' ? 'disputed' : 'confirmed',
    digestMatch: value['digestMatch'] === true,
    comparisons: list(value['comparisons'], parseComparison),
    comment: text(value['comment']),
    createdAt: date(value['createdAt']),
  };
}

export function parseCommentView(value: unknown): CommentView {
  if (!isRecord(value)) throw new Error('The server sent an unexpected comment.');
  return { id: id(value['id']), author: parsePerson(value['author']), body: text(value['body']), createdAt: date(value['createdAt']) };
}

function parseRecheckRequest(value: unknown): RecheckRequestView | null {
  if (!isRecord(value)) return null;
  return {
    requestedBy: optionalPerson(value['requestedBy']),
    reviewer: optionalPerson(value['reviewer']),
    message: text(value['message']),
    requestedAt: date(value['requestedAt']),
  };
}

export function parseRevisionDetail(value: unknown): RevisionDetail {
  if (!isRecord(value)) throw new Error('The server sent an unexpected revision.');
  const parsed = parseCase(value['params']);
  return {
    caseId: typeof value['caseId'] === 'string' || typeof value['caseId'] === 'number' ? id(value['caseId']) : '',
    caseTitle: text(value['caseTitle']),
    number: count(value['number'], 1),
    params: parsed.ok ? parsed.value : null,
    rawParams: value['params'],
    schemaVersion: count(value['schemaVersion'], 1),
    paramsDigest: text(value['paramsDigest']),
    note: text(value['note']),
    author: parsePerson(value['author']),
    createdAt: date(value['createdAt']),
    recheckState: parseRecheckState(value['recheckState']),
    recheckRequest: parseRecheckRequest(value['recheckRequest']),
    runs: list(value['runs'], parseRunView),
    rechecks: list(value['rechecks'], parseRecheckView),
    comments: list(value['comments'], parseCommentView),
  };
}

export function parseLinkCreated(value: unknown): CaseLinkCreated {
  if (!isRecord(value) || typeof value['token'] !== 'string') throw new Error('The server sent an unexpected case link.');
  return {
    id: id(value['id']),
    token: value['token'],
    url: text(value['url']),
    revision: count(value['revision'], 1),
    expiresAt: date(value['expiresAt']),
  };
}

export function parseLinkView(value: unknown): CaseLinkView {
  if (!isRecord(value)) throw new Error('The server sent an unexpected case link.');
  return {
    id: id(value['id']),
    revision: count(value['revision'], 1),
    expiresAt: date(value['expiresAt']),
    revokedAt: optionalText(value['revokedAt']),
    state: value['state'] === 'revoked' || value['state'] === 'expired' ? value['state'] : 'active',
    createdAt: date(value['createdAt']),
    createdBy: optionalPerson(value['createdBy'] ?? value['author']),
  };
}

export function parsePublicLink(value: unknown): PublicCaseLink {
  if (!isRecord(value)) throw new Error('The server sent an unexpected case link.');
  return {
    caseTitle: text(value['caseTitle']),
    labName: text(value['labName']),
    revision: parseRevisionDetail(value['revision']),
    expiresAt: date(value['expiresAt']),
  };
}

export function parseBenchTraceSummary(value: unknown): BenchTraceSummary {
  if (!isRecord(value)) throw new Error('The server sent an unexpected bench trace.');
  return {
    id: id(value['id']),
    label: text(value['label']),
    fileName: text(value['fileName']),
    rows: count(value['rows']),
    columns: strings(value['columns']),
    duration: count(value['duration']),
    createdAt: date(value['createdAt']),
    author: optionalPerson(value['author']),
  };
}

/** Series may come as top-level arrays or inside `series`; either way they end up as plain number arrays. */
export function parseBenchTrace(value: unknown): BenchTrace {
  const summary = parseBenchTraceSummary(value);
  const v = value as Json;
  const series = isRecord(v['series']) ? v['series'] : v;
  const pivot = series['pivot'] ?? series['pivotPosition'];
  return {
    ...summary,
    time: numbers(series['time']),
    angle: numbers(series['angle']),
    pivot: Array.isArray(pivot) ? numbers(pivot) : null,
  };
}

export function parseSinkMail(value: unknown): SinkMail {
  const v = isRecord(value) ? value : {};
  const to = Array.isArray(v['to']) ? strings(v['to']).join(', ') : text(v['to']);
  return {
    id: typeof v['id'] === 'string' || typeof v['id'] === 'number' ? id(v['id']) : '',
    from: text(v['from']),
    to,
    subject: text(v['subject']),
    receivedAt: date(v['receivedAt'] ?? v['createdAt']),
    text: text(v['text'] ?? v['body']),
  };
}

export function parseOutboxEntry(value: unknown): OutboxEntry {
  const v = isRecord(value) ? value : {};
  return {
    id: typeof v['id'] === 'string' || typeof v['id'] === 'number' ? id(v['id']) : '',
    to: Array.isArray(v['to']) ? strings(v['to']).join(', ') : text(v['to']),
    subject: text(v['subject']),
    state: text(v['state'], v['sentAt'] ? 'sent' : 'pending'),
    attempts: count(v['attempts']),
    lastError: optionalText(v['lastError']),
    nextAttemptAt: optionalText(v['nextAttemptAt']),
    createdAt: date(v['createdAt']),
    sentAt: optionalText(v['sentAt']),
  };
}

/** Lists of the admin endpoints may be a bare array or a page. */
export function itemsOf<T>(reply: unknown, parse: (item: unknown) => T): T[] {
  if (Array.isArray(reply)) return reply.map(parse);
  if (isRecord(reply) && Array.isArray(reply['items'])) return reply['items'].map(parse);
  return [];
}
