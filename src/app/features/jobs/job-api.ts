import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { fetchEventSource } from '@microsoft/fetch-event-source';
import { Observable, map } from 'rxjs';

import { FINISHED_JOB_STATES, jobListSchema, jobSchema, type JobView } from '../../../../shared/api/jobs';
import type { RunSettings } from '../../../../shared/engine/run-record';
import { parseReply, replyOf } from '../../core/api-reply';
import { Session } from '../../core/session';

export type JobListState = 'active' | 'finished' | 'all';

/** A followed job's stream was refused or broke for good: its words are for the page. */
export class JobFollowError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'JobFollowError';
  }
}

/** How long to wait before following a job again after its stream broke (a server restart, a dropped connection). */
export const FOLLOW_RETRY_MS = 3000;

const enc = encodeURIComponent;

/** Server jobs (shared/api/jobs.ts): submit a run of a saved revision, list, follow live, cancel. */
@Injectable({ providedIn: 'root' })
export class JobApi {
  private readonly http = inject(HttpClient);
  private readonly session = inject(Session);

  submit(caseId: string, revision: number, settings: RunSettings): Observable<JobView> {
    return this.http
      .post(`/api/cases/${enc(caseId)}/revisions/${revision}/jobs`, { settings })
      .pipe(replyOf(jobSchema, 'the new server job'));
  }

  listForCase(caseId: string, state: JobListState = 'all', limit = 50): Observable<JobView[]> {
    const params = new HttpParams().set('state', state).set('limit', String(limit));
    return this.http.get(`/api/cases/${enc(caseId)}/jobs`, { params }).pipe(
      replyOf(jobListSchema, "the case's server jobs"),
      map((list) => list.items),
    );
  }

  listForLab(labId: string, state: JobListState = 'all', limit = 100): Observable<JobView[]> {
    const params = new HttpParams().set('state', state).set('limit', String(limit));
    return this.http.get(`/api/labs/${enc(labId)}/jobs`, { params }).pipe(
      replyOf(jobListSchema, "the lab's server jobs"),
      map((list) => list.items),
    );
  }

  cancel(caseId: string, jobId: string): Observable<JobView> {
    return this.http
      .post(`/api/cases/${enc(caseId)}/jobs/${enc(jobId)}/cancel`, {})
      .pipe(replyOf(jobSchema, 'the cancelled server job'));
  }

  /**
   * The job each time it changes, from the server's event stream (fetch-based: EventSource cannot send the bearer
   * token); completes after its final state. A broken stream is opened again; a refused one fails in words.
   * Unsubscribing only stops listening: the job goes on running on the server.
   */
  follow(caseId: string, jobId: string): Observable<JobView> {
    return new Observable<JobView>((subscriber) => {
      const abort = new AbortController();
      let finished = false;
      const token = this.session.token();
      fetchEventSource(`/api/cases/${enc(caseId)}/jobs/${enc(jobId)}/events`, {
        headers: token ? { Authorization: `Bearer ${token}` } : {},
        signal: abort.signal,
        // The job runs on the server whatever the tab does; keep the page current when it shows again.
        openWhenHidden: true,
        onopen: async (response) => {
          if (response.ok && (response.headers.get('content-type') ?? '').startsWith('text/event-stream')) return;
          throw new JobFollowError(followRefusal(response.status));
        },
        onmessage: (message) => {
          if (message.event === 'gone') throw new JobFollowError('This job is gone: its case was deleted.');
          if (message.event !== 'job') return;
          const view = parseReply(jobSchema, 'a server job', JSON.parse(message.data));
          finished = FINISHED_JOB_STATES.includes(view.state);
          subscriber.next(view);
        },
        onclose: () => {
          // The stream ends after the final state; ending earlier means the connection broke: follow again.
          if (!finished) throw new Error('the job stream ended early');
        },
        onerror: (error: unknown) => {
          if (error instanceof JobFollowError || (error instanceof Error && error.name === 'ReplyMismatchError')) throw error;
          return FOLLOW_RETRY_MS;
        },
      }).then(
        () => subscriber.complete(),
        (error: unknown) => subscriber.error(error),
      );
      return () => abort.abort();
    });
  }
}

function followRefusal(status: number): string {
  if (status === 401) return 'Your session has ended. Please sign in again to follow this job.';
  if (status === 403) return 'Your role in this lab does not allow following this job.';
  if (status === 404) return 'This job no longer exists, or you cannot see it.';
  if (status === 503) return 'This server runs without a job queue: server jobs are not available here.';
  return 'The server would not send this job\'s progress. Reload the page to try again.';
}
