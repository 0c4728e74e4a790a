import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

import { fieldInfo, fieldLabel, formatFieldValue } from '../../core/units/field-table';
import { DEFAULT_UNITS, toDisplay } from '../../core/units/display-units';
import { formatNumber } from '../../core/units/format-number';
import type { SummaryValue } from '../library/library-types';

/** One compared number, from a rerun in this browser or from a recheck stored on the server. */
export interface ComparisonRow {
  readonly name: string;
  readonly stored: SummaryValue;
  readonly rerun: SummaryValue;
  readonly difference?: number | null;
  readonly tolerance: number | null;
  readonly match: boolean;
}

/** Compared numbers keep 9 significant digits: a recheck is about differences in the last digits. */
const COMPARED_DIGITS = 9;

function show(key: string, value: SummaryValue | undefined): string {
  return formatFieldValue(`summary.${key}`, value, DEFAULT_UNITS, COMPARED_DIGITS);
}

/** A difference or tolerance of a summary number in the number's display unit (the scale is linear). */
function showDifference(key: string, value: number): string {
  const dimension = fieldInfo(`summary.${key}`)?.dimension ?? 'plain';
  return formatNumber(toDisplay(value, dimension, DEFAULT_UNITS), 3);
}

function differenceOf(row: ComparisonRow): number | null {
  if (row.difference !== undefined) return row.difference;
  return typeof row.stored === 'number' && typeof row.rerun === 'number' ? Math.abs(row.rerun - row.stored) : null;
}

/** Name, stored, rerun, difference, tolerance and match for every summary number of a run. */
@Component({
  selector: 'qp-comparison-table',
  imports: [MatIconModule],
  template: `
    <div class="scroll">
      <table class="comparison">
        <thead>
          <tr>
            <th scope="col">Number</th>
            <th scope="col" class="num">Stored</th>
            <th scope="col" class="num">Rerun</th>
            <th scope="col" class="num">Difference</th>
            <th scope="col" class="num">Tolerance</th>
            <th scope="col">Match</th>
          </tr>
        </thead>
        <tbody>
          @for (row of shown(); track row.name) {
            <tr [class.mismatch]="!row.match">
              <th scope="row" class="name">{{ row.label }}</th>
              <td class="num">{{ row.stored }}</td>
              <td class="num">{{ row.rerun }}</td>
              <td class="num">{{ row.difference }}</td>
              <td class="num">{{ row.tolerance }}</td>
              <td class="match">
                <mat-icon aria-hidden="true">{{ row.match ? 'check_circle' : 'cancel' }}</mat-icon>
                {{ row.match ? 'yes' : 'no' }}
              </td>
            </tr>
          }
        </tbody>
      </table>
    </div>
  `,
  styles: `
    .scroll { overflow-x: auto; }
    .comparison { width: 100%; min-width: 560px; border-collapse: collapse; font-variant-numeric: tabular-nums; }
    th, td { padding: 6px 10px; border-bottom: 1px solid var(--mat-sys-outline-variant); text-align: start; }
    thead th { font: var(--mat-sys-label-large); color: var(--mat-sys-on-surface-variant); }
    .num { text-align: end; }
    .name { font-weight: 500; }
    .match { white-space: nowrap; }
    .match mat-icon { font-size: 18px; width: 18px; height: 18px; vertical-align: -4px; color: var(--mat-sys-primary); }
    .mismatch { background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
    .mismatch .match mat-icon { color: var(--mat-sys-error); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ComparisonTable {
  readonly rows = input.required<readonly ComparisonRow[]>();
  protected readonly shown = computed(() =>
    this.rows().map((row) => {
      const difference = differenceOf(row);
      return {
        name: row.name,
        label: fieldLabel(`summary.${row.name}`),
        stored: show(row.name, row.stored),
        rerun: show(row.name, row.rerun),
        difference: difference === null ? '—' : showDifference(row.name, difference),
        tolerance: row.tolerance === null ? 'equal' : `± ${showDifference(row.name, row.tolerance)}`,
        match: row.match,
      };
    }),
  );
}
