import type { StabilityChart } from '../../../../../shared/engine/chart';
import { toDisplay, unitLabelOf, type DisplayUnits } from '../../../core/units/display-units';
import { formatIn, formatNumber } from '../../../core/units/format-number';
import type { PlotCsv, PlotSpec } from '../../../ui/plot/plot';
import {
  MULTIPLIER_CLIP, STABILITY_COLORS, stabilityColorbar, stabilityColorscale, stabilityContour, stabilityLevel,
} from './stability-scale';

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
