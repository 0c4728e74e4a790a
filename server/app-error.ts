/** The one error type routes and services throw; the error middleware turns it into `{ error: { code, message, field? } }`. */
export class AppError extends Error {
  constructor(
    readonly code: string,
    message: string,
    readonly status: number,
    readonly field?: string,
  ) {
    super(message);
    this.name = 'AppError';
  }
}
