import { MULTIPLIER_UNIT_TOLERANCE } from '../../../../../shared/engine/floquet';
import type { PlotSpec } from '../../../ui/plot/plot';

/**
 * How the stability chart draws the largest |Floquet multiplier| μ of the upright: a diverging scale that breaks at
 * |μ| = 1, teal where the upright holds and amber where it fails (a blue–orange pair that stays apart for red-green
 * colour blindness), each hue darkening away from 1, plus a labelled contour on |μ| = 1.
 *
 * The colours are tones of our own palettes (src/_palettes.scss): ink teal 30/70 and amber 80/30.
 */
export const STABILITY_COLORS = {
  holdsDeep: '#034f54', // ink teal 30
  holdsEdge: '#18bdc7', // ink teal 70
  failsEdge: '#f3bd6b', // amber 80
  failsDeep: '#604100', // amber 30
  contour: '#161d1d', // neutral 10
} as const;

/** Multipliers above this are drawn in the darkest amber (the hover still shows the true value). */
export const MULTIPLIER_CLIP = 2;

/**
 * Holding cells are drawn at most this far below 1 and failing cells at least this far above, so a cell the engine
 * calls holding (|μ| within MULTIPLIER_UNIT_TOLERANCE of 1, as for an undamped rig) never takes a failing colour and
 * the |μ| = 1 contour runs between the two kinds of cell.
 */
const EDGE_GAP = 0.02;

/** The value a cell is drawn at (in |μ| units, 0 to MULTIPLIER_CLIP); non-finite means no periodic motion: fails. */
export function stabilityLevel(maxMultiplier: number): number {
  if (!Number.isFinite(maxMultiplier)) return MULTIPLIER_CLIP;
  if (maxMultiplier < 1 + MULTIPLIER_UNIT_TOLERANCE) return Math.min(Math.max(maxMultiplier, 0), 1 - EDGE_GAP);
  return Math.min(Math.max(maxMultiplier, 1 + EDGE_GAP), MULTIPLIER_CLIP);
}

/** Plotly colour scale over [0, MULTIPLIER_CLIP]: teal below 1, amber above, the break at 1. */
export function stabilityColorscale(): Array<[number, string]> {
  const edge = (v: number) => v / MULTIPLIER_CLIP;
  return [
    [0, STABILITY_COLORS.holdsDeep],
    [edge(1 - EDGE_GAP), STABILITY_COLORS.holdsEdge],
    [edge(1 + EDGE_GAP), STABILITY_COLORS.failsEdge],
    [1, STABILITY_COLORS.failsDeep],
  ];
}

/** Colour bar ticks in |μ|, the clipped end written as "≥ 2". */
export function stabilityColorbar(): PlotSpec {
  const tickvals = [0, 0.5, 1, 1.5, MULTIPLIER_CLIP];
  return {
    title: { text: 'largest |μ|', side: 'right' },
    thickness: 12,
    tickvals,
    ticktext: tickvals.map((v) => (v === MULTIPLIER_CLIP ? `≥ ${v}` : String(v))),
  };
}

/** The |μ| = 1 line over the drawn levels, labelled on the line and named in the legend. */
export function stabilityContour(x: readonly number[], y: readonly number[], levels: readonly (readonly number[])[]): PlotSpec {
  return {
    type: 'contour',
    name: '|μ| = 1: edge of holding',
    x,
    y,
    z: levels,
    showscale: false,
    showlegend: true,
    hoverinfo: 'skip',
    contours: { coloring: 'none', start: 1, end: 1, size: 1, showlabels: true, labelfont: { size: 12, color: STABILITY_COLORS.contour } },
    line: { color: STABILITY_COLORS.contour, width: 2 },
  };
}

/** The legend beside the chart: what each hue means. */
export const STABILITY_LEGEND = [
  { key: 'holds', label: 'upright holds: largest |μ| < 1', color: STABILITY_COLORS.holdsEdge },
  { key: 'fails', label: 'upright fails: largest |μ| > 1', color: STABILITY_COLORS.failsEdge },
] as const;
