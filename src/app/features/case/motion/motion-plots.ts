import type { MotionResult } from '../../../../../shared/engine/motion';
import { toDisplay, unitLabelOf, type DisplayUnits } from '../../../core/units/display-units';
import type { PlotCsv, PlotSpec } from '../../../ui/plot/plot';

/** A plot's traces, layout and CSV (the inputs of `qp-plot`). */
export interface MotionPlot {
  readonly data: PlotSpec[];
  readonly layout: PlotSpec;
  readonly csv: PlotCsv;
}

function scaled(values: Float64Array, factor: number): number[] {
  return Array.from(values, (v) => v * factor);
}

function angleUnits(units: DisplayUnits): { factor: number; unit: string; rateUnit: string } {
  return { factor: toDisplay(1, 'angle', units), unit: unitLabelOf('angle', units), rateUnit: unitLabelOf('rate', units) };
}

/** One colour pair (full motion, slow motion) per chain link, link 1 on the pivot. */
const LINK_COLOURS: ReadonlyArray<readonly [string, string]> = [
  ['#7a8fa6', '#0b6e69'],
  ['#d9a38a', '#b4441d'],
  ['#b7a3cf', '#6a3d9a'],
];

/** A chain's links' absolute angles against time, each with its slow motion. */
function chainAngleTimePlot(r: MotionResult, chain: NonNullable<MotionResult['chain']>, units: DisplayUnits): MotionPlot {
  const { factor, unit, rateUnit } = angleUnits(units);
  const links = Array.from({ length: chain.links }, (_, k) => k);
  const data: PlotSpec[] = links.flatMap((k) => {
    const [full, slow] = LINK_COLOURS[k % LINK_COLOURS.length];
    return [
      { type: 'scatter', mode: 'lines', name: `link ${k + 1} angle θ${k + 1}`, x: r.series.t, y: scaled(chain.theta[k], factor), line: { width: 1, color: full } },
      { type: 'scatter', mode: 'lines', name: `link ${k + 1} slow motion`, x: r.slow.t, y: scaled(chain.slowTheta[k], factor), line: { width: 2.5, color: slow } },
    ];
  });
  const layout: PlotSpec = {
    xaxis: { title: { text: 'time t (s)' } },
    yaxis: { title: { text: `angle of each link from upright (${unit})` } },
  };
  const csv: PlotCsv = {
    columns: [
      { header: 't', unit: 's' },
      ...links.flatMap((k) => [{ header: `theta${k + 1}`, unit }, { header: `rate${k + 1}`, unit: rateUnit }]),
      { header: 'pivot position', unit: 'm' },
    ],
    rows: Array.from(r.series.t, (t, i) => [t, ...links.flatMap((k) => [chain.theta[k][i] * factor, chain.rate[k][i] * factor]), r.series.pivotPosition[i]]),
  };
  return { data, layout, csv };
}

/**
 * Angle against time with the slow motion (period mean) overlaid; the Motion tab and the case-link page. A chain
 * shows every link.
 */
export function angleTimePlot(r: MotionResult, units: DisplayUnits): MotionPlot {
  if (r.chain) return chainAngleTimePlot(r, r.chain, units);
  const { factor, unit, rateUnit } = angleUnits(units);
  const data: PlotSpec[] = [
    { type: 'scatter', mode: 'lines', name: 'angle θ', x: r.series.t, y: scaled(r.series.theta, factor), line: { width: 1, color: '#7a8fa6' } },
    { type: 'scatter', mode: 'lines', name: 'slow motion (period mean)', x: r.slow.t, y: scaled(r.slow.theta, factor), line: { width: 2.5, color: '#0b6e69' } },
  ];
  const layout: PlotSpec = {
    xaxis: { title: { text: 'time t (s)' } },
    yaxis: { title: { text: `angle from upright θ (${unit})` } },
  };
  const csv: PlotCsv = {
    columns: [{ header: 't', unit: 's' }, { header: 'theta', unit }, { header: 'rate', unit: rateUnit }, { header: 'pivot position', unit: 'm' }],
    rows: Array.from(r.series.t, (t, i) => [t, r.series.theta[i] * factor, r.series.rate[i] * factor, r.series.pivotPosition[i]]),
  };
  return { data, layout, csv };
}

/** Every link's rate against its angle (a phase portrait or a stroboscopic section), each link in its colour. */
function linkPhasePlot(
  t: Float64Array, theta: Float64Array[], rate: Float64Array[], mode: 'lines' | 'markers', where: string, units: DisplayUnits,
): MotionPlot {
  const { factor, unit, rateUnit } = angleUnits(units);
  const links = theta.map((_, k) => k);
  const colour = (k: number) => LINK_COLOURS[k % LINK_COLOURS.length][1];
  return {
    data: links.map((k) => ({
      type: 'scatter', mode, name: `link ${k + 1}`, x: scaled(theta[k], factor), y: scaled(rate[k], factor),
      ...(mode === 'lines' ? { line: { width: 1, color: colour(k) } } : { marker: { size: 5, color: colour(k) } }),
    })),
    layout: {
      xaxis: { title: { text: `angle of the link θ${where} (${unit})` } },
      yaxis: { title: { text: `rate of the link θ̇ (${rateUnit})` } },
    },
    csv: {
      columns: [{ header: 't', unit: 's' }, ...links.flatMap((k) => [{ header: `theta${k + 1}`, unit }, { header: `rate${k + 1}`, unit: rateUnit }])],
      rows: Array.from(t, (time, i) => [time, ...links.flatMap((k) => [theta[k][i] * factor, rate[k][i] * factor])]),
    },
  };
}

/** Rate against angle, full and slow motion; a chain's every link (full motion). */
export function phasePortraitPlot(r: MotionResult, units: DisplayUnits): MotionPlot {
  const { factor, unit, rateUnit } = angleUnits(units);
  const chain = r.chain;
  if (chain) return linkPhasePlot(r.series.t, chain.theta, chain.rate, 'lines', '', units);
  const data: PlotSpec[] = [
    { type: 'scatter', mode: 'lines', name: 'full motion', x: scaled(r.series.theta, factor), y: scaled(r.series.rate, factor), line: { width: 1, color: '#7a8fa6' } },
    { type: 'scatter', mode: 'lines', name: 'slow motion', x: scaled(r.slow.theta, factor), y: scaled(r.slow.rate, factor), line: { width: 2, color: '#0b6e69' } },
  ];
  const layout: PlotSpec = {
    xaxis: { title: { text: `angle θ (${unit})` } },
    yaxis: { title: { text: `rate θ̇ (${rateUnit})` } },
  };
  const csv: PlotCsv = {
    columns: [{ header: 't', unit: 's' }, { header: 'theta', unit }, { header: 'rate', unit: rateUnit }],
    rows: Array.from(r.series.t, (t, i) => [t, r.series.theta[i] * factor, r.series.rate[i] * factor]),
  };
  return { data, layout, csv };
}

/** The stroboscopic section: angle and rate once per drive period, coloured by time. */
export function strobePlot(r: MotionResult, units: DisplayUnits): MotionPlot {
  const { factor, unit, rateUnit } = angleUnits(units);
  const chain = r.chain;
  if (chain) return linkPhasePlot(r.strobe.t, chain.strobeTheta, chain.strobeRate, 'markers', ' at the strobe phase', units);
  const data: PlotSpec[] = [
    {
      type: 'scatter',
      mode: 'markers',
      name: 'once per drive period',
      x: scaled(r.strobe.theta, factor),
      y: scaled(r.strobe.rate, factor),
      marker: { size: 5, color: Array.from(r.strobe.t), colorscale: 'Viridis', colorbar: { title: { text: 't (s)' }, thickness: 10 } },
    },
  ];
  const layout: PlotSpec = {
    xaxis: { title: { text: `angle θ at the strobe phase (${unit})` } },
    yaxis: { title: { text: `rate θ̇ (${rateUnit})` } },
  };
  const csv: PlotCsv = {
    columns: [{ header: 't', unit: 's' }, { header: 'theta', unit }, { header: 'rate', unit: rateUnit }],
    rows: Array.from(r.strobe.t, (t, i) => [t, r.strobe.theta[i] * factor, r.strobe.rate[i] * factor]),
  };
  return { data, layout, csv };
}
