import { HttpErrorResponse } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, catchError, map, switchMap, throwError } from 'rxjs';

import type { CaseParams } from '../../../../shared/case/case-schema';
import { parseRunSettings } from '../../../../shared/engine/run-kinds';
import type { RunRecord, RunResult } from '../../../../shared/engine/run-record';
import { apiErrorOf, describeError } from '../../core/error-message';
import type { CaseLabel, CaseRepository, NewCase, OpenedCase, StoredRun } from '../case/case-repository';
import { CaseRepositoryError } from '../case/case-repository-error';
import { CaseApi } from './case-api';
import { CaseDetail, RevisionDetail, RunView, isRecord } from './library-types';

/** Roles that may save revisions and runs (the server enforces the same). */
const WRITERS: readonly string[] = ['analyst', 'owner'];

/** A stored run whose settings the engine's run registry accepts for its kind; null for anything else. */
export function storedRunOf(run: RunView): StoredRun | null {
  const settings = parseRunSettings(run.settings);
  if (!settings.ok || settings.value.kind !== run.kind) return null;
  return {
    id: run.id,
    kind: settings.value.kind,
    settings: settings.value,
    summary: run.summary,
    resultDigest: run.resultDigest,
    engineVersion: run.engineVersion,
    author: run.author ?? undefined,
    createdAt: run.createdAt,
    verification: run.verification,
  };
}

export function openedCaseOf(detail: CaseDetail, revision: RevisionDetail): OpenedCase {
  if (!revision.params) {
    throw new CaseRepositoryError('invalid', `The parameters stored in r${revision.number} no longer pass validation.`);
  }
  return {
    caseId: detail.id,
    title: detail.title,
    tags: detail.tags,
    labId: detail.lab.id || undefined,
    revision: revision.number,
    latestRevision: Math.max(detail.latestRevision, revision.number),
    params: revision.params,
    paramsDigest: revision.paramsDigest,
    readOnly: detail.archived || !WRITERS.includes(detail.myRole ?? ''),
    runs: revision.runs.map(storedRunOf).filter((r): r is StoredRun => r !== null),
  };
}

/** The API's refusals as the case page's repository errors, in words a user can act on. */
export function repositoryErrorOf(error: unknown, baseRevision?: number): unknown {
  if (error instanceof CaseRepositoryError || !(error instanceof HttpErrorResponse)) return error;
  const api = apiErrorOf(error);
  if (error.status === 409) {
    const since = baseRevision ? ` since you opened r${baseRevision}` : '';
    return new CaseRepositoryError(
      'stale_revision',
      `Not saved: someone saved a newer revision of this case${since}. Open the latest revision, reapply your changes and save again.`,
    );
  }
  if (error.status === 422 || error.status === 400) {
    const field = api?.field?.replace(/^params\./, '');
    return new CaseRepositoryError('invalid', api?.message ?? 'The server refused these parameters.', field);
  }
  if (error.status === 404) return new CaseRepositoryError('not_found', api?.message ?? 'That case does not exist, or you cannot see it.');
  return new CaseRepositoryError('storage', describeError(error));
}

/** Cases kept by the server: the lab's library, shared with its members. */
@Injectable({ providedIn: 'root' })
export class ApiCaseRepository implements CaseRepository {
  private readonly api = inject(CaseApi);

  open(caseId: string, revision?: number): Observable<OpenedCase> {
    return this.api.getCase(caseId).pipe(
      switchMap((detail) =>
        this.api.getRevision(caseId, revision ?? detail.latestRevision).pipe(map((rev) => openedCaseOf(detail, rev))),
      ),
      catchError((error: unknown) => throwError(() => repositoryErrorOf(error))),
    );
  }

  create(input: NewCase): Observable<OpenedCase> {
    if (!input.labId) {
      return throwError(() => new CaseRepositoryError('invalid', 'Choose a lab first: cases are kept in a lab.'));
    }
    return this.api
      .createCase(input.labId, { title: input.title, tags: [...input.tags], params: input.params, note: input.note })
      .pipe(
        switchMap((detail) => this.open(detail.id, detail.latestRevision)),
        catchError((error: unknown) => throwError(() => repositoryErrorOf(error))),
      );
  }

  saveRevision(caseId: string, baseRevision: number, params: CaseParams, note: string): Observable<OpenedCase> {
    return this.api.saveRevision(caseId, baseRevision, params, note).pipe(
      switchMap((rev) => this.api.getCase(caseId).pipe(map((detail) => openedCaseOf(detail, rev)))),
      catchError((error: unknown) => throwError(() => repositoryErrorOf(error, baseRevision))),
    );
  }

  saveRun(caseId: string, revision: number, run: RunRecord): Observable<StoredRun> {
    return this.api.saveRun(caseId, revision, run).pipe(
      map((view) => {
        const stored = storedRunOf(view);
        if (!stored) throw new CaseRepositoryError('storage', 'The server stored the run but answered in an unexpected way.');
        return stored;
      }),
      catchError((error: unknown) => throwError(() => repositoryErrorOf(error))),
    );
  }

  runResult(caseId: string, revision: number, runId: string): Observable<RunResult> {
    // A 409 here is a run still being rerun by the server, not a stale save: the server's words say so.
    return this.api
      .runResult(caseId, revision, runId)
      .pipe(catchError((error: unknown) => throwError(() => new CaseRepositoryError('storage', describeError(error)))));
  }

  rename(caseId: string, title: string, tags?: readonly string[]): Observable<CaseLabel> {
    return this.api.updateCase(caseId, { title: title.trim(), ...(tags ? { tags: [...tags] } : {}) }).pipe(
      map((detail) => ({ title: detail.title, tags: detail.tags })),
      catchError((error: unknown) => throwError(() => repositoryErrorOf(error))),
    );
  }
}
