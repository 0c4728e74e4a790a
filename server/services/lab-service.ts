/**
 * Labs and their members: who belongs, with what role, and how owners add, invite, re-role and remove people.
 * A lab always keeps at least one owner. An invitation and its mail are written in one transaction: the mail goes
 * through the outbox, and only the token's hash stays in `invitations`.
 */
import { Op, type Sequelize, type Transaction } from 'sequelize';
import type { AddMemberResult, Invitation as InvitationView, LabRole, LabSummary, Member } from '../../shared/api';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { AuditEvent, Invitation, Lab, Membership, User } from '../db/models';
import type { Actor } from './case-access';
import { offsetOf, paged, type PageQuery, type Paged } from './paging';
import { hashPassword } from './passwords';
import { normaliseEmail } from './auth-service';
import { enqueueMail } from './outbox-service';
import { hashToken, newToken } from './tokens';

function memberView(m: Membership): Member {
  if (!m.user) throw new Error('membership loaded without its user');
  return { userId: m.userId, email: m.user.email, name: m.user.name, role: m.role, joinedAt: m.createdAt.toISOString() };
}

function invitationView(i: Invitation): InvitationView {
  return { id: i.id, labId: i.labId, email: i.email, role: i.role, invitedAt: i.createdAt.toISOString(), expiresAt: i.expiresAt.toISOString() };
}

export async function labsOf(userId: string, q: PageQuery): Promise<Paged<LabSummary>> {
  const { rows, count } = await Membership.findAndCountAll({
    where: { userId },
    include: [{ model: Lab, as: 'lab' }],
    order: [[{ model: Lab, as: 'lab' }, 'name', 'ASC']],
    limit: q.pageSize,
    offset: offsetOf(q),
  });
  const items = rows.map((m) => ({ id: m.labId, name: m.lab?.name ?? '', role: m.role }));
  return paged(items, count, q);
}

export async function membersOf(labId: string, q: PageQuery): Promise<Paged<Member>> {
  const { rows, count } = await Membership.findAndCountAll({
    where: { labId },
    include: [{ model: User, as: 'user' }],
    order: [[{ model: User, as: 'user' }, 'name', 'ASC']],
    limit: q.pageSize,
    offset: offsetOf(q),
  });
  return paged(rows.map(memberView), count, q);
}

/**
 * Adds an existing account to the lab, or invites an unknown address: the invitation (token hash only) and an
 * outbox mail carrying the one-time accept link are written in the same transaction, so neither exists without the
 * other. The outbox sender loop delivers the mail.
 */
export async function addMember(
  sequelize: Sequelize,
  actor: Actor,
  labId: string,
  rawEmail: string,
  role: LabRole,
  config: Pick<Config, 'publicUrl' | 'invitationTtlHours'>,
): Promise<AddMemberResult> {
  const email = normaliseEmail(rawEmail);
  return sequelize.transaction(async (transaction) => {
    const user = await User.findOne({ where: { email }, transaction });
    if (user) {
      const existing = await Membership.findOne({ where: { labId, userId: user.id }, transaction });
      if (existing) throw new AppError('already_member', `${email} is already a member of this lab (${existing.role}).`, 409, 'email');
      const membership = await Membership.create({ labId, userId: user.id, role }, { transaction });
      membership.user = user;
      await AuditEvent.create({ actorId: actor.id, labId, action: 'member.added', details: { userId: user.id, role } }, { transaction });
      return { kind: 'member', member: memberView(membership) };
    }
    const token = newToken();
    const invitation = await Invitation.create(
      { labId, email, role, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + config.invitationTtlHours * 3_600_000), invitedById: actor.id },
      { transaction },
    );
    const link = new URL(`/invitations/${encodeURIComponent(token)}`, config.publicUrl).toString();
    await enqueueMail(
      {
        to: email,
        subject: 'You are invited to a Quiverpoint lab',
        text: `${actor.name} invited you to join their lab as ${role}.\n\nAccept within ${config.invitationTtlHours} hours: ${link}\n`,
      },
      transaction,
    );
    await AuditEvent.create({ actorId: actor.id, labId, action: 'member.invited', details: { email, role } }, { transaction });
    return { kind: 'invitation', invitation: invitationView(invitation), queued: true };
  });
}

/** Invitations of the lab that are neither accepted nor expired, newest first. */
export async function pendingInvitationsOf(labId: string, q: PageQuery): Promise<Paged<InvitationView>> {
  const { rows, count } = await Invitation.findAndCountAll({
    where: { labId, acceptedAt: null, expiresAt: { [Op.gt]: new Date() } },
    order: [['createdAt', 'DESC'], ['id', 'ASC']],
    limit: q.pageSize,
    offset: offsetOf(q),
  });
  return paged(rows.map(invitationView), count, q);
}

/** Withdraws a pending invitation: the row goes, so its token no longer accepts. */
export async function revokeInvitation(sequelize: Sequelize, actorId: string, labId: string, invitationId: string): Promise<void> {
  await sequelize.transaction(async (transaction) => {
    const invitation = await Invitation.findOne({
      where: { id: invitationId, labId, acceptedAt: null },
      lock: transaction.LOCK.UPDATE,
      transaction,
    });
    if (!invitation) throw new AppError('invitation_not_found', 'That invitation does not exist or was already accepted.', 404, 'invitationId');
    await invitation.destroy({ transaction });
    await AuditEvent.create(
      { actorId, labId, action: 'invitation.revoked', details: { email: invitation.email, role: invitation.role } },
      { transaction },
    );
  });
}

async function lockedMembers(labId: string, transaction: Transaction): Promise<Membership[]> {
  return Membership.findAll({ where: { labId }, lock: transaction.LOCK.UPDATE, transaction, order: [['id', 'ASC']] });
}

function ensureOwnerRemains(members: Membership[], target: Membership, newRole: LabRole | null): void {
  const owners = members.filter((m) => m.role === 'owner');
  if (target.role === 'owner' && newRole !== 'owner' && owners.length <= 1) {
    throw new AppError('last_owner', 'A lab needs at least one owner: make someone else owner first.', 409);
  }
}

export async function changeRole(sequelize: Sequelize, actorId: string, labId: string, userId: string, role: LabRole): Promise<Member> {
  return sequelize.transaction(async (transaction) => {
    const members = await lockedMembers(labId, transaction);
    const target = members.find((m) => m.userId === userId);
    if (!target) throw new AppError('member_not_found', 'That person is not a member of this lab.', 404, 'userId');
    ensureOwnerRemains(members, target, role);
    const from = target.role;
    await target.update({ role }, { transaction });
    await AuditEvent.create({ actorId, labId, action: 'member.role_changed', details: { userId, from, to: role } }, { transaction });
    const user = await User.findByPk(userId, { transaction });
    if (!user) throw new AppError('member_not_found', 'That person is not a member of this lab.', 404, 'userId');
    target.user = user;
    return memberView(target);
  });
}

export async function removeMember(sequelize: Sequelize, actorId: string, labId: string, userId: string): Promise<void> {
  await sequelize.transaction(async (transaction) => {
    const members = await lockedMembers(labId, transaction);
    const target = members.find((m) => m.userId === userId);
    if (!target) throw new AppError('member_not_found', 'That person is not a member of this lab.', 404, 'userId');
    ensureOwnerRemains(members, target, null);
    await target.destroy({ transaction });
    await AuditEvent.create({ actorId, labId, action: 'member.removed', details: { userId, role: target.role } }, { transaction });
  });
}

/**
 * Redeems an invitation token: joins the invited address to the lab, creating its account (with `name` and
 * `password`) when it has none yet. Returns the user.
 */
export async function acceptInvitation(
  sequelize: Sequelize,
  token: string,
  account: { name?: string | undefined; password?: string | undefined },
): Promise<User> {
  return sequelize.transaction(async (transaction) => {
    const invitation = await Invitation.findOne({
      where: { tokenHash: hashToken(token), acceptedAt: null, expiresAt: { [Op.gt]: new Date() } },
      lock: transaction.LOCK.UPDATE,
      transaction,
    });
    if (!invitation) throw new AppError('invitation_invalid', 'This invitation is unknown, used or expired.', 404, 'token');
    let user = await User.findOne({ where: { email: invitation.email }, transaction });
    if (!user) {
      if (!account.name) throw new AppError('missing_field', 'name is required.', 400, 'name');
      if (!account.password) throw new AppError('missing_field', 'password is required.', 400, 'password');
      user = await User.create({ email: invitation.email, name: account.name, passwordHash: await hashPassword(account.password) }, { transaction });
    }
    const existing = await Membership.findOne({ where: { labId: invitation.labId, userId: user.id }, transaction });
    if (!existing) await Membership.create({ labId: invitation.labId, userId: user.id, role: invitation.role }, { transaction });
    await invitation.update({ acceptedAt: new Date() }, { transaction });
    await AuditEvent.create(
      { actorId: user.id, labId: invitation.labId, action: 'invitation.accepted', details: { role: invitation.role } },
      { transaction },
    );
    return user;
  });
}
