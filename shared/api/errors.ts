/**
 * Every error code the API answers with, and its one HTTP status. The rule: 400 when the request is malformed or
 * has the wrong shape (bad JSON, a missing or mistyped field), 422 when it is well formed but the values cannot be
 * accepted (parameters outside the case schema, a run computed for other parameters, a reviewer without the role).
 * Codes are snake_case and never change meaning; the client may branch on them.
 */
import { z } from 'zod';

export const ERROR_STATUS = {
  // 400: malformed or wrongly shaped requests
  malformed_json: 400,
  invalid_body: 400,
  too_deep: 400,
  missing_field: 400,
  invalid_field: 400,
  bad_upload: 400,
  bad_request: 400,
  // 401: who is calling is not established
  unauthenticated: 401,
  invalid_token: 401,
  token_expired: 401,
  token_revoked: 401,
  bad_credentials: 401,
  // 403: known caller, not allowed
  not_a_member: 403,
  role_too_low: 403,
  not_site_admin: 403,
  reviewer_is_author: 403,
  not_requested_reviewer: 403,
  // 404: nothing there (or not visible to the caller)
  not_found: 404,
  lab_not_found: 404,
  case_not_found: 404,
  revision_not_found: 404,
  member_not_found: 404,
  invitation_not_found: 404,
  invitation_invalid: 404,
  link_not_found: 404,
  trace_not_found: 404,
  mail_sink_off: 404,
  client_missing: 404,
  stored_run_not_found: 404,
  result_not_stored: 404,
  job_not_found: 404,
  // 409: the state of the data forbids it now
  already_member: 409,
  last_owner: 409,
  case_archived: 409,
  stale_revision: 409,
  no_stored_runs: 409,
  recheck_not_requested: 409,
  verification_pending: 409,
  comparison_differs: 409,
  result_pending: 409,
  job_finished: 409,
  // 410: existed, no longer usable
  link_expired: 410,
  link_revoked: 410,
  // 413, 415: the payload
  payload_too_large: 413,
  file_too_large: 413,
  unsupported_type: 415,
  // 422: well formed, but the values cannot be accepted
  invalid_params: 422,
  params_mismatch: 422,
  settings_kind_mismatch: 422,
  settings_not_for_case: 422,
  kind_not_for_jobs: 422,
  reviewer_not_eligible: 422,
  unexpected_field: 422,
  bad_csv: 422,
  angle_unit_conflict: 422,
  invalid_text: 422,
  // 429
  too_many_attempts: 429,
  // 500, 503
  internal_error: 500,
  /** Only where response checking is on (tests): a reply did not match its route's schema. */
  response_contract: 500,
  database_unavailable: 503,
  jobs_unavailable: 503,
} as const;

export type ErrorStatusTable = typeof ERROR_STATUS;
export type ErrorCode = keyof ErrorStatusTable;
/** The codes answered with `status`, e.g. `CodeWithStatus<401>`. */
export type CodeWithStatus<S extends number> = { [C in ErrorCode]: ErrorStatusTable[C] extends S ? C : never }[ErrorCode];

export const ERROR_CODES = Object.keys(ERROR_STATUS) as ErrorCode[];

export function isErrorCode(value: unknown): value is ErrorCode {
  return typeof value === 'string' && Object.hasOwn(ERROR_STATUS, value);
}

/** `{ error: { code, message, field? } }`: the body of every error reply. `field` is a dotted path into the request. */
export const errorBodySchema = z.strictObject({
  error: z.strictObject({
    code: z.enum(ERROR_CODES as [ErrorCode, ...ErrorCode[]]),
    message: z.string().min(1),
    field: z.string().min(1).optional(),
  }),
});
export type ErrorBody = z.infer<typeof errorBodySchema>;
