/**
 * Server jobs (docs/api.md, docs/engine.md): a run of a saved revision computed by worker processes on the
 * PostgreSQL-backed queue and stored with the revision when it finishes. Long kinds only: a motion run or a margins
 * analysis is one short task and stays in the browser.
 */
import { z } from 'zod';
import { RUN_KINDS, type RunKind } from '../engine/run-kinds';
import { idSchema, instantSchema, personRefSchema } from './common';

/** Run kinds a job may compute. */
export const JOB_RUN_KINDS = RUN_KINDS.filter((k) => k !== 'motion' && k !== 'margins') as readonly RunKind[];

export const JOB_STATES = ['queued', 'running', 'succeeded', 'failed', 'cancelled'] as const;
export type JobState = (typeof JOB_STATES)[number];
/** States a job leaves no more. */
export const FINISHED_JOB_STATES: readonly JobState[] = ['succeeded', 'failed', 'cancelled'];

/**
 * Either new settings for the revision, or a stored run of it to compute again on the workers. The settings' own
 * fields are checked against the case by the server (422 naming `settings.<field>`), as for a stored run.
 */
export const submitJobBodySchema = z
  .strictObject({
    settings: z.looseObject({ kind: z.enum(RUN_KINDS as [RunKind, ...RunKind[]]) }).optional(),
    rerunOf: idSchema.optional(),
  })
  .refine((b) => (b.settings === undefined) !== (b.rerunOf === undefined), {
    message: 'give either settings (a new run) or rerunOf (a stored run to compute again), not both',
    path: ['settings'],
  });
export type SubmitJobBody = z.infer<typeof submitJobBodySchema>;

export const jobListQuerySchema = z.object({
  /** active: queued or running; finished: the others; all (default) */
  state: z.enum(['active', 'finished', 'all']).optional(),
  limit: z.coerce.number().int().min(1).max(200).optional(),
});
export type JobListQuery = z.infer<typeof jobListQuerySchema>;

export const jobSchema = z.strictObject({
  id: idSchema,
  labId: idSchema,
  caseId: idSchema,
  caseTitle: z.string(),
  revision: z.number().int().min(1),
  kind: z.string(),
  settings: z.looseObject({ kind: z.string() }),
  /** the stored run this job computes again, when it is a rerun */
  rerunOf: idSchema.nullable(),
  /** for a rerun, once finished: whether the workers' digest equals the stored run's */
  rerunMatches: z.boolean().nullable(),
  state: z.enum(JOB_STATES),
  /** 0..1, non-decreasing while the job runs */
  progress: z.number().min(0).max(1),
  /** chunks computed and known so far over the whole job: a later stage (a sweep's thresholds) adds its chunks when it starts */
  chunksDone: z.number().int().min(0),
  chunksTotal: z.number().int().min(0),
  /** why a failed job stopped, in words */
  error: z.string().nullable(),
  /** the stored run a succeeded job made */
  runId: idSchema.nullable(),
  submittedBy: personRefSchema.nullable(),
  cancelledBy: personRefSchema.nullable(),
  createdAt: instantSchema,
  startedAt: instantSchema.nullable(),
  finishedAt: instantSchema.nullable(),
});
export type JobView = z.infer<typeof jobSchema>;

export const jobListSchema = z.strictObject({ items: z.array(jobSchema) });
export type JobList = z.infer<typeof jobListSchema>;
