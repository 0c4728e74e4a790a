import type { Request, RequestHandler } from 'express';
import { z } from 'zod';
import { AppError } from '../app-error';
import type { LabRole } from '../db/models';
import { currentUser } from './auth';

declare global {
  namespace Express {
    interface Request {
      /** set by requireLabRole: the caller's membership in `:labId` */
      labMembership?: { labId: string; role: LabRole };
    }
  }
}

const labId = z.uuid();

/** Lets the request through only when the signed-in user holds one of `roles` in the lab named by `:labId`. */
export function requireLabRole(...roles: LabRole[]): RequestHandler {
  return async (req, _res, next) => {
    const user = currentUser(req);
    const id = labId.safeParse(req.params['labId']);
    if (!id.success) throw new AppError('lab_not_found', 'No such lab.', 404, 'labId');
    const role = user.labRoles[id.data];
    if (!role) throw new AppError('not_a_member', 'You are not a member of this lab.', 403);
    if (!roles.includes(role)) {
      throw new AppError('role_too_low', `This needs the ${roles.join(' or ')} role in this lab; you are ${role}.`, 403);
    }
    req.labMembership = { labId: id.data, role };
    next();
  };
}

/** The lab membership checked by requireLabRole. */
export function labMembership(req: Request): { labId: string; role: LabRole } {
  if (!req.labMembership) throw new AppError('internal_error', 'Route is missing requireLabRole.', 500);
  return req.labMembership;
}

export const ANY_LAB_ROLE: LabRole[] = ['owner', 'analyst', 'reviewer', 'viewer'];
