export type CaseRepositoryErrorCode = 'stale_revision' | 'not_found' | 'invalid' | 'storage';

/** A refusal from a repository, with a message meant for the user. */
export class CaseRepositoryError extends Error {
  constructor(
    readonly code: CaseRepositoryErrorCode,
    message: string,
    readonly field?: string,
  ) {
    super(message);
    this.name = 'CaseRepositoryError';
  }
}
