/**
 * Role checks for routes under `/cases/:caseId`. The case's lab decides: a person outside that lab gets 404 (the
 * case's existence is not revealed), a member whose role is too low gets 403.
 */
import type { Request, RequestHandler } from 'express';
import { z } from 'zod';
import { AppError } from '../app-error';
import { CaseRecord, type LabRole } from '../db/models';
import type { CaseAccess } from '../services/case-access';
import { currentUser } from './auth';

declare global {
  namespace Express {
    interface Request {
      /** set by requireCaseRole: the case named by `:caseId`, its lab and the caller's role there */
      caseAccess?: CaseAccess;
    }
  }
}

const caseId = z.uuid();

export function caseNotFound(): AppError {
  return new AppError('case_not_found', 'No such case.', 404, 'caseId');
}

/** Lets the request through only when the signed-in user holds one of `roles` in the lab owning `:caseId`. */
export function requireCaseRole(...roles: LabRole[]): RequestHandler {
  return async (req, _res, next) => {
    const user = currentUser(req);
    const id = caseId.safeParse(req.params['caseId']);
    if (!id.success) throw caseNotFound();
    const found = await CaseRecord.findByPk(id.data, { attributes: ['id', 'labId', 'archived'] });
    if (!found) throw caseNotFound();
    const role = user.labRoles[found.labId];
    if (!role) throw caseNotFound();
    if (!roles.includes(role)) {
      throw new AppError('role_too_low', `This needs the ${roles.join(' or ')} role in this lab; you are ${role}.`, 403);
    }
    req.caseAccess = { caseId: found.id, labId: found.labId, role, archived: found.archived };
    next();
  };
}

/** The access checked by requireCaseRole. */
export function caseAccess(req: Request): CaseAccess {
  if (!req.caseAccess) throw new AppError('internal_error', 'Route is missing requireCaseRole.', 500);
  return req.caseAccess;
}
