import { HttpClient, HttpEvent, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import type { CaseParams } from '../../../../shared/case';
import type { RunRecord } from '../../../../shared/engine/run-record';
import {
  BenchTrace,
  BenchTraceSummary,
  CaseDetail,
  CaseLinkCreated,
  CaseLinkView,
  CaseSummary,
  CommentView,
  OutboxEntry,
  Page,
  PublicCaseLink,
  RecheckState,
  RecheckVerdict,
  RecheckView,
  RevisionDetail,
  RunComparisonView,
  RunView,
  SinkMail,
  itemsOf,
  parseBenchTrace,
  parseBenchTraceSummary,
  parseCaseDetail,
  parseCaseSummary,
  parseCommentView,
  parseLinkCreated,
  parseLinkView,
  parseOutboxEntry,
  parsePage,
  parsePublicLink,
  parseRecheckView,
  parseRevisionDetail,
  parseRunView,
  parseSinkMail,
} from './library-types';

export type CaseSort = '-updated' | 'updated' | 'title' | '-title';

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

const enc = encodeURIComponent;

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

/** The case library endpoints (docs/api.md). The server checks every role; the client only hides controls. */
@Injectable({ providedIn: 'root' })
export class LibraryApi {
  private readonly http = inject(HttpClient);

  listCases(labId: string, query: CaseQuery): Observable<Page<CaseSummary>> {
    return this.http
      .get<unknown>(`/api/labs/${enc(labId)}/cases`, { params: caseQueryParams(query) })
      .pipe(map((reply) => parsePage(reply, parseCaseSummary)));
  }

  createCase(labId: string, body: NewCase): Observable<CaseDetail> {
    return this.http.post<unknown>(`/api/labs/${enc(labId)}/cases`, body).pipe(map(parseCaseDetail));
  }

  getCase(caseId: string): Observable<CaseDetail> {
    return this.http.get<unknown>(`/api/cases/${enc(caseId)}`).pipe(map(parseCaseDetail));
  }

  updateCase(caseId: string, changes: { title?: string; tags?: string[]; archived?: boolean }): Observable<unknown> {
    return this.http.patch<unknown>(`/api/cases/${enc(caseId)}`, changes);
  }

  duplicateCase(caseId: string, title?: string, revision?: number): Observable<CaseDetail> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/duplicate`, { title, revision })
      .pipe(map(parseCaseDetail));
  }

  getRevision(caseId: string, revision: number): Observable<RevisionDetail> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}`)
      .pipe(map(parseRevisionDetail));
  }

  saveRevision(caseId: string, baseRevision: number, params: CaseParams, note: string): Observable<RevisionDetail> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions`, { baseRevision, params, note })
      .pipe(map(parseRevisionDetail));
  }

  saveRun(caseId: string, revision: number, run: RunRecord): Observable<RunView> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/runs`, run)
      .pipe(map(parseRunView));
  }

  listComments(caseId: string, revision: number): Observable<CommentView[]> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/comments`)
      .pipe(map((reply) => itemsOf(reply, parseCommentView)));
  }

  addComment(caseId: string, revision: number, body: string): Observable<CommentView> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/comments`, { body })
      .pipe(map(parseCommentView));
  }

  requestRecheck(caseId: string, revision: number, reviewerId: string, message: string): Observable<unknown> {
    return this.http.post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/recheck-request`, {
      reviewerId,
      message,
    });
  }

  submitRecheck(caseId: string, revision: number, submission: RecheckSubmission): Observable<RecheckView> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/revisions/${revision}/rechecks`, submission)
      .pipe(map(parseRecheckView));
  }

  createLink(caseId: string, revision: number, expiresInDays: number): Observable<CaseLinkCreated> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/links`, { revision, expiresInDays })
      .pipe(map(parseLinkCreated));
  }

  listLinks(caseId: string): Observable<CaseLinkView[]> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/links`)
      .pipe(map((reply) => itemsOf(reply, parseLinkView)));
  }

  revokeLink(caseId: string, linkId: string): Observable<unknown> {
    return this.http.delete<unknown>(`/api/cases/${enc(caseId)}/links/${enc(linkId)}`);
  }

  /** The visitor's view: no sign-in, the token is the only credential. */
  openPublicLink(token: string): Observable<PublicCaseLink> {
    return this.http.get<unknown>(`/api/links/${enc(token)}`).pipe(map(parsePublicLink));
  }

  listBenchTraces(caseId: string): Observable<BenchTraceSummary[]> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/bench-traces`)
      .pipe(map((reply) => itemsOf(reply, parseBenchTraceSummary)));
  }

  getBenchTrace(caseId: string, traceId: string): Observable<BenchTrace> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/bench-traces/${enc(traceId)}`)
      .pipe(map(parseBenchTrace));
  }

  /** Emits upload progress events, then the response event. */
  uploadBenchTrace(caseId: string, file: File, label: string, angleUnit: 'deg' | 'rad'): Observable<HttpEvent<unknown>> {
    const form = new FormData();
    form.append('file', file, file.name);
    form.append('angleUnit', angleUnit);
    if (label.trim()) form.append('label', label.trim());
    return this.http.post<unknown>(`/api/cases/${enc(caseId)}/bench-traces`, form, {
      reportProgress: true,
      observe: 'events',
    });
  }

  downloadBenchTrace(caseId: string, traceId: string): Observable<Blob> {
    return this.http.get(`/api/cases/${enc(caseId)}/bench-traces/${enc(traceId)}/download`, { responseType: 'blob' });
  }

  deleteBenchTrace(caseId: string, traceId: string): Observable<unknown> {
    return this.http.delete<unknown>(`/api/cases/${enc(caseId)}/bench-traces/${enc(traceId)}`);
  }

  listSinkMails(): Observable<SinkMail[]> {
    return this.http.get<unknown>('/api/admin/mails').pipe(map((reply) => itemsOf(reply, parseSinkMail)));
  }

  listOutbox(): Observable<OutboxEntry[]> {
    return this.http.get<unknown>('/api/admin/outbox').pipe(map((reply) => itemsOf(reply, parseOutboxEntry)));
  }
}
