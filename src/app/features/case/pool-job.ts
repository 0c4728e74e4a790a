import { computed, signal } from '@angular/core';
import type { Observable, Subscription } from 'rxjs';

import type { PoolEvent } from '../../../../shared/compute/worker-pool';

/**
 * One cancellable computation on the worker pool, as signals: running, progress (0..1) and the last error. Starting
 * again cancels the previous run. Cancelling unsubscribes, which makes the pool drop queued chunks and stop its
 * busy workers.
 */
export class PoolJob<T> {
  private readonly runningState = signal(false);
  private readonly progressState = signal(0);
  private readonly errorState = signal<string | null>(null);
  private readonly cancelledState = signal(false);
  private subscription: Subscription | null = null;

  readonly running = this.runningState.asReadonly();
  readonly progress = this.progressState.asReadonly();
  readonly error = this.errorState.asReadonly();
  /** True after the user cancelled the last run (cleared when a new one starts). */
  readonly cancelled = this.cancelledState.asReadonly();
  readonly percent = computed(() => Math.round(this.progressState() * 100));

  start(events: Observable<PoolEvent<T>>, done: (value: T) => void): void {
    this.stop();
    this.runningState.set(true);
    this.progressState.set(0);
    this.errorState.set(null);
    this.cancelledState.set(false);
    this.subscription = events.subscribe({
      next: (event) => {
        if (event.type === 'progress') this.progressState.set(event.fraction);
        else {
          this.runningState.set(false);
          done(event.value);
        }
      },
      error: (error: unknown) => {
        this.runningState.set(false);
        this.errorState.set(`The computation failed: ${error instanceof Error ? error.message : String(error)}`);
      },
    });
  }

  cancel(): void {
    if (!this.runningState()) return;
    this.stop();
    this.cancelledState.set(true);
  }

  private stop(): void {
    this.subscription?.unsubscribe();
    this.subscription = null;
    this.runningState.set(false);
  }
}
