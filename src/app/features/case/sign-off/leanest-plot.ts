import type { LeanestResult } from '../../../../../shared/engine/leanest';
import { toDisplay, unitLabelOf, type DisplayUnits } from '../../../core/units/display-units';
import type { PlotCsv, PlotSpec } from '../../../ui/plot/plot';
import { stabilityChartPlot } from '../map/stability-chart-plot';
import { STABILITY_COLORS } from '../map/stability-scale';

/** Drawn over the chart where a cell keeps the margin: a light veil and a deep teal outline (visible in the legend too). */
export const ADMISSIBLE_VEIL = 'rgba(255, 255, 255, 0.6)';
export const ADMISSIBLE_EDGE = STABILITY_COLORS.holdsDeep;

/**
 * The leanest-drive chart: the stability chart of the search (stability-chart-plot.ts), the cells that keep the
 * margin within the envelope veiled and outlined, and the leanest drive marked. CSV: every cell with its largest
 * |μ| and whether it keeps the margin.
 */
export function leanestPlot(r: LeanestResult, units: DisplayUnits): { data: PlotSpec[]; layout: PlotSpec; csv: PlotCsv } {
  const base = stabilityChartPlot(r.chart, units);
  const fUnit = unitLabelOf('frequency', units);
  const aUnit = unitLabelOf('length', units);
  const x = Array.from(r.chart.xValues, (v) => toDisplay(v, 'frequency', units));
  const y = Array.from(r.chart.yValues, (v) => toDisplay(v, 'length', units));
  const nx = x.length;
  const veil: Array<Array<number | null>> = [];
  const mask: number[][] = [];
  for (let j = 0; j < y.length; j++) {
    const row: Array<number | null> = [];
    const m: number[] = [];
    for (let i = 0; i < nx; i++) {
      const ok = r.feasible[j * nx + i] === 1;
      row.push(ok ? 1 : null);
      m.push(ok ? 1 : 0);
    }
    veil.push(row);
    mask.push(m);
  }
  const data: PlotSpec[] = [
    ...base.data.filter((t) => t['name'] !== 'this case'),
    {
      type: 'heatmap', x, y, z: veil, zmin: 0, zmax: 1, name: 'keeps the margin', showscale: false, showlegend: false,
      colorscale: [[0, ADMISSIBLE_VEIL], [1, ADMISSIBLE_VEIL]],
      hovertemplate: `f %{x:.4g} ${fUnit}<br>a %{y:.4g} ${aUnit}<br>keeps the margin<extra></extra>`,
    },
    {
      type: 'contour', x, y, z: mask, name: 'keeps the margin', showlegend: true, showscale: false, hoverinfo: 'skip',
      contours: { start: 0.5, end: 0.5, size: 1, coloring: 'none' },
      line: { color: ADMISSIBLE_EDGE, width: 3, dash: 'dot' },
    },
    {
      // The cheapest admissible amplitude of each column: the curve the leanest drive is found on.
      type: 'scatter', mode: 'lines', name: 'least admissible amplitude',
      x, y: Array.from(r.columns.amplitude, (v) => (Number.isFinite(v) ? toDisplay(v, 'length', units) : null)),
      line: { color: ADMISSIBLE_EDGE, width: 2 }, connectgaps: false,
      hovertemplate: `least admissible amplitude<br>f %{x:.4g} ${fUnit}<br>a %{y:.4g} ${aUnit}<extra></extra>`,
    },
    ...base.data.filter((t) => t['name'] === 'this case'),
  ];
  const o = r.optimum;
  if (o) {
    data.push({
      type: 'scatter', mode: 'markers', name: 'leanest drive',
      x: [toDisplay(o.frequency, 'frequency', units)], y: [toDisplay(o.amplitude, 'length', units)],
      marker: { symbol: 'diamond', size: 15, color: STABILITY_COLORS.contour, line: { color: '#ffffff', width: 2 } },
      hovertemplate: `leanest drive<br>f %{x:.5g} ${fUnit}<br>a %{y:.5g} ${aUnit}<extra></extra>`,
    });
  }
  const layout: PlotSpec = { ...base.layout, legend: { orientation: 'h', y: -0.22 }, margin: { l: 64, r: 16, t: 24, b: 88 } };
  const rows: Array<Array<number | string>> = [];
  for (let j = 0; j < y.length; j++) {
    for (let i = 0; i < nx; i++) rows.push([x[i], y[j], r.chart.maxMultiplier[j * nx + i], r.feasible[j * nx + i] === 1 ? 'yes' : 'no']);
  }
  const csv: PlotCsv = {
    columns: [...base.csv.columns, { header: 'keeps the margin' }],
    rows,
  };
  return { data, layout, csv };
}
