/** Cases, their append-only revisions, runs, comments, rechecks and audit trail. */
import { z } from 'zod';
import { RUN_KINDS, runSettingsSchema, type RunKind } from '../engine/run-kinds';
import {
  hex64Schema, idSchema, instantSchema, labRoleSchema, pageQuerySchema, personRefSchema, recheckStateSchema, scalarSchema, serialIdSchema,
} from './common';

const title = z.string().trim().min(1).max(200);
const tags = z.array(z.string().trim().min(1).max(40)).max(20);
const note = z.string().trim().max(2000);
/** Case parameters as JSON; the server checks them against the case schema (422 `invalid_params`). */
const params = z.record(z.string(), z.unknown());

export const CASE_SORTS = ['-updated', 'updated', 'title', '-title'] as const;
export type CaseSort = (typeof CASE_SORTS)[number];

export const caseListQuerySchema = pageQuerySchema.extend({
  search: z.string().trim().max(200).optional(),
  tag: z.string().trim().min(1).max(40).optional(),
  author: z.uuid().optional(),
  recheck: recheckStateSchema.optional(),
  archived: z.enum(['true', 'false']).default('false'),
  sort: z.enum(CASE_SORTS).default('-updated'),
});
export const createCaseBodySchema = z.object({ title, tags: tags.default([]), params, note: note.optional() });
export const patchCaseBodySchema = z.object({ title: title.optional(), tags: tags.optional(), archived: z.boolean().optional() });
export const duplicateCaseBodySchema = z.object({ title: title.optional(), revision: z.number().int().min(1).optional() });
export const revisionParamSchema = z.object({ rev: z.coerce.number().int().min(1).max(1_000_000) });
export const saveRevisionBodySchema = z.object({ baseRevision: z.number().int().min(0), params, note: note.optional() });
export const storeRunBodySchema = z.object({
  kind: z.enum(RUN_KINDS as [RunKind, ...RunKind[]]),
  params,
  /** The run registry's strict settings for the kind (bounds, no unknown keys). */
  settings: runSettingsSchema,
  summary: z.record(z.string(), scalarSchema),
  resultDigest: hex64Schema,
  engineVersion: z.string().min(1).max(64),
  caseDigest: hex64Schema.optional(),
});
export type StoreRunBody = z.infer<typeof storeRunBodySchema>;
export const commentBodySchema = z.object({ body: z.string().trim().min(1).max(5000) });
export const recheckRequestBodySchema = z.object({ reviewerId: z.uuid(), message: z.string().trim().max(2000).optional() });

export const comparedNumberSchema = z.strictObject({
  name: z.string().min(1).max(200),
  stored: scalarSchema,
  rerun: scalarSchema,
  tolerance: z.number().nonnegative().nullable(),
  match: z.boolean(),
});
export type ComparedNumberView = z.infer<typeof comparedNumberSchema>;
export const runComparisonSchema = z.strictObject({
  runId: idSchema,
  digestMatch: z.boolean(),
  numbers: z.array(comparedNumberSchema).max(1000),
});
export type RunComparison = z.infer<typeof runComparisonSchema>;
export const RECHECK_VERDICTS = ['confirmed', 'disputed'] as const;
export type RecheckVerdict = (typeof RECHECK_VERDICTS)[number];
export const recheckBodySchema = z
  .object({
    verdict: z.enum(RECHECK_VERDICTS),
    comment: z.string().trim().max(5000),
    comparisons: z.array(runComparisonSchema.extend({ runId: z.uuid() })).max(100),
  })
  .refine((b) => b.verdict !== 'disputed' || b.comment.length > 0, { path: ['comment'], message: 'say why you dispute the numbers' });
export type RecheckBody = z.infer<typeof recheckBodySchema>;

export const caseListItemSchema = z.strictObject({
  id: idSchema,
  title: z.string(),
  tags: z.array(z.string()),
  labId: idSchema,
  latestRevision: z.number().int().min(1),
  recheckState: recheckStateSchema,
  author: personRefSchema.nullable(),
  createdAt: instantSchema,
  updatedAt: instantSchema,
  archived: z.boolean(),
});
export type CaseListItem = z.infer<typeof caseListItemSchema>;

export const revisionSummarySchema = z.strictObject({
  number: z.number().int().min(1),
  paramsDigest: hex64Schema,
  note: z.string(),
  author: personRefSchema.nullable(),
  createdAt: instantSchema,
  recheckState: recheckStateSchema,
});
export type RevisionSummary = z.infer<typeof revisionSummarySchema>;

export const caseDetailSchema = caseListItemSchema.omit({ labId: true }).extend({
  lab: z.strictObject({ id: idSchema, name: z.string() }),
  myRole: labRoleSchema,
  /** newest first */
  revisions: z.array(revisionSummarySchema),
});
export type CaseDetail = z.infer<typeof caseDetailSchema>;

export const runSchema = z.strictObject({
  id: idSchema,
  kind: z.string(),
  /** as stored; narrowed to the engine's RunSettings where a rerun needs it */
  settings: z.looseObject({ kind: z.string() }),
  summary: z.record(z.string(), scalarSchema),
  resultDigest: z.string(),
  engineVersion: z.string(),
  author: personRefSchema.nullable(),
  createdAt: instantSchema,
});
export type RunView = z.infer<typeof runSchema>;

export const recheckSchema = z.strictObject({
  id: idSchema,
  reviewer: personRefSchema.nullable(),
  state: z.enum(RECHECK_VERDICTS),
  digestMatch: z.boolean(),
  comparisons: z.array(runComparisonSchema),
  comment: z.string(),
  createdAt: instantSchema,
});
export type RecheckView = z.infer<typeof recheckSchema>;

export const commentSchema = z.strictObject({ id: idSchema, body: z.string(), author: personRefSchema.nullable(), createdAt: instantSchema });
export type CommentView = z.infer<typeof commentSchema>;

export const recheckRequestSchema = z.strictObject({
  requestedBy: personRefSchema.nullable(),
  reviewer: personRefSchema.nullable(),
  message: z.string().nullable(),
  requestedAt: instantSchema,
});
export type RecheckRequestView = z.infer<typeof recheckRequestSchema>;

export const revisionDetailSchema = revisionSummarySchema.extend({
  caseId: idSchema,
  caseTitle: z.string(),
  /** as stored: it parsed under the case schema of its `schemaVersion`, which may be older than this build's */
  params: z.record(z.string(), z.unknown()),
  schemaVersion: z.number().int().min(1),
  recheckRequest: recheckRequestSchema.nullable(),
  runs: z.array(runSchema),
  rechecks: z.array(recheckSchema),
  /** left out where comments are not shown (case links) */
  comments: z.array(commentSchema).optional(),
});
export type RevisionDetail = z.infer<typeof revisionDetailSchema>;

export const auditEntrySchema = z.strictObject({
  id: serialIdSchema,
  action: z.string(),
  actor: personRefSchema.nullable(),
  details: z.record(z.string(), z.unknown()),
  createdAt: instantSchema,
});
export type AuditEntry = z.infer<typeof auditEntrySchema>;
