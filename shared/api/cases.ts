/** Cases, their append-only revisions, runs, comments, rechecks and audit trail. */
import { z } from 'zod';
import { RUN_KINDS, runSettingsSchema, type RunKind } from '../engine/run-kinds';
import {
  hex64Schema, idSchema, instantSchema, labRoleSchema, pageQuerySchema, personRefSchema, recheckStateSchema, scalarSchema, serialIdSchema,
} from './common';

export const MAX_TAGS = 20;
export const MAX_TAG_LENGTH = 40;
// Messages in words: they reach the user beside the field (title, tags, revision note) as they are.
const title = z.string().trim().min(1, { message: 'must not be empty' }).max(200, { message: 'must be at most 200 characters' });
const tag = z.string().trim().min(1, { message: 'must not be empty' }).max(MAX_TAG_LENGTH, { message: `must be at most ${MAX_TAG_LENGTH} characters` });
const tags = z.array(tag).max(MAX_TAGS, { message: `at most ${MAX_TAGS} tags` });
const note = z.string().trim().max(2000, { message: 'must be at most 2000 characters' });
/** Case parameters as JSON; the server checks them against the case schema (422 `invalid_params`). */
const params = z.record(z.string(), z.unknown());

export const CASE_SORTS = ['-updated', 'updated', 'title', '-title'] as const;
export type CaseSort = (typeof CASE_SORTS)[number];

export const caseListQuerySchema = pageQuerySchema.extend({
  search: z.string().trim().max(200).optional(),
  tag: tag.optional(),
  author: z.uuid().optional(),
  recheck: recheckStateSchema.optional(),
  archived: z.enum(['true', 'false']).default('false'),
  sort: z.enum(CASE_SORTS).default('-updated'),
});
export const createCaseBodySchema = z.object({ title, tags: tags.default([]), params, note: note.optional() });
export const patchCaseBodySchema = z.object({ title: title.optional(), tags: tags.optional(), archived: z.boolean().optional() });
export const duplicateCaseBodySchema = z.object({ title: title.optional(), revision: z.number().int().min(1).optional() });
export const revisionParamSchema = z.object({ rev: z.coerce.number().int().min(1).max(1_000_000) });
export const runParamSchema = revisionParamSchema.extend({ runId: z.uuid() });
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
  /** |rerun - stored| for two numbers (the server's comparisons carry it) */
  difference: z.number().nullable().optional(),
  tolerance: z.number().nonnegative().nullable(),
  match: z.boolean(),
});
export type ComparedNumberView = z.infer<typeof comparedNumberSchema>;
/**
 * The server's comparison of a stored run with its own rerun (shared/engine/compare-runs.ts). Rechecks stored
 * before the server compared runs itself hold only runId, digestMatch and numbers.
 */
export const runComparisonSchema = z.strictObject({
  runId: idSchema,
  kind: z.string().optional(),
  storedDigest: z.string().optional(),
  rerunDigest: z.string().optional(),
  digestMatch: z.boolean(),
  engineVersionStored: z.string().optional(),
  engineVersionNow: z.string().optional(),
  numbers: z.array(comparedNumberSchema),
  numbersMatch: z.boolean().optional(),
  /** same digest and every number within tolerance */
  reproduced: z.boolean().optional(),
  match: z.boolean().optional(),
  /** why the server's rerun could not be compared */
  failure: z.string().optional(),
});
export type RunComparison = z.infer<typeof runComparisonSchema>;
export const RECHECK_VERDICTS = ['confirmed', 'disputed'] as const;
export type RecheckVerdict = (typeof RECHECK_VERDICTS)[number];
/** Only the verdict and a comment: the comparison is the server's, so match flags or comparisons are refused (422). */
export const recheckBodySchema = z
  .strictObject({
    verdict: z.enum(RECHECK_VERDICTS),
    comment: z.string().trim().max(5000),
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

export const VERIFICATION_STATES = ['pending', 'verified', 'unreproduced'] as const;
export type VerificationState = (typeof VERIFICATION_STATES)[number];

/** The server's own rerun of a stored run: pending until it settles as verified (same digest and numbers) or unreproduced. */
export const verificationSchema = z.strictObject({
  state: z.enum(VERIFICATION_STATES),
  /** when the server settled it; null while pending */
  verifiedAt: instantSchema.nullable(),
  /** engine version of the server's rerun; null while pending */
  engineVersion: z.string().nullable(),
  /** why the rerun could not be compared (an engine error, a result over the size limit) */
  failure: z.string().nullable(),
  /** what the browser posted, kept only to show an unreproduced run's mismatch */
  claimed: z.strictObject({ summary: z.record(z.string(), scalarSchema), resultDigest: z.string(), engineVersion: z.string() }).nullable(),
  /** the numbers of the server's comparison that differ */
  differences: z.array(comparedNumberSchema),
  /** sizes of the stored result (encoded text, gzip); null when none is stored */
  resultBytes: z.strictObject({ raw: z.number().int().min(0), compressed: z.number().int().min(0) }).nullable(),
});
export type VerificationView = z.infer<typeof verificationSchema>;

export const runSchema = z.strictObject({
  id: idSchema,
  kind: z.string(),
  /** as stored; narrowed to the engine's RunSettings where a rerun needs it */
  settings: z.looseObject({ kind: z.string() }),
  /** the server's numbers once verified or unreproduced; what was posted while pending */
  summary: z.record(z.string(), scalarSchema),
  resultDigest: z.string(),
  engineVersion: z.string(),
  verification: verificationSchema,
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
