import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatTableModule } from '@angular/material/table';

import type { RunView } from '../library/library-types';
import { verificationWords } from '../library/verification-words';
import { summaryRows } from '../../core/units/field-table';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';
import { RUN_KIND_LABELS } from '../../../../shared/case/display';

/** The run kinds as the tabs name them (one table with the case report). */
export { RUN_KIND_LABELS };

/** How many summary numbers a row shows; the recheck shows all of them. */
const HEADLINE_COUNT = 4;

const HEADLINE_KEYS = ['outcome', 'maxDeviation', 'slowFrequencyHz', 'marginPercent', 'uprightHolds', 'thresholds', 'holdingCells', 'cells'];

export function headlineNumbers(summary: RunView['summary']): string {
  const keys = Object.keys(summary);
  const ordered = [...HEADLINE_KEYS.filter((k) => k in summary), ...keys.filter((k) => !HEADLINE_KEYS.includes(k))];
  const headline = Object.fromEntries(ordered.slice(0, HEADLINE_COUNT).map((key) => [key, summary[key]]));
  return summaryRows(headline)
    .map((row) => `${row.label} ${row.value}`)
    .join(' · ');
}

/** The runs stored with a revision: kind, headline numbers, digest and engine version. */
@Component({
  selector: 'qp-stored-runs-table',
  imports: [ScrollRegion, DatePipe, MatTableModule],
  template: `
    @if (runs().length === 0) {
      <p class="none">No runs are stored with this revision.</p>
    } @else {
      <div class="scroll" qpScrollRegion="Table of stored runs">
        <table mat-table [dataSource]="rows()" class="runs-table">
          <ng-container matColumnDef="kind">
            <th mat-header-cell *matHeaderCellDef>Kind</th>
            <td mat-cell *matCellDef="let row" class="kind">{{ row.kind }}</td>
          </ng-container>
          <ng-container matColumnDef="summary">
            <th mat-header-cell *matHeaderCellDef>Summary</th>
            <td mat-cell *matCellDef="let row" class="summary">{{ row.headline }}</td>
          </ng-container>
          <ng-container matColumnDef="check">
            <th mat-header-cell *matHeaderCellDef>Server check</th>
            <td mat-cell *matCellDef="let row" class="check" [class]="row.check.tone">{{ row.check.text }}</td>
          </ng-container>
          <ng-container matColumnDef="digest">
            <th mat-header-cell *matHeaderCellDef>Result digest</th>
            <td mat-cell *matCellDef="let row"><code [attr.title]="row.run.resultDigest">{{ row.run.resultDigest.slice(0, 12) }}…</code></td>
          </ng-container>
          <ng-container matColumnDef="engine">
            <th mat-header-cell *matHeaderCellDef>Engine</th>
            <td mat-cell *matCellDef="let row">{{ row.run.engineVersion }}</td>
          </ng-container>
          <ng-container matColumnDef="stored">
            <th mat-header-cell *matHeaderCellDef>Stored</th>
            <td mat-cell *matCellDef="let row" class="when">
              {{ row.run.author?.name ?? '' }} {{ row.run.createdAt | date: 'short' }}
            </td>
          </ng-container>
          <tr mat-header-row *matHeaderRowDef="columns"></tr>
          <tr mat-row *matRowDef="let row; columns: columns"></tr>
        </table>
      </div>
    }
  `,
  styles: `
    .scroll { overflow-x: auto; }
    .runs-table { width: 100%; min-width: 640px; background: transparent; }
    .kind { font-weight: 500; }
    .summary { font-variant-numeric: tabular-nums; min-width: 16em; }
    .check { min-width: 9em; }
    .when { white-space: nowrap; }
    .check.ok { color: var(--mat-sys-primary); }
    .check.bad { color: var(--mat-sys-error); font-weight: 500; }
    .check.pending { color: var(--mat-sys-on-surface-variant); }
    code { font-size: 0.85em; }
    .none { color: var(--mat-sys-on-surface-variant); margin: 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StoredRunsTable {
  readonly runs = input.required<readonly RunView[]>();
  protected readonly columns = ['kind', 'summary', 'check', 'digest', 'engine', 'stored'];
  protected readonly rows = computed(() => this.runs().map((run) => ({ run, kind: RUN_KIND_LABELS[run.kind] ?? run.kind, headline: headlineNumbers(run.summary), check: verificationWords(run.verification) })));
}
