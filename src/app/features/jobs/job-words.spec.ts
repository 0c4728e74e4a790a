import { jobsToShow } from '../case/case-server-jobs';
import { jobView } from './job-fixtures';
import { jobKindLabel, jobProgressText, jobResultLink } from './job-words';

describe('job words', () => {
  it('counts progress in chunks with the percentage, and says when a queued job waits', () => {
    expect(jobProgressText(jobView())).toBe('5 of 20 chunks (25 %)');
    expect(jobProgressText(jobView({ state: 'queued', chunksDone: 0, chunksTotal: 0, progress: 0 }))).toBe('waiting for a worker');
  });

  it('names run kinds as the tabs do and links to the tab that shows them', () => {
    expect(jobKindLabel('basin')).toBe('Basin map');
    expect(jobKindLabel('holdprob')).toBe('Hold probability');
    expect(jobKindLabel('something-new')).toBe('Run');
    expect(jobResultLink(jobView({ kind: 'chart' }))).toEqual(['/cases', jobView().caseId, 'r', 2, 'map']);
    expect(jobResultLink(jobView({ kind: 'leanest' })).at(-1)).toBe('sign-off');
  });

  it('lists in a tab every active job of its kind and the latest three finished in the last day', () => {
    const now = Date.parse('2026-03-03T08:00:00.000Z');
    const finished = (n: number, at: string) =>
      jobView({ id: `00000000-0000-4000-8000-00000000010${n}`, state: 'succeeded', finishedAt: at });
    const jobs = [
      jobView({ id: '00000000-0000-4000-8000-000000000201', state: 'queued' }),
      jobView({ id: '00000000-0000-4000-8000-000000000202', kind: 'basin' }),
      finished(1, '2026-03-03T07:00:00.000Z'),
      finished(2, '2026-03-03T06:00:00.000Z'),
      finished(3, '2026-03-03T05:00:00.000Z'),
      finished(4, '2026-03-03T04:00:00.000Z'),
      finished(5, '2026-03-01T04:00:00.000Z'),
    ];
    expect(jobsToShow(jobs, 'sweep', now).map((j) => j.id.slice(-3))).toEqual(['201', '101', '102', '103']);
    expect(jobsToShow(jobs, 'basin', now).map((j) => j.id.slice(-3))).toEqual(['202']);
  });
});
