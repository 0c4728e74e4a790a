/** Site-admin views of outgoing mail. */
import { z } from 'zod';
import { instantSchema, pageQuerySchema, serialIdSchema } from './common';

export const OUTBOX_STATES = ['pending', 'sent', 'failed'] as const;
export type OutboxState = (typeof OUTBOX_STATES)[number];

export const outboxQuerySchema = pageQuerySchema.extend({ state: z.enum(OUTBOX_STATES).optional() });

export const outboxMailSchema = z.strictObject({
  id: serialIdSchema,
  to: z.string(),
  subject: z.string(),
  state: z.enum(OUTBOX_STATES),
  attempts: z.number().int().min(0),
  nextAttemptAt: instantSchema.nullable(),
  lastError: z.string().nullable(),
  sentAt: instantSchema.nullable(),
  createdAt: instantSchema,
});
export type OutboxMailView = z.infer<typeof outboxMailSchema>;

export const sinkMailSchema = z.strictObject({
  id: serialIdSchema,
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  receivedAt: instantSchema,
});
export type SinkMailView = z.infer<typeof sinkMailSchema>;
