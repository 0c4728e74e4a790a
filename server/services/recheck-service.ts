/**
 * The recheck flow of a revision: draft -> awaiting-recheck (an analyst asks a reviewer) -> confirmed or disputed
 * (the reviewer reran the stored runs and compared the numbers). Every state change writes its notice e-mail to the
 * outbox in the same transaction, and the case mirrors the state of its latest revision.
 */
import type { Sequelize, Transaction } from 'sequelize';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { CaseRecord, Membership, Recheck, Revision, Run, User, type RecheckState } from '../db/models';
import type { RecheckBody, RecheckView, RevisionDetail, RunComparison } from '../../shared/api';
import type { Actor, CaseAccess } from './case-access';
import { audit, findRevision, recheckView, revisionDetail, verificationsOf } from './case-service';
import { enqueueMail } from './outbox-service';

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

function revisionUrl(config: Pick<Config, 'publicUrl'>, caseId: string, number: number): string {
  return new URL(`/cases/${caseId}/r/${number}/history`, config.publicUrl).toString();
}

async function setState(transaction: Transaction, revision: Revision, state: RecheckState, extra: Partial<Revision> = {}): Promise<void> {
  await revision.update({ recheckState: state, ...extra }, { transaction });
  const record = await CaseRecord.findByPk(revision.caseId, { lock: transaction.LOCK.UPDATE, transaction });
  if (record && record.latestRevision === revision.number) await record.update({ recheckState: state }, { transaction });
}

/** What a recheck keeps per run: the server's comparison (or why there is none). */
type StoredComparison = RunComparison & { kind: string; reproduced: boolean };

/**
 * The server's comparison of every stored run of the revision, from its own reruns (run-verifier.ts): 409
 * no_stored_runs without a run, 409 verification_pending while a rerun is still going.
 */
async function serverComparisons(revision: Revision, transaction: Transaction): Promise<StoredComparison[]> {
  const runs = await Run.findAll({ where: { revisionId: revision.id }, attributes: ['id', 'kind'], order: [['createdAt', 'ASC'], ['id', 'ASC']], transaction });
  if (runs.length === 0) throw noStoredRuns(revision.number);
  const verifications = await verificationsOf(runs.map((r) => r.id), transaction);
  const pending = runs.filter((r) => !verifications.has(r.id)).length;
  if (pending > 0) {
    throw new AppError('verification_pending', `The server is still rerunning ${pending} of the stored runs; try again in a moment.`, 409);
  }
  return runs.map((run) => {
    const v = verifications.get(run.id);
    const base = { runId: run.id, kind: run.kind, digestMatch: false, reproduced: false };
    if (!v?.comparison) return { ...base, numbers: [], failure: v?.failure ?? 'not reproduced' };
    return { ...v.comparison, ...base, digestMatch: v.comparison.digestMatch, reproduced: v.state === 'verified' };
  });
}

function noStoredRuns(number: number): AppError {
  return new AppError('no_stored_runs', `r${number} has no stored run: store a run before asking for or giving a recheck.`, 409);
}

export async function requestRecheck(
  sequelize: Sequelize,
  config: Pick<Config, 'publicUrl'>,
  actor: Actor,
  access: CaseAccess,
  number: number,
  input: { reviewerId: string; message?: string | undefined },
): Promise<RevisionDetail> {
  return sequelize.transaction(async (transaction) => {
    const revision = await findRevision(access.caseId, number, transaction);
    if ((await Run.count({ where: { revisionId: revision.id }, transaction })) === 0) throw noStoredRuns(number);
    const membership = await Membership.findOne({ where: { labId: access.labId, userId: input.reviewerId }, transaction });
    if (!membership || (membership.role !== 'reviewer' && membership.role !== 'owner')) {
      throw new AppError('reviewer_not_eligible', 'The reviewer must be a member of this lab with the reviewer or owner role.', 422, 'reviewerId');
    }
    if (input.reviewerId === actor.id) {
      throw new AppError('reviewer_not_eligible', 'Ask someone else to recheck your revision.', 422, 'reviewerId');
    }
    const reviewer = await User.findByPk(input.reviewerId, { transaction });
    const record = await CaseRecord.findByPk(access.caseId, { transaction });
    if (!reviewer || !record) throw new AppError('reviewer_not_eligible', 'No such reviewer.', 422, 'reviewerId');
    const from = revision.recheckState;
    await setState(transaction, revision, 'awaiting-recheck', {
      recheckRequestedById: actor.id,
      recheckReviewerId: reviewer.id,
      recheckMessage: input.message || null,
      recheckRequestedAt: new Date(),
    });
    const url = revisionUrl(config, record.id, number);
    const note = input.message ? `\n\nTheir note: ${input.message}\n` : '\n';
    await enqueueMail(
      {
        to: reviewer.email,
        subject: `Recheck requested: ${record.title} r${number}`,
        text: `${actor.name} asks you to recheck "${record.title}" revision r${number}.${note}\nOpen it: ${url}\n`,
        html:
          `<p>${escapeHtml(actor.name)} asks you to recheck <strong>${escapeHtml(record.title)}</strong> revision r${number}.</p>` +
          (input.message ? `<p>Their note: ${escapeHtml(input.message)}</p>` : '') +
          `<p><a href="${escapeHtml(url)}">Open the revision</a></p>`,
      },
      transaction,
    );
    await audit(transaction, actor.id, access.labId, 'recheck.requested', record.id, { revision: number, reviewerId: reviewer.id, from });
    return revisionDetail(record.id, number, { transaction });
  });
}

export async function recordRecheck(
  sequelize: Sequelize,
  config: Pick<Config, 'publicUrl'>,
  actor: Actor,
  access: CaseAccess,
  number: number,
  input: RecheckBody,
): Promise<RecheckView> {
  return sequelize.transaction(async (transaction) => {
    const revision = await Revision.findOne({ where: { caseId: access.caseId, number }, lock: transaction.LOCK.UPDATE, transaction });
    if (!revision) throw new AppError('revision_not_found', `This case has no revision r${number}.`, 404, 'revision');
    if (revision.recheckState !== 'awaiting-recheck') {
      throw new AppError('recheck_not_requested', `Nobody asked for a recheck of r${number} (it is ${revision.recheckState}); a verdict needs a request first.`, 409);
    }
    if (revision.authorId === actor.id) {
      throw new AppError('reviewer_is_author', 'You saved this revision; someone else must recheck it.', 403);
    }
    if (revision.recheckReviewerId && revision.recheckReviewerId !== actor.id) {
      throw new AppError('not_requested_reviewer', 'Another reviewer was asked to recheck this revision.', 403);
    }
    const comparisons = await serverComparisons(revision, transaction);
    const differs = comparisons.find((c) => !c.reproduced);
    if (input.verdict === 'confirmed' && differs) {
      throw new AppError(
        'comparison_differs',
        `The server's rerun of the ${differs.kind} run does not reproduce it; a recheck that differs can only be disputed.`,
        409,
        'verdict',
      );
    }
    const record = await CaseRecord.findByPk(access.caseId, { transaction });
    if (!record) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
    const recheck = await Recheck.create(
      {
        revisionId: revision.id,
        reviewerId: actor.id,
        state: input.verdict,
        digestMatch: comparisons.every((c) => c.digestMatch),
        comparisons,
        comment: input.comment,
      },
      { transaction },
    );
    const from = revision.recheckState;
    await setState(transaction, revision, input.verdict);
    const notifyId = revision.recheckRequestedById ?? revision.authorId;
    const notify = notifyId && notifyId !== actor.id ? await User.findByPk(notifyId, { transaction }) : null;
    if (notify) {
      const url = revisionUrl(config, record.id, number);
      await enqueueMail(
        {
          to: notify.email,
          subject: `Recheck ${input.verdict}: ${record.title} r${number}`,
          text: `${actor.name} rechecked "${record.title}" revision r${number}: ${input.verdict}.\n\n${input.comment}\n\nOpen it: ${url}\n`,
          html:
            `<p>${escapeHtml(actor.name)} rechecked <strong>${escapeHtml(record.title)}</strong> revision r${number}: <strong>${input.verdict}</strong>.</p>` +
            `<p>${escapeHtml(input.comment)}</p><p><a href="${escapeHtml(url)}">Open the revision</a></p>`,
        },
        transaction,
      );
    }
    await audit(transaction, actor.id, access.labId, `recheck.${input.verdict}`, record.id, {
      revision: number,
      recheckId: recheck.id,
      from,
      digestMatch: recheck.digestMatch,
    });
    return recheckView(recheck, new Map([[actor.id, { id: actor.id, name: actor.name }]]));
  });
}
