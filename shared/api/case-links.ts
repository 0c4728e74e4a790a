/** Case links: read-only access to one revision for people outside the lab. */
import { z } from 'zod';
import { idSchema, instantSchema, personRefSchema } from './common';
import { revisionDetailSchema } from './cases';

export const MAX_LINK_DAYS = 365;

export const createLinkBodySchema = z.object({
  revision: z.number().int().min(1),
  expiresInDays: z.number().int().min(1).max(MAX_LINK_DAYS).default(30),
});
export const linkTokenSchema = z.string().regex(/^[A-Za-z0-9_-]{20,100}$/);
/**
 * Path of `GET /api/links/:token/runs/:runId/result`: one stored run of the linked revision, answered as stored
 * (gzip-compressed text of shared/engine/result-codec.ts, `X-Result-Encoding`, `X-Verification`).
 */
export const linkRunParamSchema = z.object({ runId: z.uuid() });

/** Reply of making a link: the only time the token is shown. */
export const createdLinkSchema = z.strictObject({
  id: idSchema,
  token: linkTokenSchema,
  url: z.url(),
  revision: z.number().int().min(1),
  expiresAt: instantSchema,
});
export type CreatedLink = z.infer<typeof createdLinkSchema>;

export const LINK_STATES = ['active', 'expired', 'revoked'] as const;
export const linkSchema = z.strictObject({
  id: idSchema,
  revision: z.number().int().min(1),
  expiresAt: instantSchema,
  revokedAt: instantSchema.nullable(),
  state: z.enum(LINK_STATES),
  createdBy: personRefSchema.nullable(),
  createdAt: instantSchema,
});
export type LinkView = z.infer<typeof linkSchema>;

export const publicCaseSchema = z.strictObject({
  caseTitle: z.string(),
  labName: z.string(),
  revision: revisionDetailSchema,
  expiresAt: instantSchema,
});
export type PublicCaseView = z.infer<typeof publicCaseSchema>;
