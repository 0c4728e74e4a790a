import { HttpClient, HttpErrorResponse, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, catchError, map, throwError } from 'rxjs';

import { pagedSchema } from '../../../../shared/api/common';
import {
  caseDetailSchema,
  caseListItemSchema,
  commentSchema,
  recheckSchema,
  revisionDetailSchema,
  runSchema,
  type CaseSort,
} from '../../../../shared/api/cases';
import type { CaseParams } from '../../../../shared/case';
import { decodeRunResult } from '../../../../shared/engine/result-codec';
import type { RunRecord, RunResult } from '../../../../shared/engine/run-record';
import { replyOf } from '../../core/api-reply';
import {
  CaseDetail,
  CaseSummary,
  CommentView,
  Page,
  RecheckState,
  RecheckVerdict,
  RecheckView,
  RevisionDetail,
  RunView,
  revisionView,
} from './library-types';

export type { CaseSort };

/** What the library table asks the server for; empty filters are left out of the request. */
export interface CaseQuery {
  readonly search: string;
  readonly tag: string;
  readonly author: string;
  readonly recheck: RecheckState | '';
  readonly archived: boolean;
  readonly sort: CaseSort;
  readonly page: number;
  readonly pageSize: number;
}

export interface NewCase {
  readonly title: string;
  readonly tags: string[];
  readonly params: CaseParams;
  readonly note?: string;
}

/** A verdict: the comparison it stands on is the server's own (its rerun of every stored run). */
export interface RecheckSubmission {
  readonly verdict: RecheckVerdict;
  readonly comment: string;
}

/** The server's largest page, for lists that are short by nature (comments of one revision). */
export const WHOLE_LIST = 500;

const enc = encodeURIComponent;

/** A refusal to a text request carries the API's error JSON as text: parsed, so describeError can read it. */
export function withJsonError(error: unknown): unknown {
  if (!(error instanceof HttpErrorResponse) || typeof error.error !== 'string') return error;
  try {
    const body: unknown = JSON.parse(error.error);
    return new HttpErrorResponse({ error: body, headers: error.headers, status: error.status, statusText: error.statusText, url: error.url ?? undefined });
  } catch {
    return error;
  }
}

export function caseQueryParams(query: CaseQuery): HttpParams {
  let params = new HttpParams()
    .set('sort', query.sort)
    .set('page', String(query.page))
    .set('pageSize', String(query.pageSize))
    .set('archived', String(query.archived));
  const search = query.search.trim();
  if (search) params = params.set('search', search);
  if (query.tag) params = params.set('tag', query.tag);
  if (query.author) params = params.set('author', query.author);
  if (query.recheck) params = params.set('recheck', query.recheck);
  return params;
}

/**
 * Cases with their revisions, runs, comments and rechecks (docs/api.md). Every reply is parsed with the API
 * contract's schema; a reply that does not match fails with ReplyMismatchError. The server checks every role.
 */
@Injectable({ providedIn: 'root' })
export class CaseApi {
  private readonly http = inject(HttpClient);

  listCases(labId: string, query: CaseQuery): Observable<Page<CaseSummary>> {
    return this.http
      .get<unknown>(`/api/labs/${enc(labId)}/cases`, { params: caseQueryParams(query) })
      .pipe(replyOf(pagedSchema(caseListItemSchema), 'the case list'));
  }

  createCase(labId: string, body: NewCase): Observable<CaseDetail> {
    return this.http.post<unknown>(`/api/labs/${enc(labId)}/cases`, body).pipe(replyOf(caseDetailSchema, 'the new case'));
  }

  getCase(caseId: string): Observable<CaseDetail> {
    return this.http.get<unknown>(`/api/cases/${enc(caseId)}`).pipe(replyOf(caseDetailSchema, 'the case'));
  }

  updateCase(caseId: string, changes: { title?: string; tags?: string[]; archived?: boolean }): Observable<CaseDetail> {
    return this.http.patch<unknown>(`/api/cases/${enc(caseId)}`, changes).pipe(replyOf(caseDetailSchema, 'the changed case'));
  }

  duplicateCase(caseId: string, title?: string, revision?: number): Observable<CaseDetail> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/duplicate`, { title, revision })
      .pipe(replyOf(caseDetailSchema, 'the copied case'));
  }

  getRevision(caseId: string, revision: number): Observable<RevisionDetail> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}`)
      .pipe(replyOf(revisionDetailSchema, 'the revision'), map(revisionView));
  }

  saveRevision(caseId: string, baseRevision: number, params: CaseParams, note: string): Observable<RevisionDetail> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions`, { baseRevision, params, note })
      .pipe(replyOf(revisionDetailSchema, 'the saved revision'), map(revisionView));
  }

  saveRun(caseId: string, revision: number, run: RunRecord): Observable<RunView> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/runs`, run)
      .pipe(replyOf(runSchema, 'the stored run'));
  }

  /** A stored run's full result as the server stored it (the browser inflates the gzip body; result-codec text). */
  runResult(caseId: string, revision: number, runId: string): Observable<RunResult> {
    return this.http
      .get(`/api/cases/${enc(caseId)}/revisions/${revision}/runs/${enc(runId)}/result`, { responseType: 'text' })
      .pipe(map(decodeRunResult), catchError((error: unknown) => throwError(() => withJsonError(error))));
  }

  /** Oldest first. */
  listComments(caseId: string, revision: number): Observable<CommentView[]> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/comments`, { params: { pageSize: WHOLE_LIST } })
      .pipe(replyOf(pagedSchema(commentSchema), 'the comments'), map((page) => page.items));
  }

  addComment(caseId: string, revision: number, body: string): Observable<CommentView> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/comments`, { body })
      .pipe(replyOf(commentSchema, 'the comment'));
  }

  requestRecheck(caseId: string, revision: number, reviewerId: string, message: string): Observable<RevisionDetail> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/recheck-request`, { reviewerId, message })
      .pipe(replyOf(revisionDetailSchema, 'the revision'), map(revisionView));
  }

  submitRecheck(caseId: string, revision: number, submission: RecheckSubmission): Observable<RecheckView> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/rechecks`, submission)
      .pipe(replyOf(recheckSchema, 'the recheck'));
  }
}
