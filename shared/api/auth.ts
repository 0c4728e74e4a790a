/** Sign-in, the signed-in person, health. */
import { z } from 'zod';
import { idSchema, instantSchema, labRoleSchema } from './common';

export const signInBodySchema = z.object({
  email: z.string().trim().min(1).max(320),
  password: z.string().min(1).max(1024),
});

export const publicUserSchema = z.strictObject({
  id: idSchema,
  email: z.string(),
  name: z.string(),
  isSiteAdmin: z.boolean(),
});
export type PublicUser = z.infer<typeof publicUserSchema>;

/** Reply of sign-in and of accepting an invitation. */
export const signedInSchema = z.strictObject({
  token: z.string().min(1),
  tokenType: z.literal('Bearer'),
  expiresAt: instantSchema,
  user: publicUserSchema,
});
export type SignedIn = z.infer<typeof signedInSchema>;

export const meSchema = z.strictObject({
  user: publicUserSchema,
  memberships: z.array(z.strictObject({ labId: idSchema, labName: z.string(), role: labRoleSchema })),
  tokenExpiresAt: instantSchema,
});
export type Me = z.infer<typeof meSchema>;

export const healthSchema = z.strictObject({
  status: z.literal('ok'),
  database: z.literal('up'),
  latencyMs: z.number().min(0),
});
export type Health = z.infer<typeof healthSchema>;
