import { InjectionToken } from '@angular/core';
import type { Observable } from 'rxjs';

import type { VerificationView } from '../../../../shared/api/cases';
import type { CaseParams } from '../../../../shared/case/case-schema';
import type { RunKind, RunRecord, RunResult, RunSettings, RunSummary } from '../../../../shared/engine/run-record';

export { CaseRepositoryError, type CaseRepositoryErrorCode } from './case-repository-error';

/** A run as stored with a revision. */
export interface StoredRun {
  readonly id: string;
  readonly kind: RunKind;
  readonly settings: RunSettings;
  readonly summary: RunSummary;
  readonly resultDigest: string;
  readonly engineVersion: string;
  readonly author?: { readonly id: string; readonly name: string };
  readonly createdAt: string;
  /** The server's own rerun of the run: its full result is stored once this is no longer `pending`. */
  readonly verification: VerificationView;
}

/** One revision of a case as the case page sees it. */
export interface OpenedCase {
  readonly caseId: string;
  readonly title: string;
  readonly tags: readonly string[];
  readonly labId?: string;
  readonly revision: number;
  readonly latestRevision: number;
  readonly params: CaseParams;
  readonly paramsDigest: string;
  /** True when the signed-in user may not save revisions or runs of this case. */
  readonly readOnly: boolean;
  readonly runs: readonly StoredRun[];
}

export interface NewCase {
  readonly labId: string | null;
  readonly title: string;
  readonly tags: readonly string[];
  readonly params: CaseParams;
  readonly note: string;
}

/** The name and tags a case carries across all its revisions. */
export interface CaseLabel {
  readonly title: string;
  readonly tags: readonly string[];
}

/** Where case revisions and their runs are kept (the browser's storage now, the API later). */
export interface CaseRepository {
  /** The given revision, or the latest when `revision` is absent. */
  open(caseId: string, revision?: number): Observable<OpenedCase>;
  create(input: NewCase): Observable<OpenedCase>;
  /** A new revision on top of `baseRevision`; fails with code `stale_revision` when that is no longer the latest. */
  saveRevision(caseId: string, baseRevision: number, params: CaseParams, note: string): Observable<OpenedCase>;
  saveRun(caseId: string, revision: number, run: RunRecord): Observable<StoredRun>;
  /** The full result the server stored for a run (its own rerun's); fails while the run is still `pending`. */
  runResult(caseId: string, revision: number, runId: string): Observable<RunResult>;
  /** Renames the case (no new revision: the title is not part of the parameters); replaces the tags when given. */
  rename(caseId: string, title: string, tags?: readonly string[]): Observable<CaseLabel>;
}

/** Provided by the case routes (ApiCaseRepository); specs provide FakeCaseRepository or the API one over HttpTestingController. */
export const CASE_REPOSITORY = new InjectionToken<CaseRepository>('CASE_REPOSITORY');
