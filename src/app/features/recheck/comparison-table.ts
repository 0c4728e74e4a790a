import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

import { type ComparisonRow, groupComparison, runKindWords } from './comparison-groups';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

export type { ComparisonRow } from './comparison-groups';


/**
 * One run's comparison, grouped: a summary line (digest, how many numbers differ), the tolerance once, the numbers
 * that differ first with labels and units as in the tabs, and a sweep's points as a compact table in point order,
 * collapsed when every point agrees.
 */
@Component({
  selector: 'qp-comparison-table',
  imports: [ScrollRegion, MatIconModule],
  template: `
    @let g = group();
    @if (showSummary()) {
    <p class="run-summary" [class.bad]="g.differing > 0 || digestMatch() === false" data-testid="run-summary">
      <strong>{{ kindWords() }}</strong>
      @if (digestMatch() !== null) {
        · {{ digestMatch() ? 'same digest' : 'digest differs' }}
      }
      · @if (g.differing === 0) { every number agrees } @else { {{ g.differing }} of {{ g.total }} numbers differ }
    </p>
    }
    @if (g.tolerance; as tolerance) {
      <p class="tolerance">Tolerance: {{ tolerance }}</p>
    }
    @if (g.rows.length > 0) {
      <div class="scroll" [qpScrollRegion]="'Compared numbers' + (kindWords() ? ': ' + kindWords() : '')">
        <table class="comparison">
          <thead>
            <tr>
              <th scope="col">Result</th>
              <th scope="col" class="num">Stored</th>
              <th scope="col" class="num">Rerun</th>
              <th scope="col" class="num">Difference</th>
              <th scope="col">Agrees</th>
            </tr>
          </thead>
          <tbody>
            @for (row of g.rows; track row.key) {
              <tr [class.mismatch]="!row.match">
                <th scope="row" class="name">{{ row.label }}</th>
                <td class="num">{{ row.stored }}</td>
                <td class="num">{{ row.rerun }}</td>
                <td class="num">{{ row.difference }}</td>
                <td class="match">
                  <mat-icon aria-hidden="true">{{ row.match ? 'check_circle' : 'cancel' }}</mat-icon>
                  {{ row.match ? 'yes' : 'no' }}
                </td>
              </tr>
            }
          </tbody>
        </table>
      </div>
    }
    @if (g.points.length > 0) {
      <details class="points" [open]="g.pointsDiffering > 0">
        <summary>
          Sweep points: {{ g.points.length }}
          @if (g.pointsDiffering === 0) { — all agree } @else { — {{ g.pointsDiffering }} differ }
        </summary>
        <div class="scroll" [qpScrollRegion]="'Compared sweep points' + (kindWords() ? ': ' + kindWords() : '')">
          <table class="comparison compact">
            <thead>
              <tr>
                <th scope="col" class="num">Point</th>
                <th scope="col">Outcome stored</th>
                <th scope="col">Outcome rerun</th>
                <th scope="col" class="num">Largest |μ| stored</th>
                <th scope="col" class="num">Largest |μ| rerun</th>
                <th scope="col">Agrees</th>
              </tr>
            </thead>
            <tbody>
              @for (p of g.points; track p.point) {
                <tr [class.mismatch]="!p.match">
                  <th scope="row" class="num">{{ p.point }}</th>
                  <td>{{ p.outcomeStored }}</td>
                  <td>{{ p.outcomeRerun }}</td>
                  <td class="num">{{ p.multiplierStored }}</td>
                  <td class="num">{{ p.multiplierRerun }}</td>
                  <td class="match">{{ p.match ? 'yes' : 'no' }}</td>
                </tr>
              }
            </tbody>
          </table>
        </div>
      </details>
    }
  `,
  styles: `
    :host { display: flex; flex-direction: column; gap: 6px; }
    .run-summary { margin: 0; }
    .run-summary.bad { color: var(--mat-sys-error); }
    .tolerance { margin: 0; color: var(--mat-sys-on-surface-variant); font: var(--mat-sys-body-small); }
    .scroll { overflow-x: auto; }
    .comparison { width: 100%; border-collapse: collapse; font-variant-numeric: tabular-nums; }
    th, td { padding: 6px 10px; border-bottom: 1px solid var(--mat-sys-outline-variant); text-align: start; }
    .compact th, .compact td { padding: 2px 8px; }
    thead th { font: var(--mat-sys-label-large); color: var(--mat-sys-on-surface-variant); }
    .num { text-align: end; }
    .name { font-weight: 500; }
    .match { white-space: nowrap; }
    .match mat-icon { font-size: 18px; width: 18px; height: 18px; vertical-align: -4px; color: var(--mat-sys-primary); }
    .mismatch { background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
    .mismatch .match mat-icon { color: var(--mat-sys-error); }
    .points summary { cursor: pointer; padding: 4px 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ComparisonTable {
  readonly rows = input.required<readonly ComparisonRow[]>();
  /** The run's kind, for the summary line. */
  readonly kind = input<string | null>(null);
  /** Whether the result digests are equal; null when not known here. */
  readonly digestMatch = input<boolean | null>(null);
  /** The sweep's field when the rows leave it out (threshold values take its unit). */
  readonly sweptField = input<string | null>(null);
  /** Off where the page already says how the run compares (the server's verification lists only the differences). */
  readonly showSummary = input(true);

  protected readonly group = computed(() => groupComparison(this.rows(), this.sweptField()));
  protected readonly kindWords = computed(() => runKindWords(this.kind()));
}
