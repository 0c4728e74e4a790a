import type { RequestHandler } from 'express';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import type { Config } from '../config';
import { LAB_ROLES } from '../db/models';
import { currentUser } from '../middleware/auth';
import { labMembership } from '../middleware/roles';
import { parseInput } from '../middleware/validate';
import type { SendMail } from '../services/mailer';
import { acceptInvitation, addMember, changeRole, labsOf, membersOf, removeMember } from '../services/lab-service';
import { issueToken } from '../services/auth-service';
import { enqueueMail } from '../services/outbox-service';

const page = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(100),
  offset: z.coerce.number().int().min(0).default(0),
});
const role = z.enum(LAB_ROLES);
const addBody = z.object({ email: z.email().max(320), role });
const roleBody = z.object({ role });
const userIdParam = z.object({ userId: z.uuid() });
const acceptBody = z.object({
  token: z.string().min(16).max(200),
  name: z.string().trim().min(1).max(200).optional(),
  password: z.string().min(10, 'use at least 10 characters').max(1024).optional(),
});

export const myLabsRoute: RequestHandler = async (req, res) => {
  const { limit, offset } = parseInput(page, req.query, 'query');
  res.json(await labsOf(currentUser(req).id, limit, offset));
};

export const membersRoute: RequestHandler = async (req, res) => {
  const { limit, offset } = parseInput(page, req.query, 'query');
  res.json(await membersOf(labMembership(req).labId, limit, offset));
};

export function addMemberRoute(sequelize: Sequelize, config: Config, sendMail: SendMail): RequestHandler {
  return async (req, res) => {
    const { email, role: newRole } = parseInput(addBody, req.body);
    const { labId } = labMembership(req);
    const result = await addMember(sequelize, currentUser(req).id, labId, email, newRole, config.invitationTtlHours);
    if (result.kind === 'member') {
      res.status(201).json(result);
      return;
    }
    const link = new URL(`/invitations/${encodeURIComponent(result.token)}`, config.publicUrl).toString();
    let mailed = true;
    const mail = {
      to: result.invitation.email,
      subject: 'You are invited to a Quiverpoint lab',
      text: `${currentUser(req).name} invited you to join their lab as ${newRole}.\n\nAccept within ${config.invitationTtlHours} hours: ${link}\n`,
    };
    try {
      await sendMail(mail);
    } catch (err) {
      mailed = false;
      req.log?.warn({ err }, 'invitation mail not sent now; queued in the outbox for retries');
      // The outbox sender loop retries with backoff; the row shows the failure to site admins.
      await enqueueMail(mail);
    }
    res.status(201).json({ kind: 'invitation', invitation: result.invitation, mailed, ...(mailed ? {} : { queued: true }) });
  };
}

export function changeRoleRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { userId } = parseInput(userIdParam, req.params, 'path');
    const { role: newRole } = parseInput(roleBody, req.body);
    res.json(await changeRole(sequelize, currentUser(req).id, labMembership(req).labId, userId, newRole));
  };
}

export function removeMemberRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { userId } = parseInput(userIdParam, req.params, 'path');
    await removeMember(sequelize, currentUser(req).id, labMembership(req).labId, userId);
    res.status(204).end();
  };
}

/** The token proves the invited address, so accepting signs the person in (new account or existing one). */
export function acceptInvitationRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { token, name, password } = parseInput(acceptBody, req.body);
    const user = await acceptInvitation(sequelize, token, { name, password });
    res.status(201).json(issueToken(user, config));
  };
}
