import { HttpErrorResponse } from '@angular/common/http';

import { z } from 'zod';

import { ReplyMismatchError, parseReply } from './api-reply';
import { apiErrorOf, describeError } from './error-message';

describe('describeError', () => {
  it("passes on the server's own message and field", () => {
    const error = new HttpErrorResponse({
      status: 409,
      error: { error: { code: 'already_member', message: 'x@example.org is already a member.', field: 'email' } },
    });
    expect(describeError(error)).toBe('x@example.org is already a member.');
    expect(apiErrorOf(error)).toEqual({ code: 'already_member', message: 'x@example.org is already a member.', field: 'email' });
  });

  it('explains an unreachable server in plain words', () => {
    expect(describeError(new HttpErrorResponse({ status: 0 }))).toContain('cannot reach its server');
  });

  it('says what a refused role means when the server gives no message', () => {
    expect(describeError(new HttpErrorResponse({ status: 403, error: 'Forbidden' }))).toBe(
      'Your role in this lab does not allow that.',
    );
  });

  it('never shows a programming error to the user', () => {
    expect(describeError(new TypeError("Cannot read properties of undefined (reading 'x')"))).toBe(
      'Something went wrong on this page. Reload it and try again.',
    );
  });

  it('says plainly that a reply did not match the contract, without schema words', () => {
    let caught: unknown;
    try {
      parseReply(z.strictObject({ id: z.string() }), 'the case', { id: 7 });
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(ReplyMismatchError);
    expect((caught as ReplyMismatchError).details).toContain('id');
    const words = describeError(caught);
    expect(words).toContain("server's reply was not what this page expects");
    expect(words).not.toContain('id:');
  });
});
