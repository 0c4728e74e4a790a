import type { RequestHandler } from 'express';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import type { Config } from '../config';
import { LAB_ROLES } from '../db/models';
import { currentUser } from '../middleware/auth';
import { labMembership } from '../middleware/roles';
import { parseInput } from '../middleware/validate';
import {
  acceptInvitation, addMember, changeRole, labsOf, membersOf, pendingInvitationsOf, removeMember, revokeInvitation,
} from '../services/lab-service';
import { issueToken } from '../services/auth-service';

const page = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(100),
  offset: z.coerce.number().int().min(0).default(0),
});
const role = z.enum(LAB_ROLES);
const addBody = z.object({ email: z.email().max(320), role });
const roleBody = z.object({ role });
const userIdParam = z.object({ userId: z.uuid() });
const invitationIdParam = z.object({ invitationId: z.uuid() });
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

/** An unknown address gets an invitation; its mail is queued in the outbox with it, so the reply says `queued`. */
export function addMemberRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { email, role: newRole } = parseInput(addBody, req.body);
    const { id, name } = currentUser(req);
    res.status(201).json(await addMember(sequelize, { id, name }, labMembership(req).labId, email, newRole, config));
  };
}

export const invitationsRoute: RequestHandler = async (req, res) => {
  const { limit, offset } = parseInput(page, req.query, 'query');
  res.json(await pendingInvitationsOf(labMembership(req).labId, limit, offset));
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
    res.setHeader('Cache-Control', 'no-store');
    res.status(201).json(issueToken(user, config));
  };
}
