import type { RequestHandler } from 'express';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import { createLinkBodySchema, linkRunParamSchema, linkTokenSchema, pageQuerySchema } from '../../shared/api';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { currentUser } from '../middleware/auth';
import { caseAccess } from '../middleware/case-access';
import { parseInput } from '../middleware/validate';
import { createLink, linkRunResult, listLinks, readLink, revokeLink } from '../services/case-link-service';
import { linkReport } from '../services/report-service';
import { sendReport, sendStoredResult } from './case-routes';

const linkParam = z.object({ linkId: z.uuid() });
const tokenParam = z.object({ token: linkTokenSchema });

export function createLinkRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const body = parseInput(createLinkBodySchema, req.body);
    const user = currentUser(req);
    // The reply holds the link's token, shown once.
    res.setHeader('Cache-Control', 'no-store');
    res.status(201).json(await createLink(sequelize, config, { id: user.id, name: user.name }, caseAccess(req), body));
  };
}

export const listLinksRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await listLinks(caseAccess(req).caseId, page));
};

export function revokeLinkRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { linkId } = parseInput(linkParam, req.params, 'path');
    const user = currentUser(req);
    res.json(await revokeLink(sequelize, { id: user.id, name: user.name }, caseAccess(req), linkId));
  };
}

/** The token of a public link route; a malformed one is simply a link that does not exist. */
function linkToken(params: unknown): string {
  const parsed = tokenParam.safeParse(params);
  if (!parsed.success) throw new AppError('link_not_found', 'This case link does not exist.', 404, 'token');
  return parsed.data.token;
}

/** Public, no sign-in: the revision behind a case link, read-only. */
export const publicLinkRoute: RequestHandler = async (req, res) => {
  const token = linkToken(req.params);
  res.setHeader('Cache-Control', 'no-store');
  res.setHeader('Referrer-Policy', 'no-referrer');
  res.json(await readLink(token));
};

/** Public, no sign-in: the case report of the revision behind a case link. */
export const publicLinkReportRoute: RequestHandler = async (req, res) => {
  const token = linkToken(req.params);
  res.setHeader('Referrer-Policy', 'no-referrer');
  sendReport(res, await linkReport(token));
};

/**
 * Public, no sign-in: the stored result of one run of the linked revision (gzip, as stored), under the same 404/410
 * rules as the link. Not cached: a revoked link must stop serving at once.
 */
export const publicLinkRunResultRoute: RequestHandler = async (req, res) => {
  const token = linkToken(req.params);
  const { runId } = parseInput(linkRunParamSchema, { runId: (req.params as Record<string, unknown>)['runId'] }, 'path');
  res.setHeader('Referrer-Policy', 'no-referrer');
  sendStoredResult(res, await linkRunResult(token, runId), 'no-store');
};
