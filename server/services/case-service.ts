/**
 * The case library: cases, their append-only revisions and runs, comments and the case's audit trail.
 *
 * Saving a revision locks the case row, checks that the caller saw the latest revision, and inserts the next
 * number in one transaction; a concurrent save waits for the lock, then finds the number moved and gets 409 with
 * nothing written. The unique (case_id, number) index backs this up.
 */
import { Op, QueryTypes, UniqueConstraintError, type Sequelize, type Transaction } from 'sequelize';
import { caseDigest, canonicalJson, parseCase, type CaseParams } from '../../shared/case';
import { parseRunSettingsFor } from '../../shared/engine/run-kinds';
import { AppError } from '../app-error';
import {
  AuditEvent,
  CaseRecord,
  Comment,
  Lab,
  Recheck,
  Revision,
  Run,
  RunVerification,
  User,
  type LabRole,
  type RecheckState,
  type VerificationState,
} from '../db/models';
import type {
  AuditEntry, CaseDetail, CaseListItem, CaseSort, CommentView, PersonRef, RecheckView, RevisionDetail, RevisionSummary, RunView, StoreRunBody, VerificationView,
} from '../../shared/api';
import type { Actor, CaseAccess } from './case-access';
import { offsetOf, paged, type PageQuery, type Paged } from './paging';

export type { Actor };

export interface CaseQuery {
  search?: string | undefined;
  tag?: string | undefined;
  author?: string | undefined;
  recheck?: RecheckState | undefined;
  archived: boolean;
  sort: CaseSort;
  page: number;
  pageSize: number;
}

const withAuthor = { model: User, as: 'author', attributes: ['id', 'name'] };

export function personRef(user: User | null | undefined): PersonRef | null {
  return user ? { id: user.id, name: user.name } : null;
}

async function people(ids: ReadonlyArray<string | null>, transaction?: Transaction): Promise<Map<string, PersonRef>> {
  const wanted = [...new Set(ids.filter((id): id is string => id !== null))];
  if (wanted.length === 0) return new Map();
  const users = await User.findAll({ where: { id: wanted }, attributes: ['id', 'name'], transaction });
  return new Map(users.map((u) => [u.id, { id: u.id, name: u.name }]));
}

/** Validates case parameters with the shared schema: 422 naming the first bad field as `params.<path>`. */
export function validParams(input: unknown): { params: CaseParams; digest: string } {
  const parsed = parseCase(input);
  if (!parsed.ok) {
    const first = parsed.issues[0];
    const field = first?.field ? `params.${first.field}` : 'params';
    throw new AppError('invalid_params', `${field}: ${first?.message ?? 'not a valid case'}`, 422, field);
  }
  // Stored in canonical form so the JSONB holds exactly what the digest covers.
  const params = JSON.parse(canonicalJson(parsed.value)) as CaseParams;
  return { params, digest: caseDigest(params) };
}

export async function audit(
  transaction: Transaction | undefined,
  actorId: string | null,
  labId: string,
  action: string,
  caseId: string,
  details: Record<string, unknown> = {},
): Promise<void> {
  await AuditEvent.create({ actorId, labId, action, details: { caseId, ...details } }, { transaction });
}

function listItem(c: CaseRecord): CaseListItem {
  return {
    id: c.id,
    title: c.title,
    tags: c.tags,
    labId: c.labId,
    latestRevision: c.latestRevision,
    recheckState: c.recheckState,
    author: personRef(c.author),
    createdAt: c.createdAt.toISOString(),
    updatedAt: c.updatedAt.toISOString(),
    archived: c.archived,
  };
}

function revisionSummary(r: Revision, authors: Map<string, PersonRef>): RevisionSummary {
  return {
    number: r.number,
    paramsDigest: r.paramsDigest,
    note: r.note,
    author: r.authorId ? (authors.get(r.authorId) ?? null) : null,
    createdAt: r.createdAt.toISOString(),
    recheckState: r.recheckState,
  };
}

const ORDER: Record<CaseSort, string> = {
  '-updated': 'c.updated_at DESC, c.id',
  updated: 'c.updated_at ASC, c.id',
  title: 'c.title ASC, c.id',
  '-title': 'c.title DESC, c.id',
};

function likePattern(text: string): string {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

interface CaseListRow {
  id: string;
  lab_id: string;
  title: string;
  tags: string[];
  latest_revision: number;
  recheck_state: RecheckState;
  archived: boolean;
  created_at: Date;
  updated_at: Date;
  author_id: string | null;
  author_name: string | null;
  total: number;
}

/**
 * One page of a lab's cases and the total, in one statement: the page comes in index order
 * (cases_lab_live_updated), the total from an uncorrelated count the planner runs once, and the search from the
 * pg_trgm indexes on title and tags (migration 0003). Only a page past the end needs a second query for the total.
 */
export async function listCases(labId: string, q: CaseQuery): Promise<Paged<CaseListItem>> {
  const sequelize = CaseRecord.sequelize;
  if (!sequelize) throw new Error('models are not bound to a database');
  const bind: Record<string, unknown> = { labId, archived: q.archived, limit: q.pageSize, offset: offsetOf(q) };
  const conditions = ['c.lab_id = $labId', 'c.archived = $archived'];
  if (q.search) {
    bind['pattern'] = likePattern(q.search);
    conditions.push('(c.title ILIKE $pattern OR qp_tags_text(c.tags) ILIKE $pattern)');
  }
  if (q.tag) {
    bind['tag'] = q.tag;
    conditions.push('c.tags @> ARRAY[$tag]::varchar(40)[]');
  }
  if (q.author) {
    bind['author'] = q.author;
    conditions.push('c.author_id = $author');
  }
  if (q.recheck) {
    bind['recheck'] = q.recheck;
    conditions.push('c.recheck_state = $recheck');
  }
  const where = conditions.join(' AND ');
  const rows = await sequelize.query<CaseListRow>(
    `SELECT c.id, c.lab_id, c.title, c.tags, c.latest_revision, c.recheck_state, c.archived, c.created_at, c.updated_at,
            u.id AS author_id, u.name AS author_name, (SELECT count(*) FROM cases c WHERE ${where})::int AS total
       FROM cases c LEFT JOIN users u ON u.id = c.author_id
      WHERE ${where}
      ORDER BY ${ORDER[q.sort]}
      LIMIT $limit OFFSET $offset`,
    { bind, type: QueryTypes.SELECT },
  );
  const total =
    rows[0]?.total ??
    (await sequelize.query<{ total: number }>(`SELECT count(*)::int AS total FROM cases c WHERE ${where}`, { bind, type: QueryTypes.SELECT }))[0]?.total ??
    0;
  const items = rows.map((r) => ({
    id: r.id,
    title: r.title,
    tags: r.tags,
    labId: r.lab_id,
    latestRevision: r.latest_revision,
    recheckState: r.recheck_state,
    author: r.author_id ? { id: r.author_id, name: r.author_name ?? '' } : null,
    createdAt: r.created_at.toISOString(),
    updatedAt: r.updated_at.toISOString(),
    archived: r.archived,
  }));
  return paged(items, total, q);
}

export async function caseDetail(caseId: string, myRole: LabRole, transaction?: Transaction): Promise<CaseDetail> {
  const found = await CaseRecord.findByPk(caseId, { include: [withAuthor], transaction });
  if (!found) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
  const lab = await Lab.findByPk(found.labId, { attributes: ['id', 'name'], transaction });
  const revisions = await Revision.findAll({
    where: { caseId },
    attributes: ['number', 'paramsDigest', 'note', 'authorId', 'createdAt', 'recheckState'],
    order: [['number', 'DESC']],
    transaction,
  });
  const authors = await people(revisions.map((r) => r.authorId), transaction);
  const { labId: _labId, ...item } = listItem(found);
  return {
    ...item,
    lab: { id: found.labId, name: lab?.name ?? '' },
    myRole,
    revisions: revisions.map((r) => revisionSummary(r, authors)),
  };
}

async function insertRevision(
  transaction: Transaction,
  actor: Actor,
  record: CaseRecord,
  number: number,
  params: CaseParams,
  digest: string,
  note: string,
): Promise<Revision> {
  const revision = await Revision.create(
    { caseId: record.id, number, params, schemaVersion: params.schemaVersion, paramsDigest: digest, note, authorId: actor.id },
    { transaction },
  );
  await record.update({ latestRevision: number, recheckState: 'draft' }, { transaction });
  return revision;
}

export async function createCase(
  sequelize: Sequelize,
  actor: Actor,
  labId: string,
  role: LabRole,
  input: { title: string; tags: string[]; params: unknown; note?: string | undefined },
): Promise<CaseDetail> {
  const { params, digest } = validParams(input.params);
  return sequelize.transaction(async (transaction) => {
    const record = await CaseRecord.create({ labId, title: input.title, tags: normaliseTags(input.tags), authorId: actor.id }, { transaction });
    await insertRevision(transaction, actor, record, 1, params, digest, input.note ?? '');
    await audit(transaction, actor.id, labId, 'case.created', record.id, { title: record.title, revision: 1, paramsDigest: digest });
    return caseDetail(record.id, role, transaction);
  });
}

export function normaliseTags(tags: readonly string[]): string[] {
  return [...new Set(tags.map((t) => t.trim().toLowerCase()).filter((t) => t.length > 0))].sort();
}

export async function updateCase(
  sequelize: Sequelize,
  actor: Actor,
  access: CaseAccess,
  patch: { title?: string | undefined; tags?: string[] | undefined; archived?: boolean | undefined },
): Promise<CaseDetail> {
  return sequelize.transaction(async (transaction) => {
    const record = await CaseRecord.findByPk(access.caseId, { lock: transaction.LOCK.UPDATE, transaction });
    if (!record) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
    const changes: Record<string, unknown> = {};
    if (patch.title !== undefined && patch.title !== record.title) changes['title'] = { from: record.title, to: patch.title };
    const tags = patch.tags === undefined ? undefined : normaliseTags(patch.tags);
    if (tags !== undefined && canonicalJson(tags) !== canonicalJson(record.tags)) changes['tags'] = { from: record.tags, to: tags };
    if (patch.archived !== undefined && patch.archived !== record.archived) changes['archived'] = { from: record.archived, to: patch.archived };
    if (Object.keys(changes).length > 0) {
      await record.update(
        {
          ...(patch.title !== undefined ? { title: patch.title } : {}),
          ...(tags !== undefined ? { tags } : {}),
          ...(patch.archived !== undefined ? { archived: patch.archived } : {}),
        },
        { transaction },
      );
      const action = 'archived' in changes ? (patch.archived ? 'case.archived' : 'case.restored') : 'case.updated';
      await audit(transaction, actor.id, access.labId, action, record.id, { changes });
    }
    return caseDetail(record.id, access.role, transaction);
  });
}

export async function findRevision(caseId: string, number: number, transaction?: Transaction): Promise<Revision> {
  const revision = await Revision.findOne({ where: { caseId, number }, transaction });
  if (!revision) throw new AppError('revision_not_found', `This case has no revision r${number}.`, 404, 'revision');
  return revision;
}

export async function duplicateCase(
  sequelize: Sequelize,
  actor: Actor,
  access: CaseAccess,
  input: { title?: string | undefined; revision?: number | undefined },
): Promise<CaseDetail> {
  return sequelize.transaction(async (transaction) => {
    const source = await CaseRecord.findByPk(access.caseId, { transaction });
    if (!source) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
    const from = await findRevision(source.id, input.revision ?? source.latestRevision, transaction);
    const title = input.title ?? `Copy of ${source.title}`.slice(0, 200);
    const record = await CaseRecord.create({ labId: source.labId, title, tags: source.tags, authorId: actor.id }, { transaction });
    const params = from.params as CaseParams;
    await insertRevision(transaction, actor, record, 1, params, from.paramsDigest, `Duplicated from "${source.title}" r${from.number}.`);
    await audit(transaction, actor.id, source.labId, 'case.duplicated', record.id, { fromCaseId: source.id, fromRevision: from.number });
    return caseDetail(record.id, access.role, transaction);
  });
}

function verificationView(r: Run, v: RunVerification | undefined): VerificationView {
  if (!v) return { state: 'pending', verifiedAt: null, engineVersion: null, failure: null, claimed: null, differences: [], resultBytes: null };
  const numbers = (v.comparison?.['numbers'] ?? []) as VerificationView['differences'];
  return {
    state: v.state,
    verifiedAt: v.createdAt.toISOString(),
    engineVersion: v.engineVersion,
    failure: v.failure,
    claimed: v.state === 'unreproduced' ? { summary: r.summary, resultDigest: r.resultDigest, engineVersion: r.engineVersion } : null,
    differences: numbers.filter((n) => n.match === false),
    resultBytes: v.encoding ? { raw: v.rawBytes, compressed: v.compressedBytes } : null,
  };
}

function runView(r: Run, authors: Map<string, PersonRef>, v?: RunVerification): RunView {
  const server = v && v.summary && v.resultDigest ? { summary: v.summary, resultDigest: v.resultDigest, engineVersion: v.engineVersion } : null;
  return {
    id: r.id,
    kind: r.kind,
    settings: r.settings,
    summary: server?.summary ?? r.summary,
    resultDigest: server?.resultDigest ?? r.resultDigest,
    engineVersion: server?.engineVersion ?? r.engineVersion,
    verification: verificationView(r, v),
    author: r.authorId ? (authors.get(r.authorId) ?? null) : null,
    createdAt: r.createdAt.toISOString(),
  };
}

/** The verifications of some runs, by run id (the stored result bytes are left in the database). */
export async function verificationsOf(runIds: readonly string[], transaction?: Transaction): Promise<Map<string, RunVerification>> {
  if (runIds.length === 0) return new Map();
  const rows = await RunVerification.findAll({
    where: { runId: [...runIds] },
    attributes: { exclude: ['compressed'] },
    transaction,
  });
  return new Map(rows.map((row) => [row.runId, row]));
}

export function recheckView(r: Recheck, reviewers: Map<string, PersonRef>): RecheckView {
  return {
    id: r.id,
    reviewer: r.reviewerId ? (reviewers.get(r.reviewerId) ?? null) : null,
    state: r.state,
    digestMatch: r.digestMatch,
    comparisons: r.comparisons,
    comment: r.comment,
    createdAt: r.createdAt.toISOString(),
  };
}

function commentView(c: Comment, authors: Map<string, PersonRef>): CommentView {
  return { id: c.id, body: c.body, author: c.authorId ? (authors.get(c.authorId) ?? null) : null, createdAt: c.createdAt.toISOString() };
}

/** A revision with its runs, rechecks and (unless `withComments` is false, as for case links) comments. */
export async function revisionDetail(caseId: string, number: number, options: { withComments?: boolean; transaction?: Transaction } = {}): Promise<RevisionDetail> {
  const { transaction } = options;
  const record = await CaseRecord.findByPk(caseId, { attributes: ['id', 'title'], transaction });
  if (!record) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
  const revision = await findRevision(caseId, number, transaction);
  // One after another: inside a transaction they share one connection.
  const oldestFirst: Array<[string, 'ASC']> = [['createdAt', 'ASC'], ['id', 'ASC']];
  const runs = await Run.findAll({ where: { revisionId: revision.id }, order: oldestFirst, transaction });
  const verifications = await verificationsOf(runs.map((r) => r.id), transaction);
  const rechecks = await Recheck.findAll({ where: { revisionId: revision.id }, order: oldestFirst, transaction });
  const comments = options.withComments === false ? [] : await Comment.findAll({ where: { revisionId: revision.id }, order: oldestFirst, transaction });
  const refs = await people(
    [
      revision.authorId,
      revision.recheckRequestedById,
      revision.recheckReviewerId,
      ...runs.map((r) => r.authorId),
      ...rechecks.map((r) => r.reviewerId),
      ...comments.map((c) => c.authorId),
    ],
    transaction,
  );
  const ref = (id: string | null) => (id ? (refs.get(id) ?? null) : null);
  return {
    caseId,
    caseTitle: record.title,
    ...revisionSummary(revision, refs),
    params: revision.params as CaseParams,
    schemaVersion: revision.schemaVersion,
    recheckRequest: revision.recheckRequestedAt
      ? {
          requestedBy: ref(revision.recheckRequestedById),
          reviewer: ref(revision.recheckReviewerId),
          message: revision.recheckMessage,
          requestedAt: revision.recheckRequestedAt.toISOString(),
        }
      : null,
    runs: runs.map((r) => runView(r, refs, verifications.get(r.id))),
    rechecks: rechecks.map((r) => recheckView(r, refs)),
    ...(options.withComments === false ? {} : { comments: comments.map((c) => commentView(c, refs)) }),
  };
}

export async function saveRevision(
  sequelize: Sequelize,
  actor: Actor,
  access: CaseAccess,
  input: { baseRevision: number; params: unknown; note?: string | undefined },
): Promise<RevisionDetail> {
  const { params, digest } = validParams(input.params);
  try {
    return await sequelize.transaction(async (transaction) => {
      const record = await CaseRecord.findByPk(access.caseId, { lock: transaction.LOCK.UPDATE, transaction });
      if (!record) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
      if (record.archived) throw new AppError('case_archived', 'This case is archived; restore it before saving a new revision.', 409);
      if (input.baseRevision !== record.latestRevision) throw staleRevision(input.baseRevision, record.latestRevision);
      const number = record.latestRevision + 1;
      await insertRevision(transaction, actor, record, number, params, digest, input.note ?? '');
      await audit(transaction, actor.id, access.labId, 'revision.saved', record.id, { revision: number, paramsDigest: digest });
      return revisionDetail(record.id, number, { transaction });
    });
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw staleRevision(input.baseRevision, input.baseRevision + 1);
    throw err;
  }
}

function staleRevision(base: number, latest: number): AppError {
  return new AppError(
    'stale_revision',
    `This case moved on: you edited r${base} but the latest is r${latest}. Nothing was saved; open r${latest}, reapply your changes and save again.`,
    409,
    'baseRevision',
  );
}

export async function storeRun(sequelize: Sequelize, actor: Actor, access: CaseAccess, number: number, input: StoreRunBody): Promise<RunView> {
  if (input.settings.kind !== input.kind) {
    throw new AppError('settings_kind_mismatch', 'settings.kind must equal kind.', 422, 'settings.kind');
  }
  const { params, digest } = validParams(input.params);
  const fit = parseRunSettingsFor(params, input.settings);
  if (!fit.ok) throw new AppError('settings_not_for_case', `settings.${fit.field}: ${fit.message}.`, 422, `settings.${fit.field}`);
  return sequelize.transaction(async (transaction) => {
    const revision = await findRevision(access.caseId, number, transaction);
    if (digest !== revision.paramsDigest) {
      throw new AppError('params_mismatch', `The run was computed for other parameters than r${number} (digest ${digest.slice(0, 12)}... is not ${revision.paramsDigest.slice(0, 12)}...).`, 422, 'params');
    }
    if (input.caseDigest !== undefined && input.caseDigest !== revision.paramsDigest) {
      throw new AppError('params_mismatch', `caseDigest does not match r${number}'s parameters digest.`, 422, 'caseDigest');
    }
    const run = await Run.create(
      {
        revisionId: revision.id,
        kind: input.kind,
        settings: input.settings,
        summary: input.summary,
        resultDigest: input.resultDigest,
        engineVersion: input.engineVersion,
        authorId: actor.id,
      },
      { transaction },
    );
    await audit(transaction, actor.id, access.labId, 'run.stored', access.caseId, { revision: number, runId: run.id, kind: run.kind });
    return runView(run, new Map([[actor.id, { id: actor.id, name: actor.name }]]));
  });
}

export interface StoredResultBytes {
  encoding: string;
  compressed: Buffer;
  state: VerificationState;
  verifiedAt: string;
}

/**
 * The server's stored result of a run of the revision: 404 run_not_found, 409 result_pending while the server is
 * still rerunning it, 404 result_not_stored when its rerun failed (the run is unreproduced with the failure).
 */
export async function storedResult(caseId: string, number: number, runId: string): Promise<StoredResultBytes> {
  const revision = await findRevision(caseId, number);
  const run = await Run.findOne({ where: { id: runId, revisionId: revision.id }, attributes: ['id'] });
  if (!run) throw new AppError('stored_run_not_found', `r${number} has no such run.`, 404, 'runId');
  const v = await RunVerification.findByPk(runId);
  if (!v) throw new AppError('result_pending', 'The server is still rerunning this run; its stored result appears once it is verified.', 409);
  if (!v.encoding || !v.compressed) throw new AppError('result_not_stored', `The server could not reproduce this run${v.failure ? `: ${v.failure}` : ''}.`, 404);
  return { encoding: v.encoding, compressed: v.compressed, state: v.state, verifiedAt: v.createdAt.toISOString() };
}

export async function listComments(caseId: string, number: number, page: PageQuery): Promise<Paged<CommentView>> {
  const revision = await findRevision(caseId, number);
  const { rows, count } = await Comment.findAndCountAll({
    where: { revisionId: revision.id },
    order: [['createdAt', 'ASC'], ['id', 'ASC']],
    limit: page.pageSize,
    offset: offsetOf(page),
  });
  const authors = await people(rows.map((c) => c.authorId));
  return paged(rows.map((c) => commentView(c, authors)), count, page);
}

export async function addComment(sequelize: Sequelize, actor: Actor, access: CaseAccess, number: number, body: string): Promise<CommentView> {
  return sequelize.transaction(async (transaction) => {
    const revision = await findRevision(access.caseId, number, transaction);
    const comment = await Comment.create({ revisionId: revision.id, authorId: actor.id, body }, { transaction });
    await audit(transaction, actor.id, access.labId, 'comment.added', access.caseId, { revision: number, commentId: comment.id });
    return commentView(comment, new Map([[actor.id, { id: actor.id, name: actor.name }]]));
  });
}

export async function caseAudit(caseId: string, page: PageQuery): Promise<Paged<AuditEntry>> {
  const { rows, count } = await AuditEvent.findAndCountAll({
    where: { details: { caseId } },
    order: [['id', 'DESC']],
    limit: page.pageSize,
    offset: offsetOf(page),
  });
  const actors = await people(rows.map((e) => e.actorId));
  const items = rows.map((e) => ({
    id: String(e.id),
    action: e.action,
    actor: e.actorId ? (actors.get(e.actorId) ?? null) : null,
    details: e.details,
    createdAt: e.createdAt.toISOString(),
  }));
  return paged(items, count, page);
}
