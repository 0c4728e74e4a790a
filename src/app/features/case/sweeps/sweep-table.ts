import { ChangeDetectionStrategy, Component, computed, effect, input, viewChild } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatSort, MatSortModule } from '@angular/material/sort';
import { MatTableDataSource, MatTableModule } from '@angular/material/table';

import type { SweepPoint } from '../../../../../shared/engine/sweep';
import { downloadText, toCsv, type CsvColumn, type CsvCell } from '../../../ui/csv';
import { outcomeWords } from '../../../../../shared/case/display';
import { formatNumber } from '../../../core/units/format-number';
import { toDisplay, unitLabelOf, type Dimension, type DisplayUnits } from '../../../core/units/display-units';
import { ScrollRegion } from '../../../ui/scroll-region/scroll-region';

/** A sweep point in display units, one table row. */
export interface SweepRow {
  readonly index: number;
  readonly value: number;
  readonly outcome: string;
  readonly slowFrequencyHz: number | null;
  readonly meanAngle: number | null;
  readonly maxDeviation: number | null;
  readonly maxMultiplier: number | null;
}

/** Rows of a sweep in display units. */
export function sweepRows(points: readonly SweepPoint[], dimension: Dimension, units: DisplayUnits): SweepRow[] {
  const angle = (v: number | null) => (v === null ? null : toDisplay(v, 'angle', units));
  return points.map((p) => ({
    index: p.index,
    value: toDisplay(p.value, dimension, units),
    outcome: outcomeWords(p.outcome),
    slowFrequencyHz: p.slowFrequencyHz,
    meanAngle: angle(p.meanAngle),
    maxDeviation: angle(p.maxDeviation),
    maxMultiplier: p.maxMultiplier,
  }));
}

/** CSV of a sweep's points, units in the header. */
export function sweepCsv(rows: readonly SweepRow[], fieldLabel: string, fieldUnit: string, units: DisplayUnits): string {
  const angle = unitLabelOf('angle', units);
  const columns: CsvColumn[] = [
    { header: 'point' },
    { header: fieldLabel, unit: fieldUnit || undefined },
    { header: 'outcome' },
    { header: 'slow frequency', unit: 'Hz' },
    { header: 'mean angle', unit: angle },
    { header: 'largest deviation', unit: angle },
    { header: 'largest |multiplier|' },
  ];
  const data: CsvCell[][] = rows.map((r) => [r.index, r.value, r.outcome, r.slowFrequencyHz, r.meanAngle, r.maxDeviation, r.maxMultiplier]);
  return toCsv(columns, data);
}

/** The points of a sweep in a sortable table, with CSV export. */
@Component({
  selector: 'qp-sweep-table',
  imports: [ScrollRegion, MatTableModule, MatSortModule, MatButtonModule, MatIconModule],
  template: `
    <div class="table-head">
      <h2>Points</h2>
      <button matButton type="button" (click)="exportCsv()" data-testid="sweep-csv"><mat-icon>download</mat-icon> CSV</button>
    </div>
    <div class="table-scroll" qpScrollRegion="Sweep points">
      <table mat-table [dataSource]="dataSource" matSort aria-label="Sweep points">
        <ng-container matColumnDef="index">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>#</th>
          <td mat-cell *matCellDef="let row">{{ row.index }}</td>
        </ng-container>
        <ng-container matColumnDef="value">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>{{ fieldLabel() }}{{ fieldUnit() ? ' (' + fieldUnit() + ')' : '' }}</th>
          <td mat-cell *matCellDef="let row">{{ fmt(row.value, 6) }}</td>
        </ng-container>
        <ng-container matColumnDef="outcome">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>Outcome</th>
          <td mat-cell *matCellDef="let row">{{ row.outcome }}</td>
        </ng-container>
        <ng-container matColumnDef="slowFrequencyHz">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>Slow frequency (Hz)</th>
          <td mat-cell *matCellDef="let row">{{ fmt(row.slowFrequencyHz) }}</td>
        </ng-container>
        <ng-container matColumnDef="meanAngle">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>Mean angle ({{ angleUnit() }})</th>
          <td mat-cell *matCellDef="let row">{{ fmt(row.meanAngle) }}</td>
        </ng-container>
        <ng-container matColumnDef="maxDeviation">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>Largest deviation ({{ angleUnit() }})</th>
          <td mat-cell *matCellDef="let row">{{ fmt(row.maxDeviation) }}</td>
        </ng-container>
        <ng-container matColumnDef="maxMultiplier">
          <th mat-header-cell *matHeaderCellDef mat-sort-header>Largest |μ| (1)</th>
          <td mat-cell *matCellDef="let row">{{ fmt(row.maxMultiplier, 5) }}</td>
        </ng-container>
        <tr mat-header-row *matHeaderRowDef="columns; sticky: true"></tr>
        <tr mat-row *matRowDef="let row; columns: columns"></tr>
      </table>
    </div>
  `,
  styles: `
    :host { display: block; min-width: 0; }
    .table-head { display: flex; align-items: center; justify-content: space-between; }
    h2 { font: var(--mat-sys-title-medium); margin: 0; }
    .table-scroll { overflow: auto; max-height: 480px; }
    table { width: 100%; font-variant-numeric: tabular-nums; }
    .mat-mdc-cell, .mat-mdc-header-cell { padding: 0 8px; white-space: nowrap; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SweepTable {
  private readonly sort = viewChild(MatSort);

  readonly points = input.required<readonly SweepPoint[]>();
  readonly fieldLabel = input.required<string>();
  readonly dimension = input<Dimension>('plain');
  /** Unit label of the swept field when it is not one of the display dimensions (e.g. kg). */
  readonly plainUnit = input('');
  readonly units = input.required<DisplayUnits>();
  readonly fileName = input('sweep.csv');

  protected readonly columns = ['index', 'value', 'outcome', 'slowFrequencyHz', 'meanAngle', 'maxDeviation', 'maxMultiplier'];
  protected readonly dataSource = new MatTableDataSource<SweepRow>([]);
  protected readonly rows = computed(() => sweepRows(this.points(), this.dimension(), this.units()));
  protected readonly fieldUnit = computed(() => (this.dimension() === 'plain' ? this.plainUnit() : unitLabelOf(this.dimension(), this.units())));
  protected readonly angleUnit = computed(() => unitLabelOf('angle', this.units()));

  constructor() {
    effect(() => {
      this.dataSource.data = this.rows();
    });
    effect(() => {
      const sort = this.sort();
      if (sort) this.dataSource.sort = sort;
    });
  }

  protected fmt(value: number | null, digits = 4): string {
    return formatNumber(value, digits);
  }

  /** The CSV text of the points in sweep order. */
  csvText(): string {
    return sweepCsv(this.rows(), this.fieldLabel(), this.fieldUnit(), this.units());
  }

  protected exportCsv(): void {
    downloadText(this.fileName(), this.csvText());
  }
}
