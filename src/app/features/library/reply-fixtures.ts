/**
 * Replies that satisfy the API contract, for specs that answer requests through HttpTestingController. Typed with
 * the contract's types, so a change to shared/api breaks them at compile time instead of letting specs drift.
 */
import type { CaseDetail, CaseListItem, RevisionDetail, RunView } from '../../../../shared/api/cases';
import { caseDigest, templateCase, type CaseParams } from '../../../../shared/case';

export const FIXTURE_IDS = {
  lab: '00000000-0000-4000-8000-00000000000a',
  case: '00000000-0000-4000-8000-0000000000c1',
  analyst: '00000000-0000-4000-8000-0000000000a1',
  reviewer: '00000000-0000-4000-8000-0000000000b1',
  run: '00000000-0000-4000-8000-0000000000e1',
} as const;

const AT = '2026-11-30T10:00:00.000Z';
const analyst = { id: FIXTURE_IDS.analyst, name: 'Ada Analyst' };

export function caseListItemReply(changes: Partial<CaseListItem> = {}): CaseListItem {
  return {
    id: FIXTURE_IDS.case,
    title: 'Teaching rod',
    tags: ['teaching'],
    labId: FIXTURE_IDS.lab,
    latestRevision: 1,
    recheckState: 'draft',
    author: analyst,
    createdAt: AT,
    updatedAt: AT,
    archived: false,
    ...changes,
  };
}

export function caseDetailReply(changes: Partial<CaseDetail> = {}): CaseDetail {
  const { labId: _labId, ...item } = caseListItemReply();
  const latest = changes.latestRevision ?? 1;
  return {
    ...item,
    lab: { id: FIXTURE_IDS.lab, name: 'Shaker Lab' },
    myRole: 'analyst',
    revisions: Array.from({ length: latest }, (_, i) => ({
      number: latest - i,
      paramsDigest: caseDigest(templateCase()),
      note: '',
      author: analyst,
      createdAt: AT,
      recheckState: 'draft' as const,
    })),
    ...changes,
  };
}

export function runReply(changes: Partial<RunView> = {}): RunView {
  return {
    id: FIXTURE_IDS.run,
    kind: 'motion',
    settings: { kind: 'motion' },
    summary: { outcome: 'holds-upright' },
    resultDigest: 'b'.repeat(64),
    engineVersion: '1.0.0',
    verification: {
      state: 'verified',
      verifiedAt: AT,
      engineVersion: '1.0.0',
      failure: null,
      claimed: null,
      differences: [],
      resultBytes: { raw: 9000, compressed: 4000 },
    },
    author: analyst,
    createdAt: AT,
    ...changes,
  };
}

export function revisionReply(number: number, params: CaseParams = templateCase(), changes: Partial<RevisionDetail> = {}): RevisionDetail {
  return {
    caseId: FIXTURE_IDS.case,
    caseTitle: 'Teaching rod',
    number,
    params: params as unknown as Record<string, unknown>,
    schemaVersion: params.schemaVersion,
    paramsDigest: caseDigest(params),
    note: '',
    author: analyst,
    createdAt: AT,
    recheckState: 'draft',
    recheckRequest: null,
    runs: [],
    rechecks: [],
    comments: [],
    ...changes,
  };
}
