/** Labs, members and invitations. */
import { z } from 'zod';
import { idSchema, instantSchema, labRoleSchema } from './common';

export const labSummarySchema = z.strictObject({ id: idSchema, name: z.string(), role: labRoleSchema });
export type LabSummary = z.infer<typeof labSummarySchema>;

export const memberSchema = z.strictObject({
  userId: idSchema,
  email: z.string(),
  name: z.string(),
  role: labRoleSchema,
  joinedAt: instantSchema,
});
export type Member = z.infer<typeof memberSchema>;

export const invitationSchema = z.strictObject({
  id: idSchema,
  labId: idSchema,
  email: z.string(),
  role: labRoleSchema,
  invitedAt: instantSchema,
  expiresAt: instantSchema,
});
export type Invitation = z.infer<typeof invitationSchema>;

export const addMemberBodySchema = z.object({ email: z.email().max(320), role: labRoleSchema });
export const changeRoleBodySchema = z.object({ role: labRoleSchema });

/** An existing account joins at once; an unknown address gets an invitation whose mail is queued in the outbox. */
export const addMemberResultSchema = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('member'), member: memberSchema }),
  z.strictObject({ kind: z.literal('invitation'), invitation: invitationSchema, queued: z.literal(true) }),
]);
export type AddMemberResult = z.infer<typeof addMemberResultSchema>;

export const acceptInvitationBodySchema = z.object({
  token: z.string().min(16).max(200),
  name: z.string().trim().min(1).max(200).optional(),
  password: z.string().min(10, 'use at least 10 characters').max(1024).optional(),
});
