import { HttpClient, HttpEvent, HttpEventType } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import { traceDetailSchema, traceSummarySchema } from '../../../../shared/api/bench-traces';
import { pagedSchema } from '../../../../shared/api/common';
import { parseReply, replyOf } from '../../core/api-reply';
import { WHOLE_LIST } from '../library/case-api';
import { BenchTrace, BenchTraceSummary, benchTraceView } from '../library/library-types';

const enc = encodeURIComponent;

/** Bench traces of a case: measured CSV uploads and their SI series. Replies parsed with the API contract. */
@Injectable({ providedIn: 'root' })
export class BenchTraceApi {
  private readonly http = inject(HttpClient);

  /** Newest first. */
  listBenchTraces(caseId: string): Observable<BenchTraceSummary[]> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/bench-traces`, { params: { pageSize: WHOLE_LIST } })
      .pipe(replyOf(pagedSchema(traceSummarySchema), 'the bench traces'), map((page) => page.items));
  }

  getBenchTrace(caseId: string, traceId: string): Observable<BenchTrace> {
    return this.http
      .get<unknown>(`/api/cases/${enc(caseId)}/bench-traces/${enc(traceId)}`)
      .pipe(replyOf(traceDetailSchema, 'the bench trace'), map(benchTraceView));
  }

  /** Emits upload progress events, then the response event; the response body is checked against the contract. */
  uploadBenchTrace(caseId: string, file: File, label: string, angleUnit: 'deg' | 'rad'): Observable<HttpEvent<unknown>> {
    const form = new FormData();
    form.append('file', file, file.name);
    form.append('angleUnit', angleUnit);
    if (label.trim()) form.append('label', label.trim());
    return this.http
      .post<unknown>(`/api/cases/${enc(caseId)}/bench-traces`, form, { reportProgress: true, observe: 'events' })
      .pipe(
        map((event) => {
          if (event.type === HttpEventType.Response) parseReply(traceSummarySchema, 'the uploaded trace', event.body);
          return event;
        }),
      );
  }

  downloadBenchTrace(caseId: string, traceId: string): Observable<Blob> {
    return this.http.get(`/api/cases/${enc(caseId)}/bench-traces/${enc(traceId)}/download`, { responseType: 'blob' });
  }

  deleteBenchTrace(caseId: string, traceId: string): Observable<unknown> {
    return this.http.delete<unknown>(`/api/cases/${enc(caseId)}/bench-traces/${enc(traceId)}`);
  }
}
