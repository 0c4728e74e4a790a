import type { RequestHandler, Response } from 'express';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import {
  caseListQuerySchema, commentBodySchema, createCaseBodySchema, duplicateCaseBodySchema, pageQuerySchema, patchCaseBodySchema, recheckBodySchema,
  recheckRequestBodySchema, revisionParamSchema, runParamSchema, saveRevisionBodySchema, storeRunBodySchema,
} from '../../shared/api';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { currentUser } from '../middleware/auth';
import { caseAccess } from '../middleware/case-access';
import { labMembership } from '../middleware/roles';
import { parseInput } from '../middleware/validate';
import type { Actor } from '../services/case-access';
import {
  addComment,
  caseAudit,
  caseDetail,
  createCase,
  duplicateCase,
  listCases,
  listComments,
  revisionDetail,
  saveRevision,
  storeRun,
  storedResult,
  type StoredResultBytes,
  updateCase,
} from '../services/case-service';
import type { CaseListCache } from '../services/case-list-cache';
import { recordRecheck, requestRecheck } from '../services/recheck-service';
import type { RunVerifier } from '../services/run-verifier';
import { revisionReport, type CaseReport } from '../services/report-service';

function actorOf(req: Express.Request): Actor {
  const user = currentUser(req);
  return { id: user.id, name: user.name };
}

export function listCasesRoute(cache: CaseListCache): RequestHandler {
  return async (req, res) => {
    const q = parseInput(caseListQuerySchema, req.query, 'query');
    const query = { ...q, archived: q.archived === 'true' };
    const { labId } = labMembership(req);
    res.json(await cache.page(labId, currentUser(req).libraryVersions[labId], query, () => listCases(labId, query)));
  };
}

export function createCaseRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const body = parseInput(createCaseBodySchema, req.body);
    const { labId, role } = labMembership(req);
    res.status(201).json(await createCase(sequelize, actorOf(req), labId, role, body));
  };
}

export const caseRoute: RequestHandler = async (req, res) => {
  const access = caseAccess(req);
  res.json(await caseDetail(access.caseId, access.role));
};

export function patchCaseRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const patch = parseInput(patchCaseBodySchema, req.body);
    res.json(await updateCase(sequelize, actorOf(req), caseAccess(req), patch));
  };
}

export function duplicateCaseRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const body = parseInput(duplicateCaseBodySchema, req.body ?? {});
    res.status(201).json(await duplicateCase(sequelize, actorOf(req), caseAccess(req), body));
  };
}

export const revisionRoute: RequestHandler = async (req, res) => {
  const { rev } = parseInput(revisionParamSchema, req.params, 'path');
  res.json(await revisionDetail(caseAccess(req).caseId, rev));
};

export function saveRevisionRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const body = parseInput(saveRevisionBodySchema, req.body);
    res.status(201).json(await saveRevision(sequelize, actorOf(req), caseAccess(req), body));
  };
}

/** Stores a run as posted (pending) and queues the server's own rerun that verifies it. */
export function storeRunRoute(sequelize: Sequelize, verifier: RunVerifier | undefined): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revisionParamSchema, req.params, 'path');
    const body = parseInput(storeRunBodySchema, req.body);
    const run = await storeRun(sequelize, actorOf(req), caseAccess(req), rev, body);
    verifier?.enqueue(run.id);
    res.status(201).json(run);
  };
}

/**
 * The server's stored result of a run, as stored: the encoded text (shared/engine/result-codec.ts) gzip-compressed,
 * sent with Content-Encoding: gzip so the browser inflates it natively. Immutable once verified, so cacheable.
 */
export const runResultRoute: RequestHandler = async (req, res) => {
  const { rev, runId } = parseInput(runParamSchema, req.params, 'path');
  sendStoredResult(res, await storedResult(caseAccess(req).caseId, rev, runId), 'private, max-age=31536000, immutable');
};

/** A stored result as stored (gzip), with the headers that say how to read it. */
export function sendStoredResult(res: Response, stored: StoredResultBytes, cacheControl: string): void {
  res.set({
    'Content-Type': 'application/json; charset=utf-8',
    'Content-Encoding': 'gzip',
    'Cache-Control': cacheControl,
    'X-Result-Encoding': stored.encoding,
    'X-Verification': stored.state,
    Vary: 'Authorization',
  });
  res.end(stored.compressed);
}

export const commentsRoute: RequestHandler = async (req, res) => {
  const { rev } = parseInput(revisionParamSchema, req.params, 'path');
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await listComments(caseAccess(req).caseId, rev, page));
};

export function addCommentRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revisionParamSchema, req.params, 'path');
    const { body } = parseInput(commentBodySchema, req.body);
    res.status(201).json(await addComment(sequelize, actorOf(req), caseAccess(req), rev, body));
  };
}

export const auditRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuerySchema, req.query, 'query');
  res.json(await caseAudit(caseAccess(req).caseId, page));
};

export function recheckRequestRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revisionParamSchema, req.params, 'path');
    const body = parseInput(recheckRequestBodySchema, req.body);
    res.json(await requestRecheck(sequelize, config, actorOf(req), caseAccess(req), rev, body));
  };
}

export function recheckRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revisionParamSchema, req.params, 'path');
    // The comparison is the server's own: a body that brings match flags or comparisons is refused, not ignored.
    const extra = typeof req.body === 'object' && req.body !== null && !Array.isArray(req.body) ? Object.keys(req.body as object).find((key) => key !== 'verdict' && key !== 'comment') : undefined;
    if (extra !== undefined) {
      throw new AppError('unexpected_field', `${extra} is not accepted: the server compares the stored runs itself; send only verdict and comment.`, 422, extra);
    }
    const body = parseInput(recheckBodySchema, req.body);
    res.status(201).json(await recordRecheck(sequelize, config, actorOf(req), caseAccess(req), rev, body));
  };
}

/** Sends a rendered case report as a PDF download. */
export function sendReport(res: Response, report: CaseReport): void {
  res.type('application/pdf');
  res.attachment(report.fileName);
  res.setHeader('Cache-Control', 'private, no-store');
  res.send(report.pdf);
}

export const reportRoute: RequestHandler = async (req, res) => {
  const { rev } = parseInput(revisionParamSchema, req.params, 'path');
  const access = caseAccess(req);
  sendReport(res, await revisionReport(access.caseId, access.labId, rev));
};
