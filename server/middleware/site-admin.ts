import type { RequestHandler } from 'express';
import { AppError } from '../app-error';
import { currentUser } from './auth';

/** Site administrators only (the `is_site_admin` flag; not a lab role). */
export const requireSiteAdmin: RequestHandler = (req, _res, next) => {
  if (!currentUser(req).isSiteAdmin) throw new AppError('not_site_admin', 'This needs a site administrator.', 403);
  next();
};
