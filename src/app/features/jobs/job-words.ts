import type { JobState, JobView } from '../../../../shared/api/jobs';
import { RUN_KIND_LABELS } from '../../../../shared/case/display';
import { fieldLabel } from '../../core/units/field-table';

/** How job times read, as the stored-run marks say them. */
export const JOB_TIME_FORMAT = 'd MMM y HH:mm';

/** A job's state as the pages say it. */
export const JOB_STATE_WORDS: Readonly<Record<JobState, string>> = {
  queued: 'Queued',
  running: 'Running',
  succeeded: 'Done',
  failed: 'Failed',
  cancelled: 'Cancelled',
};

export function isActive(job: Pick<JobView, 'state'>): boolean {
  return job.state === 'queued' || job.state === 'running';
}

export function jobKindLabel(kind: string): string {
  return RUN_KIND_LABELS[kind] ?? 'Run';
}

/** Progress in the job's own steps: "12 of 40 chunks" (a queued job has not been split yet). */
export function jobProgressText(job: Pick<JobView, 'state' | 'chunksDone' | 'chunksTotal' | 'progress'>): string {
  if (job.chunksTotal === 0) return job.state === 'queued' ? 'waiting for a worker' : `${Math.round(job.progress * 100)} %`;
  const percent = Math.round(job.progress * 100);
  return `${job.chunksDone} of ${chunks(job.chunksTotal)} (${percent} %)`;
}

export function chunks(n: number): string {
  return n === 1 ? '1 chunk' : `${n} chunks`;
}

/** The size of the job's work from its settings: "6 points of Drive amplitude", "21 × 21 cells". */
export function jobSettingsText(settings: JobView['settings']): string {
  const s = settings as { spec?: { field?: unknown; steps?: unknown }; grid?: { x?: { count?: unknown }; y?: { count?: unknown } } };
  if (s.spec && typeof s.spec.steps === 'number' && typeof s.spec.field === 'string') {
    return `${s.spec.steps} points of ${fieldLabel(s.spec.field)}`;
  }
  if (s.grid && typeof s.grid.x?.count === 'number' && typeof s.grid.y?.count === 'number') {
    return `${s.grid.x.count} × ${s.grid.y.count} cells`;
  }
  return '';
}

/** The case tab that shows a run of this kind. */
export function tabOfKind(kind: string): string {
  switch (kind) {
    case 'sweep':
      return 'sweeps';
    case 'chart':
    case 'basin':
    case 'map':
      return 'map';
    case 'leanest':
    case 'holdprob':
      return 'sign-off';
    default:
      return 'motion';
  }
}

/** The case page route of the job's revision, on the tab of its kind. */
export function jobResultLink(job: Pick<JobView, 'caseId' | 'revision' | 'kind'>): unknown[] {
  return ['/cases', job.caseId, 'r', job.revision, tabOfKind(job.kind)];
}
