import { HttpErrorResponse } from '@angular/common/http';

import { ReplyMismatchError } from './api-reply';

/** The `{ error: { code, message, field? } }` body every API error carries. */
export interface ApiError {
  readonly code: string;
  readonly message: string;
  readonly field?: string;
}

export function apiErrorOf(error: unknown): ApiError | null {
  if (!(error instanceof HttpErrorResponse)) return null;
  const body: unknown = error.error;
  if (typeof body !== 'object' || body === null || !('error' in body)) return null;
  const inner: unknown = body.error;
  if (typeof inner !== 'object' || inner === null) return null;
  const code = 'code' in inner ? inner.code : undefined;
  const message = 'message' in inner ? inner.message : undefined;
  const field = 'field' in inner ? inner.field : undefined;
  if (typeof code !== 'string' || typeof message !== 'string') return null;
  return typeof field === 'string' ? { code, message, field } : { code, message };
}

/** Turns any failure into one sentence a user can act on. */
export function describeError(error: unknown): string {
  const api = apiErrorOf(error);
  if (api) return api.message;
  if (error instanceof ReplyMismatchError) {
    return "The server's reply was not what this page expects, so nothing is shown rather than a guess. Reload the page; if this stays, the server and this page are of different versions.";
  }
  if (error instanceof HttpErrorResponse) {
    if (error.status === 0) return 'Quiverpoint cannot reach its server. Check your connection and try again.';
    if (error.status === 401) return 'Your session has ended. Please sign in again.';
    if (error.status === 403) return 'Your role in this lab does not allow that.';
    if (error.status === 404) return 'That item no longer exists, or you cannot see it.';
    if (error.status === 409) return 'Someone else changed this at the same time. Reload and try again.';
    if (error.status === 413) return 'That file is too large.';
    if (error.status === 429) return 'Too many attempts. Wait a minute and try again.';
    if (error.status >= 500) return 'The server ran into a problem. Try again in a moment.';
    return 'The server refused the request.';
  }
  return 'Something went wrong on this page. Reload it and try again.';
}
