import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatSelectModule } from '@angular/material/select';

import { defaultChartGrid, type StabilityChart } from '../../../../../shared/engine/chart';
import { defaultBasinGrid } from '../../../../../shared/engine/sweep';
import { Plot, type PlotCsv, type PlotSpec } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { rangeProblem } from '../range-check';
import { RunStrip } from '../run-strip';
import { OUTCOME_COLOURS, OUTCOME_WORDS, outcomeWords } from '../../../../../shared/case/display';
import { formatIn, formatNumber } from '../../../core/units/format-number';
import { toDisplay, unitLabelOf, type DisplayUnits } from '../../../core/units/display-units';
import {
  MULTIPLIER_CLIP, STABILITY_COLORS, STABILITY_LEGEND, stabilityColorbar, stabilityColorscale, stabilityContour, stabilityLevel,
} from './stability-scale';

const OUTCOMES = Object.keys(OUTCOME_WORDS);

/** Ticks 1, 2, 5 x 10^k inside [lo, hi], written in full (Plotly's own log ticks abbreviate 20 as "2"). */
export function logTicks(lo: number, hi: number): { tickvals: number[]; ticktext: string[] } {
  const tickvals: number[] = [];
  const [a, b] = lo < hi ? [lo, hi] : [hi, lo];
  if (!(a > 0)) return { tickvals, ticktext: [] };
  for (let k = Math.floor(Math.log10(a)); k <= Math.ceil(Math.log10(b)); k++) {
    for (const m of [1, 2, 5]) {
      const v = m * 10 ** k;
      if (v >= a * (1 - 1e-9) && v <= b * (1 + 1e-9)) tickvals.push(v);
    }
  }
  return { tickvals, ticktext: tickvals.map((v) => formatNumber(v, 3)) };
}

/** A stepped colour scale, one band per outcome index (z from -0.5 to n - 0.5). */
function outcomeColorscale(): Array<[number, string]> {
  const n = OUTCOMES.length;
  const scale: Array<[number, string]> = [];
  OUTCOMES.forEach((o, i) => {
    scale.push([i / n, OUTCOME_COLOURS[o]], [(i + 1) / n, OUTCOME_COLOURS[o]]);
  });
  return scale;
}

/** The stability chart's Plotly traces, layout and CSV in display units. */
export function stabilityChartPlot(c: StabilityChart, units: DisplayUnits): { data: PlotSpec[]; layout: PlotSpec; csv: PlotCsv; caseText: string } {
  const fUnit = unitLabelOf('frequency', units);
  const aUnit = unitLabelOf('length', units);
  const x = Array.from(c.xValues, (v) => toDisplay(v, 'frequency', units));
  const y = Array.from(c.yValues, (v) => toDisplay(v, 'length', units));
  const nx = x.length;
  const z: number[][] = [];
  const real: number[][] = [];
  for (let j = 0; j < y.length; j++) {
    const row: number[] = [];
    const raw: number[] = [];
    for (let i = 0; i < nx; i++) {
      const v = c.maxMultiplier[j * nx + i];
      raw.push(Number.isFinite(v) ? v : Number.MAX_VALUE);
      row.push(stabilityLevel(v));
    }
    z.push(row);
    real.push(raw);
  }
  const data: PlotSpec[] = [
    {
      type: 'heatmap', x, y, z, customdata: real, zmin: 0, zmax: MULTIPLIER_CLIP, name: 'largest |μ|',
      colorscale: stabilityColorscale(), colorbar: stabilityColorbar(), showlegend: false,
      hovertemplate: `f %{x:.4g} ${fUnit}<br>a %{y:.4g} ${aUnit}<br>largest |μ| %{customdata:.5g}<extra></extra>`,
    },
    stabilityContour(x, y, z),
  ];
  if (c.averagedLowerLimit) {
    data.push({
      type: 'scatter', mode: 'lines', name: 'averaged lower limit',
      x: Array.from(c.averagedLowerLimit.frequency, (v) => toDisplay(v, 'frequency', units)),
      y: Array.from(c.averagedLowerLimit.amplitude, (v) => toDisplay(v, 'length', units)),
      line: { color: STABILITY_COLORS.contour, dash: 'dash', width: 2 },
    });
  }
  data.push({
    type: 'scatter', mode: 'markers', name: 'this case',
    x: [toDisplay(c.caseMark.x, 'frequency', units)], y: [toDisplay(c.caseMark.y, 'length', units)],
    // White with a dark rim: it shows on both hues of the scale.
    marker: { symbol: 'star', size: 16, color: '#ffffff', line: { color: STABILITY_COLORS.contour, width: 2 } },
    hovertemplate: `this case<br>largest |μ| ${c.caseMark.maxMultiplier.toPrecision(5)}<extra></extra>`,
  });
  const axis = (scale: 'linear' | 'log' | undefined, values: number[]): PlotSpec =>
    scale === 'log' ? { type: 'log', ...logTicks(values[0], values[values.length - 1]) } : { type: 'linear' };
  const layout: PlotSpec = {
    xaxis: { title: { text: `drive frequency (${fUnit})` }, ...axis(c.grid.x.scale, x) },
    yaxis: { title: { text: `drive amplitude (${aUnit})` }, ...axis(c.grid.y.scale, y) },
    margin: { l: 64, r: 16, t: 40, b: 52 },
  };
  const rows: Array<Array<number | string>> = [];
  for (let j = 0; j < y.length; j++) for (let i = 0; i < nx; i++) rows.push([x[i], y[j], c.maxMultiplier[j * nx + i]]);
  const csv: PlotCsv = {
    columns: [{ header: 'drive frequency', unit: fUnit }, { header: 'drive amplitude', unit: aUnit }, { header: 'largest |multiplier|' }],
    rows,
  };
  return { data, layout, csv, caseText: `${formatIn(c.caseMark.x, 'frequency', units)}, ${formatIn(c.caseMark.y, 'length', units)}` };
}

/** The Map tab: the stability chart over drive frequency and amplitude, and the basin map over start angle and rate. */
@Component({
  selector: 'qp-map-tab',
  imports: [FormsModule, MatFormFieldModule, MatSelectModule, Plot, RunStrip],
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

  protected runChart(): void {
    this.workspace.runChart(this.chartGrid());
  }

  protected runBasin(): void {
    this.workspace.runBasin(this.basinGrid());
  }
}
