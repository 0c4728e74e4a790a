import { describe, expect, it } from 'vitest';
import { SignInBackoff } from './sign-in-backoff';

function clocked() {
  let t = 1_000_000;
  const backoff = new SignInBackoff({ freeFailures: 3, baseDelayMs: 1_000, maxDelayMs: 8_000, forgetAfterMs: 60_000 }, () => t);
  return { backoff, advance: (ms: number) => (t += ms) };
}

describe('SignInBackoff', () => {
  it('lets the free failures through, then doubles the wait per failure up to the cap', () => {
    const { backoff, advance } = clocked();
    const waits: number[] = [];
    for (let i = 0; i < 8; i++) {
      backoff.recordFailure('a@x.test');
      const wait = backoff.waitMs('a@x.test');
      waits.push(wait);
      advance(wait);
    }
    expect(waits).toEqual([0, 0, 0, 1_000, 2_000, 4_000, 8_000, 8_000]);
  });

  it('counts each account on its own', () => {
    const { backoff } = clocked();
    for (let i = 0; i < 4; i++) backoff.recordFailure('a@x.test');
    expect(backoff.waitMs('a@x.test')).toBe(1_000);
    expect(backoff.waitMs('b@x.test')).toBe(0);
  });

  it('clears the count on success', () => {
    const { backoff, advance } = clocked();
    for (let i = 0; i < 5; i++) backoff.recordFailure('a@x.test');
    advance(backoff.waitMs('a@x.test'));
    backoff.recordSuccess('a@x.test');
    for (let i = 0; i < 3; i++) backoff.recordFailure('a@x.test');
    expect(backoff.waitMs('a@x.test')).toBe(0);
  });

  it('forgets old failures, so a long-past attack costs the owner nothing', () => {
    const { backoff, advance } = clocked();
    for (let i = 0; i < 10; i++) backoff.recordFailure('a@x.test');
    expect(backoff.waitMs('a@x.test')).toBe(8_000);
    advance(60_001);
    expect(backoff.waitMs('a@x.test')).toBe(0);
    backoff.recordFailure('a@x.test');
    expect(backoff.waitMs('a@x.test')).toBe(0);
  });

  it('never blocks longer than the cap after the last failure', () => {
    const { backoff, advance } = clocked();
    for (let i = 0; i < 100; i++) backoff.recordFailure('a@x.test');
    expect(backoff.waitMs('a@x.test')).toBe(8_000);
    advance(8_000);
    expect(backoff.waitMs('a@x.test')).toBe(0);
  });
});
