import { setField, sweepableFieldsFor } from '../../../../../shared/case/case-fields';
import type { CaseParams } from '../../../../../shared/case/case-schema';
import { averagedAnalysis, averagedLowerAmplitude, averagedLowerFrequency } from '../../../../../shared/engine/averaged';
import type { SweepPoint, SweepResult, SweepThreshold, ThresholdProbe } from '../../../../../shared/engine/sweep';
import { dimensionOfSiUnit, toDisplay, unitLabelOf, type Dimension, type DisplayUnits } from '../../../core/units/display-units';
import type { PlotCsv, PlotSpec } from '../../../ui/plot/plot';
import { OUTCOME_COLOURS, OUTCOME_WORDS, outcomeWords } from '../../../../../shared/case/display';

/**
 * Where averaged theory puts the upright's lower limit along a field: the closed forms for drive amplitude and
 * frequency, otherwise the first change of the averaged verdict on a fine scan of the range. Vertical drive only.
 */
export function averagedThreshold(params: CaseParams, field: string, from: number, to: number): number | null {
  if (Math.abs(Math.sin(params.drive.direction)) > 1e-9) return null;
  if (field === 'drive.amplitude') return averagedLowerAmplitude(params, params.drive.frequency);
  if (field === 'drive.frequency') return averagedLowerFrequency(params, params.drive.amplitude);
  const n = 240;
  let previous: boolean | null = null;
  let previousValue = from;
  for (let i = 0; i <= n; i++) {
    const value = from + ((to - from) * i) / n;
    let holds: boolean | null;
    try {
      holds = averagedAnalysis(setField(params, field, value)).uprightStable;
    } catch {
      holds = null;
    }
    if (holds !== null && previous !== null && holds !== previous) return (previousValue + value) / 2;
    if (holds !== null) {
      previous = holds;
      previousValue = value;
    }
  }
  return null;
}

/** The swept field of a sweep result as shown: label, dimension and unit, and the averaged-theory limit (SI). */
export interface SweepAxis {
  readonly label: string;
  readonly dimension: Dimension;
  readonly unit: string;
  readonly averaged: number | null;
}

/** The swept field of a result, taken from the result and the case it was computed for (not the form). */
export function sweepAxis(value: SweepResult, params: CaseParams, units: DisplayUnits): SweepAxis {
  const spec = value.spec;
  const field = sweepableFieldsFor(params).find((f) => f.path === spec.field);
  const dimension = dimensionOfSiUnit(field?.unit ?? '');
  const unit = dimension === 'plain' ? (field?.unit ?? '') : unitLabelOf(dimension, units);
  return { label: field?.label ?? spec.field, dimension, unit, averaged: averagedThreshold(params, spec.field, spec.from, spec.to) };
}

/** The plot of a finished sweep (the Sweeps tab and the case-link page). */
export function sweepResultPlot(value: SweepResult, axis: SweepAxis, units: DisplayUnits): SweepPlot {
  return sweepPlot(value.points, {
    label: axis.label, unit: axis.unit, toX: (v) => toDisplay(v, axis.dimension, units), logX: value.spec.scale === 'log',
    thresholds: value.thresholds, averaged: axis.averaged,
  });
}

/** What the sweep plot needs besides the points: the x axis in display units and the lines to mark. */
export interface SweepPlotOptions {
  readonly label: string;
  readonly unit: string;
  readonly toX: (si: number) => number;
  readonly logX: boolean;
  readonly thresholds: readonly SweepThreshold[];
  /** The averaged-theory limit in SI, or null. */
  readonly averaged: number | null;
}

export interface SweepPlot {
  readonly data: PlotSpec[];
  readonly layout: PlotSpec;
  readonly csv: PlotCsv;
  /** Points with a valid outcome but no measured slow frequency (drawn in the outcome strip only). */
  readonly unmeasured: number;
  readonly total: number;
}

/** Largest |μ| the right axis shows; larger values run off the top (the hover and the table keep them). */
const MULTIPLIER_AXIS_MAX = 3;

/** A right axis for the largest |μ| with round ticks: 0 to the first of 1.2, 1.5, 2, 2.5, 3 above the data. */
export function multiplierAxis(values: readonly (number | null)[]): { range: [number, number]; tick0: number; dtick: number } {
  const finite = values.filter((v): v is number => v !== null && Number.isFinite(v));
  const largest = Math.min(Math.max(0, ...finite), MULTIPLIER_AXIS_MAX);
  const top = [1.2, 1.5, 2, 2.5, MULTIPLIER_AXIS_MAX].find((t) => t >= largest) ?? MULTIPLIER_AXIS_MAX;
  return { range: [0, top], tick0: 0, dtick: top <= 1.2 ? 0.2 : 0.5 };
}

/**
 * Bisection probes whose outcome no sweep point has: the only evidence for an outcome that a threshold names, so
 * the table and the plot show them.
 */
export function probesOnlySeenBisecting(points: readonly SweepPoint[], threshold: SweepThreshold): ThresholdProbe[] {
  const listed = new Set(points.map((p) => p.outcome));
  const named = [threshold.below, threshold.above].filter((o) => o !== null && !listed.has(o));
  return (threshold.probes ?? []).filter((p) => p.outcome !== null && named.includes(p.outcome));
}

/**
 * Outcome and slow frequency against the swept field. The slow frequency is drawn only where it was measured (no
 * point sits at 0 Hz for want of a measurement); every point's outcome shows in a strip under the plot, with the
 * bisection points behind a threshold whose outcome no point has. The largest |μ| of the upright is on the right.
 */
export function sweepPlot(points: readonly SweepPoint[], o: SweepPlotOptions): SweepPlot {
  const data: PlotSpec[] = [];
  const strip = { yaxis: 'y3', y: [] as number[] };
  for (const outcome of Object.keys(OUTCOME_WORDS)) {
    const mine = points.filter((p) => p.outcome === outcome);
    if (mine.length === 0) continue;
    const name = OUTCOME_WORDS[outcome];
    const measured = mine.filter((p) => p.slowFrequencyHz !== null && Number.isFinite(p.slowFrequencyHz));
    data.push({
      type: 'scatter', mode: 'markers', name, legendgroup: outcome, yaxis: strip.yaxis,
      x: mine.map((p) => o.toX(p.value)), y: mine.map(() => 0),
      marker: { size: 10, symbol: 'square', color: OUTCOME_COLOURS[outcome] },
      hovertemplate: `%{x:.5g} ${o.unit}<br>${name}<extra></extra>`,
    });
    if (measured.length > 0) {
      data.push({
        type: 'scatter', mode: 'markers', name, legendgroup: outcome, showlegend: false,
        x: measured.map((p) => o.toX(p.value)), y: measured.map((p) => p.slowFrequencyHz),
        marker: { size: 9, color: OUTCOME_COLOURS[outcome] },
        hovertemplate: `%{x:.5g} ${o.unit}<br>${name}<br>slow %{y:.4g} Hz<extra></extra>`,
      });
    }
  }
  const probes = o.thresholds.flatMap((t) => probesOnlySeenBisecting(points, t));
  if (probes.length > 0) {
    data.push({
      type: 'scatter', mode: 'markers', name: 'bisection point', yaxis: strip.yaxis,
      x: probes.map((p) => o.toX(p.value)), y: probes.map(() => 0),
      text: probes.map((p) => outcomeWords(p.outcome)),
      marker: { size: 12, symbol: 'diamond-open', line: { width: 2 }, color: probes.map((p) => (p.outcome ? OUTCOME_COLOURS[p.outcome] : '#586060')) },
      hovertemplate: `%{x:.6g} ${o.unit}<br>%{text} (bisection)<extra></extra>`,
    });
  }
  const multipliers = points.map((p) => (p.maxMultiplier !== null && Number.isFinite(p.maxMultiplier) ? p.maxMultiplier : null));
  if (multipliers.some((m) => m !== null)) {
    data.push({
      type: 'scatter', mode: 'lines', name: 'largest |μ| of the upright', yaxis: 'y2',
      x: points.map((p) => o.toX(p.value)), y: multipliers,
      line: { color: '#577e81', dash: 'dot' },
      hovertemplate: `%{x:.5g} ${o.unit}<br>largest |μ| %{y:.5g}<extra></extra>`,
    });
  }
  const shapes: PlotSpec[] = o.thresholds.map((t) => ({
    type: 'line', xref: 'x', yref: 'paper', x0: o.toX(t.value), x1: o.toX(t.value), y0: 0, y1: 1,
    line: { color: t.kind === 'outcome' ? '#b72220' : '#6d5c45', width: 2 },
  }));
  const annotations: PlotSpec[] = [
    { text: 'outcome', xref: 'paper', yref: 'y3', x: 0, y: 0, xanchor: 'right', xshift: -6, showarrow: false, font: { size: 11 } },
  ];
  if (o.averaged !== null) {
    shapes.push({
      type: 'line', xref: 'x', yref: 'paper', x0: o.toX(o.averaged), x1: o.toX(o.averaged), y0: 0, y1: 1,
      line: { color: '#05696f', width: 2, dash: 'dash' },
    });
    annotations.push({
      x: o.toX(o.averaged), y: 0.98, xref: 'x', yref: 'paper', text: 'averaged limit', showarrow: false,
      xanchor: 'left', yanchor: 'top', xshift: 4, font: { color: '#05696f' },
    });
  }
  const layout: PlotSpec = {
    xaxis: { title: { text: `${o.label} (${o.unit || '1'})` }, type: o.logX ? 'log' : 'linear', anchor: 'y3' },
    yaxis: { title: { text: 'slow frequency (Hz)' }, rangemode: 'tozero', domain: [0.16, 1] },
    yaxis2: { title: { text: 'largest |μ| (1)' }, overlaying: 'y', side: 'right', showgrid: false, ...multiplierAxis(multipliers) },
    yaxis3: { domain: [0, 0.08], range: [-1, 1], showticklabels: false, showgrid: false, zeroline: false, fixedrange: true },
    margin: { l: 64, r: 64, t: 40, b: 52 },
    shapes,
    annotations,
  };
  const csv: PlotCsv = {
    columns: [
      { header: o.label, unit: o.unit || undefined },
      { header: 'outcome' },
      { header: 'slow frequency', unit: 'Hz' },
      { header: 'largest |multiplier|' },
    ],
    rows: points.map((p) => [o.toX(p.value), outcomeWords(p.outcome), p.slowFrequencyHz, p.maxMultiplier]),
  };
  const unmeasured = points.filter((p) => p.outcome !== null && (p.slowFrequencyHz === null || !Number.isFinite(p.slowFrequencyHz))).length;
  return { data, layout, csv, unmeasured, total: points.length };
}
