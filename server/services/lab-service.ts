/**
 * Labs and their members: who belongs, with what role, and how owners add, invite, re-role and remove people.
 * A lab always keeps at least one owner.
 */
import { createHash, randomBytes } from 'node:crypto';
import { Op, type Sequelize, type Transaction } from 'sequelize';
import { AppError } from '../app-error';
import { AuditEvent, Invitation, Lab, Membership, User, type LabRole } from '../db/models';
import { hashPassword } from './passwords';
import { normaliseEmail } from './auth-service';

export interface LabSummary {
  id: string;
  name: string;
  role: LabRole;
}

export interface MemberView {
  userId: string;
  email: string;
  name: string;
  role: LabRole;
  joinedAt: string;
}

export interface InvitationView {
  id: string;
  labId: string;
  email: string;
  role: LabRole;
  expiresAt: string;
}

export interface Page<T> {
  items: T[];
  total: number;
  limit: number;
  offset: number;
}

function memberView(m: Membership): MemberView {
  if (!m.user) throw new Error('membership loaded without its user');
  return { userId: m.userId, email: m.user.email, name: m.user.name, role: m.role, joinedAt: m.createdAt.toISOString() };
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

export async function labsOf(userId: string, limit: number, offset: number): Promise<Page<LabSummary>> {
  const { rows, count } = await Membership.findAndCountAll({
    where: { userId },
    include: [{ model: Lab, as: 'lab' }],
    order: [[{ model: Lab, as: 'lab' }, 'name', 'ASC']],
    limit,
    offset,
  });
  const items = rows.map((m) => ({ id: m.labId, name: m.lab?.name ?? '', role: m.role }));
  return { items, total: count, limit, offset };
}

export async function membersOf(labId: string, limit: number, offset: number): Promise<Page<MemberView>> {
  const { rows, count } = await Membership.findAndCountAll({
    where: { labId },
    include: [{ model: User, as: 'user' }],
    order: [[{ model: User, as: 'user' }, 'name', 'ASC']],
    limit,
    offset,
  });
  return { items: rows.map(memberView), total: count, limit, offset };
}

export type AddResult =
  | { kind: 'member'; member: MemberView }
  | { kind: 'invitation'; invitation: InvitationView; token: string };

/** Adds an existing account to the lab, or creates an invitation (with a one-time token) for an unknown address. */
export async function addMember(
  sequelize: Sequelize,
  actorId: string,
  labId: string,
  rawEmail: string,
  role: LabRole,
  invitationTtlHours: number,
): Promise<AddResult> {
  const email = normaliseEmail(rawEmail);
  return sequelize.transaction(async (transaction) => {
    const user = await User.findOne({ where: { email }, transaction });
    if (user) {
      const existing = await Membership.findOne({ where: { labId, userId: user.id }, transaction });
      if (existing) throw new AppError('already_member', `${email} is already a member of this lab (${existing.role}).`, 409, 'email');
      const membership = await Membership.create({ labId, userId: user.id, role }, { transaction });
      membership.user = user;
      await AuditEvent.create({ actorId, labId, action: 'member.added', details: { userId: user.id, role } }, { transaction });
      return { kind: 'member', member: memberView(membership) };
    }
    const token = randomBytes(32).toString('base64url');
    const invitation = await Invitation.create(
      { labId, email, role, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + invitationTtlHours * 3_600_000), invitedById: actorId },
      { transaction },
    );
    await AuditEvent.create({ actorId, labId, action: 'member.invited', details: { email, role } }, { transaction });
    return {
      kind: 'invitation',
      token,
      invitation: { id: invitation.id, labId, email, role, expiresAt: invitation.expiresAt.toISOString() },
    };
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

export async function changeRole(sequelize: Sequelize, actorId: string, labId: string, userId: string, role: LabRole): Promise<MemberView> {
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
