/**
 * Case links: read-only access to one revision for people outside the lab. The token is 32 random bytes, shown
 * once when the link is made; only its SHA-256 is stored. A link stops working when it expires or is revoked
 * (410), and no route accepts a link token for writing.
 */
import type { Sequelize } from 'sequelize';
import type { CreatedLink, LinkView, PersonRef, PublicCaseView } from '../../shared/api';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { CaseLink, CaseRecord, Lab, Revision, User } from '../db/models';
import type { Actor, CaseAccess } from './case-access';
import { audit, findRevision, revisionDetail, storedResult, type StoredResultBytes } from './case-service';
import { offsetOf, paged, type PageQuery, type Paged } from './paging';
import { hashToken, newToken } from './tokens';

function linkState(link: CaseLink, now = new Date()): LinkView['state'] {
  if (link.revokedAt) return 'revoked';
  return link.expiresAt.getTime() <= now.getTime() ? 'expired' : 'active';
}

function linkView(link: CaseLink, number: number, creators: Map<string, PersonRef>): LinkView {
  return {
    id: link.id,
    revision: number,
    expiresAt: link.expiresAt.toISOString(),
    revokedAt: link.revokedAt ? link.revokedAt.toISOString() : null,
    state: linkState(link),
    createdBy: link.createdById ? (creators.get(link.createdById) ?? null) : null,
    createdAt: link.createdAt.toISOString(),
  };
}

export async function createLink(
  sequelize: Sequelize,
  config: Pick<Config, 'publicUrl'>,
  actor: Actor,
  access: CaseAccess,
  input: { revision: number; expiresInDays: number },
): Promise<CreatedLink> {
  return sequelize.transaction(async (transaction) => {
    const revision = await findRevision(access.caseId, input.revision, transaction);
    const token = newToken();
    const link = await CaseLink.create(
      {
        caseId: access.caseId,
        revisionId: revision.id,
        tokenHash: hashToken(token),
        expiresAt: new Date(Date.now() + input.expiresInDays * 86_400_000),
        createdById: actor.id,
      },
      { transaction },
    );
    await audit(transaction, actor.id, access.labId, 'link.created', access.caseId, { linkId: link.id, revision: revision.number, expiresAt: link.expiresAt.toISOString() });
    return {
      id: link.id,
      token,
      url: new URL(`/links/${token}`, config.publicUrl).toString(),
      revision: revision.number,
      expiresAt: link.expiresAt.toISOString(),
    };
  });
}

export async function listLinks(caseId: string, page: PageQuery): Promise<Paged<LinkView>> {
  const { rows, count } = await CaseLink.findAndCountAll({
    where: { caseId },
    include: [{ model: Revision, as: 'revision', attributes: ['number'] }],
    order: [['createdAt', 'DESC'], ['id', 'ASC']],
    limit: page.pageSize,
    offset: offsetOf(page),
  });
  const ids = [...new Set(rows.map((l) => l.createdById).filter((id): id is string => id !== null))];
  const users = ids.length ? await User.findAll({ where: { id: ids }, attributes: ['id', 'name'] }) : [];
  const creators = new Map(users.map((u) => [u.id, { id: u.id, name: u.name }]));
  return paged(rows.map((l) => linkView(l, l.revision?.number ?? 0, creators)), count, page);
}

export async function revokeLink(sequelize: Sequelize, actor: Actor, access: CaseAccess, linkId: string): Promise<LinkView> {
  return sequelize.transaction(async (transaction) => {
    const link = await CaseLink.findOne({
      where: { id: linkId, caseId: access.caseId },
      include: [{ model: Revision, as: 'revision', attributes: ['number'] }],
      lock: { level: transaction.LOCK.UPDATE, of: CaseLink },
      transaction,
    });
    if (!link) throw new AppError('link_not_found', 'This case has no such link.', 404, 'linkId');
    if (!link.revokedAt) {
      await link.update({ revokedAt: new Date() }, { transaction });
      await audit(transaction, actor.id, access.labId, 'link.revoked', access.caseId, { linkId: link.id });
    }
    return linkView(link, link.revision?.number ?? 0, new Map([[actor.id, { id: actor.id, name: actor.name }]]));
  });
}

/** The live link of a token and its case: 404 for an unknown token, 410 once expired or revoked. */
async function openLink(token: string): Promise<{ link: CaseLink; record: CaseRecord; number: number }> {
  const link = await CaseLink.findOne({ where: { tokenHash: hashToken(token) }, include: [{ model: Revision, as: 'revision', attributes: ['number'] }] });
  if (!link || !link.revision) throw new AppError('link_not_found', 'This case link does not exist.', 404, 'token');
  const state = linkState(link);
  if (state === 'revoked') throw new AppError('link_revoked', 'This case link was revoked by the lab.', 410, 'token');
  if (state === 'expired') throw new AppError('link_expired', `This case link expired on ${link.expiresAt.toISOString()}.`, 410, 'token');
  const record = await CaseRecord.findByPk(link.caseId, { attributes: ['id', 'labId', 'title'] });
  if (!record) throw new AppError('link_not_found', 'This case link does not exist.', 404, 'token');
  return { link, record, number: link.revision.number };
}

/** The public read of a link: 404 for an unknown token, 410 once expired or revoked. */
export async function readLink(token: string): Promise<PublicCaseView> {
  const { link, record, number } = await openLink(token);
  const lab = await Lab.findByPk(record.labId, { attributes: ['name'] });
  return {
    caseTitle: record.title,
    labName: lab?.name ?? '',
    revision: await revisionDetail(record.id, number, { withComments: false }),
    expiresAt: link.expiresAt.toISOString(),
  };
}

/** The stored result of one run of the linked revision, under the same 404/410 rules as the link. */
export async function linkRunResult(token: string, runId: string): Promise<StoredResultBytes> {
  const { record, number } = await openLink(token);
  return storedResult(record.id, number, runId);
}
