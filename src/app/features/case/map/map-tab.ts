import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatSelectModule } from '@angular/material/select';

import { defaultChartGrid } from '../../../../../shared/engine/chart';
import type { RunSettings } from '../../../../../shared/engine/run-record';
import { defaultBasinGrid } from '../../../../../shared/engine/sweep';
import { Plot, type PlotCsv, type PlotSpec } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { rangeProblem } from '../range-check';
import { RunStrip } from '../run-strip';
import { ServerRun } from '../server-run';
import { StoredMark } from '../stored-mark';
import { OUTCOME_COLOURS, OUTCOME_WORDS, outcomeWords } from '../../../../../shared/case/display';
import { toDisplay, unitLabelOf } from '../../../core/units/display-units';
import { STABILITY_LEGEND } from './stability-scale';
import { stabilityChartPlot } from './stability-chart-plot';

const OUTCOMES = Object.keys(OUTCOME_WORDS);

/** A stepped colour scale, one band per outcome index (z from -0.5 to n - 0.5). */
function outcomeColorscale(): Array<[number, string]> {
  const n = OUTCOMES.length;
  const scale: Array<[number, string]> = [];
  OUTCOMES.forEach((o, i) => {
    scale.push([i / n, OUTCOME_COLOURS[o]], [(i + 1) / n, OUTCOME_COLOURS[o]]);
  });
  return scale;
}

/** The Map tab: the stability chart over drive frequency and amplitude, and the basin map over start angle and rate. */
@Component({
  selector: 'qp-map-tab',
  imports: [FormsModule, MatFormFieldModule, MatSelectModule, Plot, RunStrip, ServerRun, StoredMark],
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
  protected readonly legend = OUTCOMES.map((o) => ({ key: o, label: OUTCOME_WORDS[o], color: OUTCOME_COLOURS[o] }));
  protected readonly vertical = computed(() => Math.abs(Math.sin(this.workspace.draft().drive.direction)) < 1e-12);

  protected readonly chartPlot = computed(() => {
    const c = this.chart()?.value;
    return c ? stabilityChartPlot(c, this.units()) : null;
  });

  protected readonly basinPlot = computed(() => {
    const b = this.basin()?.value;
    if (!b) return null;
    const units = this.units();
    const angleUnit = unitLabelOf('angle', units);
    const rateUnit = unitLabelOf('rate', units);
    const x = Array.from(b.xValues, (v) => toDisplay(v, 'angle', units));
    const y = Array.from(b.yValues, (v) => toDisplay(v, 'rate', units));
    const nx = x.length;
    const z: Array<Array<number | null>> = [];
    const text: string[][] = [];
    for (let j = 0; j < y.length; j++) {
      const row: Array<number | null> = [];
      const words: string[] = [];
      for (let i = 0; i < nx; i++) {
        const cell = b.cells[j * nx + i];
        row.push(cell?.outcome ? OUTCOMES.indexOf(cell.outcome) : null);
        words.push(outcomeWords(cell?.outcome));
      }
      z.push(row);
      text.push(words);
    }
    const data: PlotSpec[] = [
      {
        type: 'heatmap', x, y, z, text, zmin: -0.5, zmax: OUTCOMES.length - 0.5, colorscale: outcomeColorscale(), showscale: false,
        hovertemplate: `start %{x:.4g} ${angleUnit}, %{y:.4g} ${rateUnit}<br>%{text}<extra></extra>`,
      },
    ];
    const layout: PlotSpec = {
      xaxis: { title: { text: `start angle from upright (${angleUnit})` } },
      yaxis: { title: { text: `start rate (${rateUnit})` } },
    };
    const rows: Array<Array<number | string>> = [];
    for (let j = 0; j < y.length; j++) for (let i = 0; i < nx; i++) rows.push([x[i], y[j], text[j][i]]);
    const csv: PlotCsv = {
      columns: [{ header: 'start angle', unit: angleUnit }, { header: 'start rate', unit: rateUnit }, { header: 'outcome' }],
      rows,
    };
    return { data, layout, csv };
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
