import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import { decodeRunResult } from '../../../../shared/engine/result-codec';
import type { RunResult } from '../../../../shared/engine/run-kinds';

import { createdLinkSchema, linkSchema, publicCaseSchema } from '../../../../shared/api/case-links';
import { pagedSchema } from '../../../../shared/api/common';
import { replyOf } from '../../core/api-reply';
import { WHOLE_LIST } from '../library/case-api';
import { CaseLinkCreated, CaseLinkView, PublicCaseLink, revisionView } from '../library/library-types';

const enc = encodeURIComponent;

/** Case links: read-only access to one revision for people outside the lab. Replies parsed with the API contract. */
@Injectable({ providedIn: 'root' })
export class CaseLinkApi {
  private readonly http = inject(HttpClient);

  createLink(caseId: string, revision: number, expiresInDays: number): Observable<CaseLinkCreated> {
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/links`, { revision, expiresInDays })
      .pipe(replyOf(createdLinkSchema, 'the new case link'));
  }

  /** Newest first. */
  listLinks(caseId: string): Observable<CaseLinkView[]> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/links`, { params: { pageSize: WHOLE_LIST } })
      .pipe(replyOf(pagedSchema(linkSchema), 'the case links'), map((page) => page.items));
  }

  revokeLink(caseId: string, linkId: string): Observable<CaseLinkView> {
    return this.http.delete<unknown>(`/api/cases/${enc(caseId)}/links/${enc(linkId)}`).pipe(replyOf(linkSchema, 'the revoked link'));
  }

  /** The visitor's view: no sign-in, the token is the only credential. */
  openPublicLink(token: string): Observable<PublicCaseLink> {
    return this.http.get<unknown>(`/api/links/${enc(token)}`).pipe(
      replyOf(publicCaseSchema, 'the shared case'),
      map((reply) => ({ ...reply, revision: revisionView(reply.revision) })),
    );
  }

  /** A linked run's stored result (the server's, as stored; the browser inflates the gzip body). */
  linkRunResult(token: string, runId: string): Observable<RunResult> {
    return this.http.get(`/api/links/${enc(token)}/runs/${enc(runId)}/result`, { responseType: 'text' }).pipe(map(decodeRunResult));
  }
}
