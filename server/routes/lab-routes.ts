import type { RequestHandler } from 'express';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import { acceptInvitationBodySchema, addMemberBodySchema, changeRoleBodySchema, pageQuerySchema } from '../../shared/api';
import type { Config } from '../config';
import { currentUser } from '../middleware/auth';
import { labMembership } from '../middleware/roles';
import { parseInput } from '../middleware/validate';
import {
  acceptInvitation, addMember, changeRole, labsOf, membersOf, pendingInvitationsOf, removeMember, revokeInvitation,
} from '../services/lab-service';
import { issueToken } from '../services/auth-service';

const userIdParam = z.object({ userId: z.uuid() });
const invitationIdParam = z.object({ invitationId: z.uuid() });

export const myLabsRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await labsOf(currentUser(req).id, page));
};

export const membersRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await membersOf(labMembership(req).labId, page));
};

/** An unknown address gets an invitation; its mail is queued in the outbox with it, so the reply says `queued`. */
export function addMemberRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { email, role: newRole } = parseInput(addMemberBodySchema, req.body);
    const { id, name } = currentUser(req);
    res.status(201).json(await addMember(sequelize, { id, name }, labMembership(req).labId, email, newRole, config));
  };
}

export const invitationsRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await pendingInvitationsOf(labMembership(req).labId, page));
};

export function revokeInvitationRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { invitationId } = parseInput(invitationIdParam, req.params, 'path');
    await revokeInvitation(sequelize, currentUser(req).id, labMembership(req).labId, invitationId);
    res.status(204).end();
  };
}

export function changeRoleRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { userId } = parseInput(userIdParam, req.params, 'path');
    const { role: newRole } = parseInput(changeRoleBodySchema, req.body);
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
    const { token, name, password } = parseInput(acceptInvitationBodySchema, req.body);
    const user = await acceptInvitation(sequelize, token, { name, password });
    res.setHeader('Cache-Control', 'no-store');
    res.status(201).json(issueToken(user, config));
  };
}
