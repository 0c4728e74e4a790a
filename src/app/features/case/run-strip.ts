import { ChangeDetectionStrategy, Component, computed, inject, input, output, type Signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';

import { fieldLabel } from '../../core/units/field-table';
import { CaseWorkspace } from './case-workspace';
import { formPathOf, readableIssue } from './rig/rig-form';

/** What the strip needs of a job (a PoolJob of any result type). */
export interface RunStripJob {
  readonly running: Signal<boolean>;
  readonly percent: Signal<number>;
  readonly cancelled: Signal<boolean>;
  readonly error: Signal<string | null>;
  cancel(): void;
}

/**
 * The run controls of a case tab: the run button, progress with one text, cancel, the error, and the note that
 * the results belong to earlier inputs. It refuses to run while a Rig field is invalid (a run must never use other
 * values than those shown), says which field and why, and links to it.
 */
@Component({
  selector: 'qp-run-strip',
  imports: [MatButtonModule, MatIconModule, MatProgressBarModule, RouterLink],
  template: `
    <div class="run-bar">
      <button matButton="filled" type="button" (click)="run.emit()" [disabled]="job().running() || refusal() !== null" [attr.data-testid]="testId()">
        <mat-icon>{{ icon() }}</mat-icon> {{ label() }}
      </button>
      @if (job().running()) {
        <button matButton type="button" (click)="job().cancel()" [attr.data-testid]="testId() + '-cancel'">Cancel</button>
        @if (indeterminate() || finishing()) {
          <mat-progress-bar mode="indeterminate" [attr.aria-label]="label() + ': running'" />
          @if (finishing()) {
            <span class="percent" [attr.data-testid]="testId() + '-progress'">{{ progressText() }}</span>
          }
        } @else {
          <mat-progress-bar mode="determinate" [value]="percent()" [attr.aria-label]="label() + ': progress'" />
          <span class="percent" [attr.data-testid]="testId() + '-progress'">{{ progressText() }}</span>
        }
      }
      @if (job().cancelled()) {
        <span class="note" [attr.data-testid]="testId() + '-cancelled'">Cancelled.</span>
      }
    </div>
    @if (invalidField(); as f) {
      <p class="refusal" role="status" data-testid="run-refusal">
        <mat-icon aria-hidden="true">block</mat-icon>
        <span>
          Not run while a Rig field is invalid. <strong>{{ f.label }}</strong>: {{ f.message }}
          @if (f.others.length > 0) { Also to fix: {{ f.others.join(', ') }}. }
        </span>
        @if (f.formPath) {
          <a matButton [routerLink]="['..', 'rig']" (click)="workspace.requestFocus(f.formPath)" data-testid="go-to-field">Go to {{ f.label }}</a>
        }
      </p>
    } @else if (blocked(); as reason) {
      <p class="refusal" role="status" data-testid="run-refusal"><mat-icon aria-hidden="true">block</mat-icon><span>{{ reason }}</span></p>
    }
    @if (job().error(); as error) {
      <p class="error" role="alert">{{ error }}</p>
    }
    @if (stale() && !job().running()) {
      <p class="note stale">{{ staleText() }}</p>
    }
  `,
  styles: `
    :host { display: grid; gap: 8px; min-width: 0; }
    .run-bar { display: flex; flex-wrap: wrap; align-items: center; gap: 8px 12px; }
    .run-bar mat-progress-bar { flex: 1 1 160px; max-width: 480px; }
    .percent { font-variant-numeric: tabular-nums; min-width: 3.5em; }
    .note { color: var(--mat-sys-on-surface-variant); margin: 0; }
    .stale { padding: 6px 10px; border-radius: 8px; background: var(--mat-sys-tertiary-container); color: var(--mat-sys-on-tertiary-container); }
    .error, .refusal { margin: 0; padding: 6px 10px; border-radius: 8px; background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
    .refusal { display: flex; flex-wrap: wrap; align-items: center; gap: 4px 8px; }
    .refusal span { flex: 1 1 240px; }
    .refusal a { color: inherit; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RunStrip {
  protected readonly workspace = inject(CaseWorkspace);

  readonly job = input.required<RunStripJob>();
  readonly label = input.required<string>();
  readonly icon = input('play_arrow');
  readonly testId = input.required<string>();
  /** The shown results were computed for other inputs than the form's. */
  readonly stale = input(false);
  readonly staleText = input('These results belong to earlier inputs; run again to update them.');
  /** A reason of the tab's own not to run (an invalid sweep range), shown when the Rig form is valid. */
  readonly blocked = input<string | null>(null);
  /**
   * Progress in counted steps ("20 of 49 points"); the bar follows the same count. `after` names work that follows
   * the last step (refining thresholds), shown with an indeterminate bar.
   */
  readonly steps = input<{ readonly done: number; readonly total: number; readonly noun: string; readonly after?: string } | null>(null);
  /** No progress is known (one Floquet analysis): an indeterminate bar. */
  readonly indeterminate = input(false);

  readonly run = output<void>();

  /** The first invalid Rig field, in the user's words and unit, with the form path to focus. */
  protected readonly invalidField = computed(() => {
    const issues = this.workspace.issues();
    const first = issues[0];
    if (!first) return null;
    const formPath = first.field === '' || this.workspace.form.controlFor(first.field) === null ? null : formPathOf(first.field);
    const message = readableIssue(first, this.workspace.units());
    return {
      label: first.field === '' ? 'The case' : fieldLabel(first.field),
      message: message.charAt(0).toLowerCase() + message.slice(1),
      formPath,
      // Other fields by name (a field can carry several issues; the case-wide ones are "the case").
      others: [...new Set(issues.slice(1).map((i) => (i.field === '' ? 'the case' : fieldLabel(i.field))))].filter(
        (label) => label !== (first.field === '' ? 'the case' : fieldLabel(first.field)),
      ),
    };
  });

  /** Why the button is off, or null. */
  protected readonly refusal = computed(() => (this.invalidField() !== null ? 'invalid' : this.blocked()));

  protected readonly percent = computed(() => {
    const steps = this.steps();
    return steps && steps.total > 0 ? Math.round((100 * steps.done) / steps.total) : this.job().percent();
  });

  /** Every counted step is done and the job finishes its `after` work. */
  protected readonly finishing = computed(() => {
    const steps = this.steps();
    return steps !== null && steps.after !== undefined && steps.total > 0 && steps.done >= steps.total;
  });

  protected readonly progressText = computed(() => {
    const steps = this.steps();
    if (!steps) return `${this.job().percent()} %`;
    if (this.finishing()) return `all ${steps.total} ${steps.noun} done; ${steps.after}`;
    return `${steps.done} of ${steps.total} ${steps.noun}`;
  });
}
