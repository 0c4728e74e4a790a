import { computed, signal } from '@angular/core';
import type { Observable, Subscription } from 'rxjs';


/** The events of a pool job: progress, partial results of chunked jobs, then the result. */
export type JobEvent<T, P> =
  | { type: 'progress'; fraction: number }
  | { type: 'partial'; value: P }
  | { type: 'result'; value: T };

/** A finished row range of a chunked chart or map. */
export interface RowsDone<V> {
  rowFrom: number;
  rowTo: number;
  values: V;
}

/**
 * One cancellable computation on the worker pool, as signals: running, progress (0..1) and the last error. Starting
 * again cancels the previous run. Cancelling unsubscribes, which makes the pool drop queued chunks and stop its
 * busy workers.
 */
export class PoolJob<T, P = never> {
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

  /** Runs `events`; `done` gets the result, `partial` (when given) each finished chunk of a chunked job. */
  start(events: Observable<JobEvent<T, P>>, done: (value: T) => void, partial?: (value: P) => void): void {
    this.stop();
    this.runningState.set(true);
    this.progressState.set(0);
    this.errorState.set(null);
    this.cancelledState.set(false);
    this.subscription = events.subscribe({
      next: (event) => {
        if (event.type === 'progress') this.progressState.set(event.fraction);
        else if (event.type === 'result') {
          this.runningState.set(false);
          done(event.value);
        } else partial?.(event.value);
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
