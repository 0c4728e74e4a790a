/** Building blocks of the API contract shared by several resources. */
import { z } from 'zod';

/** A database id (UUID). Responses accept any 8-4-4-4-12 hex form; requests check with `z.uuid()`. */
export const idSchema = z.guid();
/** A row number sent as a string (outbox, audit, sink ids are big integers). */
export const serialIdSchema = z.string().regex(/^[0-9]+$/);
/** Instants travel as ISO 8601 strings in UTC. */
export const instantSchema = z.iso.datetime();

/** Roles a lab member can hold, strongest first. */
export const LAB_ROLES = ['owner', 'analyst', 'reviewer', 'viewer'] as const;
export type LabRole = (typeof LAB_ROLES)[number];
export const labRoleSchema = z.enum(LAB_ROLES);

/** Recheck states of a revision, in the order a review moves through them. */
export const RECHECK_STATES = ['draft', 'awaiting-recheck', 'confirmed', 'disputed'] as const;
export type RecheckState = (typeof RECHECK_STATES)[number];
export const recheckStateSchema = z.enum(RECHECK_STATES);

export const personRefSchema = z.strictObject({ id: idSchema, name: z.string() });
export type PersonRef = z.infer<typeof personRefSchema>;

/** `?page=1&pageSize=20` on every list. */
export const pageQuerySchema = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(20),
});
export type PageQuery = z.infer<typeof pageQuerySchema>;

/** The one list shape: a page of `item`, the total across pages, and the page asked for. */
export function pagedSchema<T extends z.ZodType>(item: T) {
  return z.strictObject({
    items: z.array(item),
    total: z.number().int().min(0),
    page: z.number().int().min(1),
    pageSize: z.number().int().min(1),
  });
}
export interface Paged<T> {
  items: T[];
  total: number;
  page: number;
  pageSize: number;
}

/** A scalar of a run summary or a compared number. */
export const scalarSchema = z.union([z.number(), z.string(), z.boolean(), z.null()]);
export const hex64Schema = z.string().regex(/^[0-9a-f]{64}$/, 'must be 64 lower-case hex digits');
