import type { JobView } from '../../../../shared/api/jobs';

export const LAB_ID = '00000000-0000-4000-8000-00000000001a';
export const CASE_ID = '00000000-0000-4000-8000-0000000000c1';

/** A contract-valid job view (shared/api/jobs.ts) for specs; `over` sets the fields a spec cares about. */
export function jobView(over: Partial<JobView> = {}): JobView {
  return {
    id: '00000000-0000-4000-8000-0000000000b1',
    labId: LAB_ID,
    caseId: CASE_ID,
    caseTitle: 'Tall rod on the shaker',
    revision: 2,
    kind: 'sweep',
    settings: { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.004, steps: 20 } },
    rerunOf: null,
    rerunMatches: null,
    state: 'running',
    progress: 0.25,
    chunksDone: 5,
    chunksTotal: 20,
    error: null,
    runId: null,
    submittedBy: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst' },
    cancelledBy: null,
    createdAt: '2026-03-02T21:15:00.000Z',
    startedAt: '2026-03-02T21:15:02.000Z',
    finishedAt: null,
    ...over,
  };
}
