import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatSelectModule } from '@angular/material/select';

import { defaultChartGrid } from '../../../../../shared/engine/chart';
import type { RunSettings } from '../../../../../shared/engine/run-record';
import { defaultBasinGrid } from '../../../../../shared/engine/sweep';
import { Plot } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { rangeProblem } from '../range-check';
import { RunStrip } from '../run-strip';
import { ServerRun } from '../server-run';
import { StoredMark } from '../stored-mark';
import { toDisplay, unitLabelOf } from '../../../core/units/display-units';
import { cellMapPlot, OUTCOME_LEGEND } from './cell-map-plot';
import { OutcomeMapPanel } from './outcome-map-panel';
import { STABILITY_LEGEND } from './stability-scale';
import { stabilityChartPlot } from './stability-chart-plot';

/**
 * The Map tab: the stability chart over drive frequency and amplitude, the basin map over start angle and rate, and
 * the outcome map over any two case fields.
 */
@Component({
  selector: 'qp-map-tab',
  imports: [FormsModule, MatFormFieldModule, MatSelectModule, OutcomeMapPanel, Plot, RunStrip, ServerRun, StoredMark],
  templateUrl: './map-tab.html',
  styleUrl: '../tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MapTab {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly chartJob = this.workspace.chartJob;
  protected readonly basinJob = this.workspace.basinJob;
  protected readonly units = this.workspace.units;
  protected readonly chart = this.workspace.chart;
  protected readonly basin = this.workspace.basin;
  protected readonly chartStale = computed(() => this.workspace.isStale(this.chart()));
  protected readonly basinStale = computed(() => this.workspace.isStale(this.basin()));
  protected readonly chartCount = signal(60);
  protected readonly basinCount = signal(11);
  protected readonly chartLegend = STABILITY_LEGEND;
  protected readonly legend = OUTCOME_LEGEND;
  protected readonly vertical = computed(() => Math.abs(Math.sin(this.workspace.draft().drive.direction)) < 1e-12);

  protected readonly chartPlot = computed(() => {
    const c = this.chart()?.value;
    return c ? stabilityChartPlot(c, this.units()) : null;
  });

  protected readonly basinPlot = computed(() => {
    const b = this.basin()?.value;
    if (!b) return null;
    const units = this.units();
    const axis = (label: string, dimension: 'angle' | 'rate') => ({
      label, unit: unitLabelOf(dimension, units), toShown: (si: number) => toDisplay(si, dimension, units), log: false,
    });
    return cellMapPlot(b, axis('Start angle from upright', 'angle'), axis('Start rate', 'rate'));
  });

  protected readonly chartGrid = computed(() => defaultChartGrid(this.workspace.draft(), this.chartCount()));
  protected readonly basinGrid = computed(() => defaultBasinGrid(this.workspace.draft(), this.basinCount()));
  /** The chart solves no motion, so only the fixed limits of frequency and amplitude apply to its corners. */
  protected readonly chartProblem = computed(() => {
    const g = this.chartGrid();
    return rangeProblem(this.workspace.draft(), [g.x, g.y], this.units(), true);
  });
  protected readonly basinProblem = computed(() => {
    const g = this.basinGrid();
    return rangeProblem(this.workspace.draft(), [g.x, g.y], this.units());
  });

  protected readonly chartSettings = computed<RunSettings>(() => ({ kind: 'chart', grid: this.chartGrid() }));
  protected readonly basinSettings = computed<RunSettings>(() => ({ kind: 'basin', grid: this.basinGrid() }));

  protected runChart(): void {
    this.workspace.runChart(this.chartGrid());
  }

  protected runBasin(): void {
    this.workspace.runBasin(this.basinGrid());
  }
}
