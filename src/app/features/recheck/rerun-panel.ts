import { ChangeDetectionStrategy, Component, DestroyRef, computed, inject, input, output, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatExpansionModule } from '@angular/material/expansion';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { EMPTY, Observable, Subscription, catchError, concat, defer, ignoreElements, tap } from 'rxjs';

import type { CaseParams } from '../../../../shared/case/case-schema';
import { ENGINE_VERSION } from '../../../../shared/engine/version';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import type { RunView } from '../library/library-types';
import { ComparisonTable } from './comparison-table';
import { compareRun, type RunComparison } from '../../../../shared/engine/compare-runs';
import { rerunInPool, runSettingsOf } from './rerun';

type RowState = 'waiting' | 'running' | 'done' | 'failed';

interface RerunRow {
  readonly run: RunView;
  readonly state: RowState;
  readonly progress: number;
  readonly comparison: RunComparison | null;
  readonly error: string | null;
}

/**
 * Reruns every stored run of a revision in this browser's engine workers, one after the other, and shows each
 * comparison as soon as it is ready. Emits all comparisons once every run has been rerun.
 */
@Component({
  selector: 'qp-rerun-panel',
  imports: [MatButtonModule, MatExpansionModule, MatIconModule, MatProgressBarModule, ComparisonTable],
  template: `
    <div class="bar">
      <button matButton="filled" type="button" class="rerun-button" (click)="rerunAll()" [disabled]="running() || runnable().length === 0">
        <mat-icon>replay</mat-icon>
        {{ finished() ? 'Rerun again' : 'Rerun ' + runnable().length + (runnable().length === 1 ? ' run' : ' runs') }}
      </button>
      <span class="engine">Engine {{ engineVersion }} in this browser</span>
      @if (running()) {
        <button matButton type="button" (click)="cancel()">Cancel</button>
      }
    </div>
    @if (!params()) {
      <p class="warn" role="alert">The stored parameters of this revision no longer validate, so its runs cannot be rerun.</p>
    }
    @if (rows().length === 0) {
      <p class="none">This revision has no stored runs to rerun.</p>
    }
    <mat-accordion multi>
      @for (row of rows(); track row.run.id) {
        <mat-expansion-panel [expanded]="row.comparison !== null && !row.comparison.match" class="run-panel">
          <mat-expansion-panel-header>
            <mat-panel-title class="run-title">{{ runLabel(row.run.kind) }}</mat-panel-title>
            <mat-panel-description class="run-state" [class]="'state-' + verdictClass(row)">
              {{ verdictText(row) }}
            </mat-panel-description>
          </mat-expansion-panel-header>
          @if (row.state === 'running') {
            <mat-progress-bar mode="determinate" [value]="row.progress * 100" [attr.aria-label]="'Rerunning the ' + row.run.kind + ' run'" />
          }
          @if (row.error) {
            <p class="warn">{{ row.error }}</p>
          }
          @if (row.comparison; as c) {
            <p class="digests">
              Result digest: stored <code>{{ c.storedDigest.slice(0, 16) }}…</code>, rerun
              <code>{{ c.rerunDigest.slice(0, 16) }}…</code> —
              <strong>{{ c.digestMatch ? 'same digest' : 'different digest' }}</strong>.
              Engine {{ c.engineVersionStored }} stored it; {{ c.engineVersionNow }} reran it.
            </p>
            <qp-comparison-table [rows]="c.numbers" [kind]="c.kind" [digestMatch]="c.digestMatch" />
          }
        </mat-expansion-panel>
      }
    </mat-accordion>
  `,
  styles: `
    :host { display: flex; flex-direction: column; gap: 12px; }
    .bar { display: flex; flex-wrap: wrap; align-items: center; gap: 12px; }
    .engine { color: var(--mat-sys-on-surface-variant); font: var(--mat-sys-body-small); }
    .run-title { font-weight: 500; }
    .run-state { justify-content: flex-end; }
    .state-match { color: var(--mat-sys-primary); }
    .state-mismatch, .state-failed { color: var(--mat-sys-error); }
    .digests { margin: 8px 0; overflow-wrap: anywhere; }
    .warn { color: var(--mat-sys-error); margin: 0; }
    .none { color: var(--mat-sys-on-surface-variant); margin: 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RerunPanel {
  private readonly pool = inject(ENGINE_POOL);

  readonly params = input.required<CaseParams | null>();
  readonly runs = input.required<readonly RunView[]>();
  /** All comparisons, once every run has been rerun (failed runs are left out). */
  readonly compared = output<RunComparison[]>();

  protected readonly engineVersion = ENGINE_VERSION;
  private readonly state = signal<ReadonlyMap<string, RerunRow>>(new Map());
  protected readonly running = signal(false);
  protected readonly finished = signal(false);
  protected readonly runnable = computed(() => (this.params() ? this.runs() : []));
  protected readonly rows = computed<RerunRow[]>(() =>
    this.runs().map(
      (run) => this.state().get(run.id) ?? { run, state: 'waiting', progress: 0, comparison: null, error: null },
    ),
  );
  private subscription: Subscription | null = null;

  constructor() {
    inject(DestroyRef).onDestroy(() => this.subscription?.unsubscribe());
  }

  protected runLabel(kind: string): string {
    return `${kind.charAt(0).toUpperCase()}${kind.slice(1)} run`;
  }

  protected verdictClass(row: RerunRow): string {
    if (row.state === 'failed') return 'failed';
    if (!row.comparison) return row.state;
    return row.comparison.match ? 'match' : 'mismatch';
  }

  protected verdictText(row: RerunRow): string {
    if (row.state === 'waiting') return 'not rerun yet';
    if (row.state === 'running') return `rerunning… ${Math.round(row.progress * 100)} %`;
    if (row.state === 'failed' || !row.comparison) return 'could not rerun';
    const c = row.comparison;
    const off = c.numbers.filter((n) => !n.match).length;
    if (c.match) return c.digestMatch ? 'same numbers, same digest' : 'same numbers (newer engine, digest differs)';
    return off > 0 ? `${off} number${off === 1 ? '' : 's'} outside tolerance` : 'numbers agree, digest differs';
  }

  protected rerunAll(): void {
    const params = this.params();
    if (!params) return;
    this.subscription?.unsubscribe();
    const runs = this.runnable();
    const results: RunComparison[] = [];
    this.state.set(new Map());
    this.running.set(true);
    this.finished.set(false);
    this.subscription = concat(...runs.map((run) => this.rerunOne(params, run, results))).subscribe({
      complete: () => {
        this.running.set(false);
        this.finished.set(true);
        this.compared.emit(results);
      },
    });
  }

  protected cancel(): void {
    this.subscription?.unsubscribe();
    this.subscription = null;
    this.running.set(false);
    this.state.update((rows) => new Map([...rows].filter(([, row]) => row.state !== 'running')));
  }

  private rerunOne(params: CaseParams, run: RunView, results: RunComparison[]): Observable<never> {
    return defer(() => {
      const settings = runSettingsOf(run.kind, run.settings);
      if (!settings) {
        this.put(run, { state: 'failed', error: `This engine cannot rerun a "${run.kind}" run with these settings.` });
        return EMPTY;
      }
      this.put(run, { state: 'running' });
      return rerunInPool(this.pool, params, settings).pipe(
        tap({
          next: (event) => {
            if (event.type === 'progress') {
              this.put(run, { state: 'running', progress: event.fraction });
            } else {
              const comparison = compareRun(run, event.value);
              results.push(comparison);
              this.put(run, { state: 'done', progress: 1, comparison });
            }
          },
        }),
        ignoreElements(),
      );
    }).pipe(
      tap({
        error: (error: unknown) =>
          this.put(run, { state: 'failed', error: `The rerun failed: ${error instanceof Error ? error.message : String(error)}` }),
      }),
      // A failed run is shown on its row; the remaining runs still rerun.
      catchError(() => EMPTY),
    );
  }

  private put(run: RunView, change: Partial<Omit<RerunRow, 'run'>>): void {
    this.state.update((rows) => {
      const before = rows.get(run.id) ?? { run, state: 'waiting' as const, progress: 0, comparison: null, error: null };
      return new Map(rows).set(run.id, { ...before, ...change });
    });
  }
}
