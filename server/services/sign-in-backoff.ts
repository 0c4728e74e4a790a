/**
 * Per-account sign-in back-off, beside the per-address limit: after `freeFailures` wrong passwords for one e-mail
 * address, each further failure makes that account wait base, 2 × base, 4 × base, ... up to `maxDelayMs` before
 * the next attempt is even checked. A success clears the count, and so do `forgetAfterMs` without a failure.
 *
 * The cap bounds how long someone who knows an address can keep its owner out: at most `maxDelayMs` after their
 * last guess, while they guess no faster than one password per `maxDelayMs`. Unknown addresses are counted the same
 * way, so the limiter does not reveal which accounts exist. State lives in this process (like the address limit).
 */
export interface BackoffPolicy {
  freeFailures: number;
  baseDelayMs: number;
  maxDelayMs: number;
  forgetAfterMs: number;
}

interface Account {
  failures: number;
  lastFailureAt: number;
  blockedUntil: number;
}

/** Above this many tracked addresses, stale ones are dropped first, then the oldest. */
const MAX_TRACKED = 10_000;

export class SignInBackoff {
  private readonly accounts = new Map<string, Account>();

  constructor(
    private readonly policy: BackoffPolicy,
    private readonly now: () => number = Date.now,
  ) {}

  /** Milliseconds this account must still wait before an attempt is checked; 0 when it may try now. */
  waitMs(email: string): number {
    const account = this.current(email);
    return account ? Math.max(0, account.blockedUntil - this.now()) : 0;
  }

  recordFailure(email: string): void {
    const now = this.now();
    const failures = (this.current(email)?.failures ?? 0) + 1;
    const over = failures - this.policy.freeFailures;
    const delay = over > 0 ? Math.min(this.policy.baseDelayMs * 2 ** Math.min(over - 1, 30), this.policy.maxDelayMs) : 0;
    this.accounts.delete(email);
    this.accounts.set(email, { failures, lastFailureAt: now, blockedUntil: now + delay });
    if (this.accounts.size > MAX_TRACKED) this.prune(now);
  }

  recordSuccess(email: string): void {
    this.accounts.delete(email);
  }

  private current(email: string): Account | undefined {
    const account = this.accounts.get(email);
    if (account && this.now() - account.lastFailureAt > Math.max(this.policy.forgetAfterMs, account.blockedUntil - account.lastFailureAt)) {
      this.accounts.delete(email);
      return undefined;
    }
    return account;
  }

  private prune(now: number): void {
    for (const [email, account] of this.accounts) {
      if (now - account.lastFailureAt > this.policy.forgetAfterMs) this.accounts.delete(email);
    }
    // Map order is insertion order, and a failure re-inserts: the first keys are the least recently failed.
    for (const email of this.accounts.keys()) {
      if (this.accounts.size <= MAX_TRACKED) break;
      this.accounts.delete(email);
    }
  }
}
