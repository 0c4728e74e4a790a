import type { RequestHandler, Response } from 'express';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import { RUN_KINDS } from '../../shared/engine/run-record';
import type { Config } from '../config';
import { RECHECK_STATES } from '../db/models';
import { currentUser } from '../middleware/auth';
import { caseAccess } from '../middleware/case-access';
import { pageQuery } from '../middleware/paging';
import { labMembership } from '../middleware/roles';
import { parseInput } from '../middleware/validate';
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
  updateCase,
  type Actor,
} from '../services/case-service';
import { recordRecheck, requestRecheck } from '../services/recheck-service';
import { revisionReport, type CaseReport } from '../services/report-service';

const title = z.string().trim().min(1).max(200);
const tags = z.array(z.string().trim().min(1).max(40)).max(20);
const note = z.string().trim().max(2000);
const params = z.record(z.string(), z.unknown());
const hex64 = z.string().regex(/^[0-9a-f]{64}$/, 'must be 64 lower-case hex digits');
const scalar = z.union([z.number(), z.string(), z.boolean(), z.null()]);

const listQuery = pageQuery.extend({
  search: z.string().trim().max(200).optional(),
  tag: z.string().trim().min(1).max(40).optional(),
  author: z.uuid().optional(),
  recheck: z.enum(RECHECK_STATES).optional(),
  archived: z.enum(['true', 'false']).default('false'),
  sort: z.enum(['-updated', 'updated', 'title', '-title']).default('-updated'),
});
const createBody = z.object({ title, tags: tags.default([]), params, note: note.optional() });
const patchBody = z.object({ title: title.optional(), tags: tags.optional(), archived: z.boolean().optional() });
const duplicateBody = z.object({ title: title.optional(), revision: z.number().int().min(1).optional() });
const revParam = z.object({ rev: z.coerce.number().int().min(1).max(1_000_000) });
const saveBody = z.object({ baseRevision: z.number().int().min(0), params, note: note.optional() });
const runBody = z.object({
  kind: z.enum(RUN_KINDS as [string, ...string[]]),
  params,
  settings: z.looseObject({ kind: z.string() }),
  summary: z.record(z.string(), scalar),
  resultDigest: hex64,
  engineVersion: z.string().min(1).max(64),
  caseDigest: hex64.optional(),
});
const commentBody = z.object({ body: z.string().trim().min(1).max(5000) });
const recheckRequestBody = z.object({ reviewerId: z.uuid(), message: z.string().trim().max(2000).optional() });
const recheckBody = z
  .object({
    verdict: z.enum(['confirmed', 'disputed']),
    comment: z.string().trim().max(5000),
    comparisons: z
      .array(
        z.object({
          runId: z.uuid(),
          digestMatch: z.boolean(),
          numbers: z
            .array(z.object({ name: z.string().min(1).max(200), stored: scalar, rerun: scalar, tolerance: z.number().nonnegative().nullable(), match: z.boolean() }))
            .max(1000),
        }),
      )
      .max(100),
  })
  .refine((b) => b.verdict !== 'disputed' || b.comment.length > 0, { path: ['comment'], message: 'say why you dispute the numbers' });

function actorOf(req: Express.Request): Actor {
  const user = currentUser(req);
  return { id: user.id, name: user.name };
}

export const listCasesRoute: RequestHandler = async (req, res) => {
  const q = parseInput(listQuery, req.query, 'query');
  res.json(await listCases(labMembership(req).labId, { ...q, archived: q.archived === 'true' }));
};

export function createCaseRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const body = parseInput(createBody, req.body);
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
    const patch = parseInput(patchBody, req.body);
    res.json(await updateCase(sequelize, actorOf(req), caseAccess(req), patch));
  };
}

export function duplicateCaseRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const body = parseInput(duplicateBody, req.body ?? {});
    res.status(201).json(await duplicateCase(sequelize, actorOf(req), caseAccess(req), body));
  };
}

export const revisionRoute: RequestHandler = async (req, res) => {
  const { rev } = parseInput(revParam, req.params, 'path');
  res.json(await revisionDetail(caseAccess(req).caseId, rev));
};

export function saveRevisionRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const body = parseInput(saveBody, req.body);
    res.status(201).json(await saveRevision(sequelize, actorOf(req), caseAccess(req), body));
  };
}

export function storeRunRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revParam, req.params, 'path');
    const body = parseInput(runBody, req.body);
    res.status(201).json(await storeRun(sequelize, actorOf(req), caseAccess(req), rev, body));
  };
}

export const commentsRoute: RequestHandler = async (req, res) => {
  const { rev } = parseInput(revParam, req.params, 'path');
  res.json({ items: await listComments(caseAccess(req).caseId, rev) });
};

export function addCommentRoute(sequelize: Sequelize): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revParam, req.params, 'path');
    const { body } = parseInput(commentBody, req.body);
    res.status(201).json(await addComment(sequelize, actorOf(req), caseAccess(req), rev, body));
  };
}

export const auditRoute: RequestHandler = async (req, res) => {
  const page = parseInput(pageQuery, req.query, 'query');
  res.json(await caseAudit(caseAccess(req).caseId, page));
};

export function recheckRequestRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revParam, req.params, 'path');
    const body = parseInput(recheckRequestBody, req.body);
    res.json(await requestRecheck(sequelize, config, actorOf(req), caseAccess(req), rev, body));
  };
}

export function recheckRoute(sequelize: Sequelize, config: Config): RequestHandler {
  return async (req, res) => {
    const { rev } = parseInput(revParam, req.params, 'path');
    const body = parseInput(recheckBody, req.body);
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
  const { rev } = parseInput(revParam, req.params, 'path');
  const access = caseAccess(req);
  sendReport(res, await revisionReport(access.caseId, access.labId, rev));
};
