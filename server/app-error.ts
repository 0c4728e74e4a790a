import { ERROR_STATUS, type ErrorCode, type ErrorStatusTable } from '../shared/api/errors';

/**
 * The one error type routes and services throw; the error middleware turns it into `{ error: { code, message, field? } }`.
 * `code` must be listed in shared/api/errors.ts and `status` must be the status listed there (checked by the compiler).
 */
export class AppError<C extends ErrorCode = ErrorCode> extends Error {
  readonly status: number;

  constructor(
    readonly code: C,
    message: string,
    status: ErrorStatusTable[C],
    readonly field?: string,
  ) {
    super(message);
    this.name = 'AppError';
    this.status = status;
    if (ERROR_STATUS[code] !== status) throw new Error(`AppError ${code} must have status ${ERROR_STATUS[code]}, not ${status}`);
  }
}
