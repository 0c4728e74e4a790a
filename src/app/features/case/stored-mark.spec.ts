import { storedMarkText } from './stored-mark';

describe('storedMarkText', () => {
  const mark = {
    runId: 'r',
    kind: 'sweep' as const,
    revision: 4,
    computedAt: '2026-12-02T14:05:00.000Z',
    authorName: 'Ada Analyst',
    verification: { state: 'verified' as const, verifiedAt: null, engineVersion: null, failure: null, claimed: null, differences: [], resultBytes: null },
  };

  it('names the revision, the kind as the tabs do, when and by whom', () => {
    expect(storedMarkText(mark, 'en-US')).toMatch(/^Stored r4 · Sweep, computed 2 Dec 2026 \d\d:\d\d by Ada Analyst$/);
  });

  it('names a former member when the author is gone', () => {
    expect(storedMarkText({ ...mark, kind: 'margins', authorName: null }, 'en-US')).toMatch(/^Stored r4 · Floquet margins, computed .* by a former member$/);
  });
});
