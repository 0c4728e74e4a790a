/**
 * Server jobs as the API sees them: submit a run of a saved revision (or a rerun of one of its stored runs), read
 * one job or a list, cancel. The workers (chunk-worker.ts) do the computing; job-store.ts keeps the job's state.
 */
import type PgBoss from 'pg-boss';
import { QueryTypes, type Sequelize } from 'sequelize';
import type { JobListQuery, JobView, SubmitJobBody } from '../../shared/api/jobs';
import { JOB_RUN_KINDS } from '../../shared/api/jobs';
import { RUN_KIND_LABELS } from '../../shared/case/display';
import { parseCase } from '../../shared/case/validate';
import { parseRunSettingsFor, type RunKind } from '../../shared/engine/run-kinds';
import { AppError } from '../app-error';
import { Run } from '../db/models';
import type { Actor, CaseAccess } from '../services/case-access';
import { findRevision } from '../services/case-service';
import { cancelJob, createJob, PoisonJobError } from './job-store';
import { withdrawChunks } from './queue';

interface JobListRow {
  id: string;
  lab_id: string;
  case_id: string;
  case_title: string;
  revision: number;
  kind: string;
  settings: { kind: string };
  rerun_of: string | null;
  rerun_matches: boolean | null;
  state: JobView['state'];
  progress: number;
  chunks_done: number;
  chunks_total: number;
  chunks_finished: number;
  stage: number;
  error: string | null;
  run_id: string | null;
  submitted_by: string | null;
  submitted_name: string | null;
  cancelled_by: string | null;
  cancelled_name: string | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
}

const SELECT_JOBS = `
  SELECT j.*, c.title AS case_title, r.number AS revision, s.name AS submitted_name, x.name AS cancelled_name
    FROM jobs j
    JOIN cases c ON c.id = j.case_id
    JOIN revisions r ON r.id = j.revision_id
    LEFT JOIN users s ON s.id = j.submitted_by
    LEFT JOIN users x ON x.id = j.cancelled_by`;

function jobView(row: JobListRow): JobView {
  return {
    id: row.id,
    labId: row.lab_id,
    caseId: row.case_id,
    caseTitle: row.case_title,
    revision: row.revision,
    kind: row.kind,
    settings: row.settings,
    rerunOf: row.rerun_of,
    rerunMatches: row.rerun_matches,
    state: row.state,
    progress: Math.min(1, Math.max(0, row.progress)),
    // Counted over the whole job: the stages done so far and the one in progress (later stages are not known yet).
    chunksDone: row.chunks_finished,
    chunksTotal: row.chunks_finished - row.chunks_done + row.chunks_total,
    error: row.error,
    runId: row.run_id,
    submittedBy: row.submitted_by ? { id: row.submitted_by, name: row.submitted_name ?? '' } : null,
    cancelledBy: row.cancelled_by ? { id: row.cancelled_by, name: row.cancelled_name ?? '' } : null,
    createdAt: row.created_at.toISOString(),
    startedAt: row.started_at?.toISOString() ?? null,
    finishedAt: row.finished_at?.toISOString() ?? null,
  };
}

export class JobService {
  constructor(
    private readonly sequelize: Sequelize,
    private readonly boss: PgBoss,
  ) {}

  /** Queues a run of revision `number` of the case. 422 naming the field when the settings do not fit the case. */
  async submit(actor: Actor, access: CaseAccess, number: number, body: SubmitJobBody): Promise<JobView> {
    if (access.archived) throw new AppError('case_archived', 'This case is archived; restore it before starting server jobs.', 409);
    const revision = await findRevision(access.caseId, number);
    const parsed = parseCase(revision.params);
    if (!parsed.ok) throw new AppError('invalid_params', `r${number}'s parameters no longer validate; save a corrected revision first.`, 422, 'params');
    let raw: unknown;
    let rerunOf: string | null = null;
    if (body.rerunOf !== undefined) {
      const run = await Run.findOne({ where: { id: body.rerunOf, revisionId: revision.id } });
      if (!run) throw new AppError('stored_run_not_found', `r${number} has no such run.`, 404, 'rerunOf');
      raw = run.settings;
      rerunOf = run.id;
    } else {
      raw = body.settings;
    }
    const settings = parseRunSettingsFor(parsed.value, raw);
    if (!settings.ok) throw new AppError('settings_not_for_case', `settings.${settings.field}: ${settings.message}.`, 422, `settings.${settings.field}`);
    if (!JOB_RUN_KINDS.includes(settings.value.kind as RunKind)) {
      throw new AppError(
        'kind_not_for_jobs',
        `${RUN_KIND_LABELS[settings.value.kind] ?? 'This run'} is one short computation; run it in the browser. Server jobs take sweeps, maps, charts and other long runs.`,
        422,
        'settings.kind',
      );
    }
    let id: string;
    try {
      id = await createJob(this.sequelize, this.boss, {
        labId: access.labId, caseId: access.caseId, revisionId: revision.id, revision: number,
        params: parsed.value, settings: settings.value, rerunOf, submittedBy: actor.id,
      });
    } catch (error: unknown) {
      if (error instanceof PoisonJobError) throw new AppError('settings_not_for_case', `settings: ${error.message}.`, 422, 'settings');
      throw error;
    }
    return this.get(access.caseId, id);
  }

  /** One job of the case (404 job_not_found otherwise). */
  async get(caseId: string, jobId: string): Promise<JobView> {
    const rows = await this.sequelize.query<JobListRow>(`${SELECT_JOBS} WHERE j.id = $1 AND j.case_id = $2`, {
      bind: [jobId, caseId], type: QueryTypes.SELECT,
    });
    if (!rows[0]) throw new AppError('job_not_found', 'This case has no such server job.', 404, 'jobId');
    return jobView(rows[0]);
  }

  /** Jobs of a case, newest first. */
  async listForCase(caseId: string, query: JobListQuery): Promise<JobView[]> {
    return this.list('j.case_id = $1', caseId, query);
  }

  /** Jobs of a lab, newest first. */
  async listForLab(labId: string, query: JobListQuery): Promise<JobView[]> {
    return this.list('j.lab_id = $1', labId, query);
  }

  /** Cancels a queued or running job: 409 job_finished when it had already ended. */
  async cancel(actor: Actor, caseId: string, jobId: string): Promise<JobView> {
    const job = await this.get(caseId, jobId);
    if (!(await cancelJob(this.sequelize, job.id, actor.id))) {
      const now = await this.get(caseId, jobId);
      throw new AppError('job_finished', `This job has already ${now.state === 'succeeded' ? 'finished' : now.state}; there is nothing to cancel.`, 409);
    }
    await withdrawChunks(this.boss, job.id);
    return this.get(caseId, jobId);
  }

  private async list(where: string, id: string, query: JobListQuery): Promise<JobView[]> {
    const state = query.state ?? 'all';
    const filter =
      state === 'active' ? ` AND j.state IN ('queued', 'running')` : state === 'finished' ? ` AND j.state NOT IN ('queued', 'running')` : '';
    const rows = await this.sequelize.query<JobListRow>(`${SELECT_JOBS} WHERE ${where}${filter} ORDER BY j.created_at DESC, j.id LIMIT $2`, {
      bind: [id, query.limit ?? 50], type: QueryTypes.SELECT,
    });
    return rows.map(jobView);
  }
}
