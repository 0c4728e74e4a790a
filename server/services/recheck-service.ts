/**
 * The recheck flow of a revision: draft -> awaiting-recheck (an analyst asks a reviewer) -> confirmed or disputed
 * (the reviewer reran the stored runs and compared the numbers). Every state change writes its notice e-mail to the
 * outbox in the same transaction, and the case mirrors the state of its latest revision.
 */
import type { Sequelize, Transaction } from 'sequelize';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { CaseRecord, Membership, Recheck, Revision, Run, User, type RecheckState } from '../db/models';
import type { RecheckBody, RecheckView, RevisionDetail } from '../../shared/api';
import type { Actor, CaseAccess } from './case-access';
import { audit, findRevision, recheckView, revisionDetail } from './case-service';
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
    const revision = await findRevision(access.caseId, number, transaction);
    const runs = await Run.findAll({ where: { revisionId: revision.id }, attributes: ['id'], transaction });
    const runIds = new Set(runs.map((r) => r.id));
    input.comparisons.forEach((c, i) => {
      if (!runIds.has(c.runId)) throw new AppError('run_not_found', `comparisons.${i}.runId is not a run of r${number}.`, 422, `comparisons.${i}.runId`);
    });
    if (input.verdict === 'confirmed') {
      input.comparisons.forEach((c, i) => {
        const j = c.numbers.findIndex((n) => !n.match);
        if (j >= 0) {
          throw new AppError('verdict_contradicts_numbers', `A number did not match (${c.numbers[j]?.name}); a recheck with a mismatch cannot be confirmed.`, 422, `comparisons.${i}.numbers.${j}.match`);
        }
      });
    }
    const record = await CaseRecord.findByPk(access.caseId, { transaction });
    if (!record) throw new AppError('case_not_found', 'No such case.', 404, 'caseId');
    const recheck = await Recheck.create(
      {
        revisionId: revision.id,
        reviewerId: actor.id,
        state: input.verdict,
        digestMatch: input.comparisons.every((c) => c.digestMatch),
        comparisons: input.comparisons,
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
