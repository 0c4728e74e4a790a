import type { StabilityChart } from '../../../../../shared/engine/chart';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { stabilityChartPlot } from './stability-chart-plot';
import { MULTIPLIER_CLIP, STABILITY_COLORS, stabilityColorscale, stabilityLevel } from './stability-scale';

/** The colour the scale gives a drawn level (Plotly interpolates between stops; here we read the nearest stop). */
function colourAt(level: number): string {
  const t = level / MULTIPLIER_CLIP;
  const scale = stabilityColorscale();
  for (let i = 1; i < scale.length; i++) {
    const [lo, loColour] = scale[i - 1];
    const [hi, hiColour] = scale[i];
    if (t >= lo && t <= hi) return t - lo <= hi - t ? loColour : hiColour;
  }
  throw new Error(`level ${level} is off the scale`);
}

const teal = [STABILITY_COLORS.holdsDeep, STABILITY_COLORS.holdsEdge];
const amber = [STABILITY_COLORS.failsEdge, STABILITY_COLORS.failsDeep];

function chartOf(values: number[]): StabilityChart {
  return {
    engineVersion: 'test',
    grid: {
      x: { field: 'drive.frequency', from: 20, to: 40, count: 2 },
      y: { field: 'drive.amplitude', from: 0.005, to: 0.01, count: 2 },
    },
    xValues: Float64Array.from([20, 40]),
    yValues: Float64Array.from([0.005, 0.01]),
    maxMultiplier: Float64Array.from(values),
    caseMark: { x: 30, y: 0.008, maxMultiplier: 0.99 },
    averagedLowerLimit: null,
    mathieu: null,
    method: 'magnus',
    stepsPerPeriod: 64,
  };
}

describe('stability chart scale', () => {
  it('diverges at |μ| = 1: holding cells take teal, failing cells amber, however close to 1', () => {
    expect(teal).toContain(colourAt(stabilityLevel(0.2)));
    expect(teal).toContain(colourAt(stabilityLevel(0.999)));
    // An undamped rig that holds sits on |μ| = 1 within the engine's tolerance: still drawn as holding.
    expect(teal).toContain(colourAt(stabilityLevel(1 + 1e-9)));
    expect(amber).toContain(colourAt(stabilityLevel(1.001)));
    expect(amber).toContain(colourAt(stabilityLevel(7)));
    expect(amber).toContain(colourAt(stabilityLevel(Number.POSITIVE_INFINITY)));
  });

  it('keeps the stops increasing from the deep teal to the deep amber, the break straddling 1', () => {
    const scale = stabilityColorscale();
    const stops = scale.map(([t]) => t);
    expect(stops).toEqual([...stops].sort((a, b) => a - b));
    expect(scale[0][1]).toBe(STABILITY_COLORS.holdsDeep);
    expect(scale[scale.length - 1][1]).toBe(STABILITY_COLORS.failsDeep);
    const breakAt = scale.findIndex(([, c]) => c === STABILITY_COLORS.failsEdge);
    expect(scale[breakAt - 1][0] * MULTIPLIER_CLIP).toBeLessThan(1);
    expect(scale[breakAt][0] * MULTIPLIER_CLIP).toBeGreaterThan(1);
  });

  it('draws a labelled |μ| = 1 contour over the same levels as the cells, named in the legend', () => {
    const plot = stabilityChartPlot(chartOf([0.5, 1 + 1e-9, 1.3, Number.POSITIVE_INFINITY]), DEFAULT_UNITS);
    const heatmap = plot.data.find((t) => t['type'] === 'heatmap');
    const contour = plot.data.find((t) => t['type'] === 'contour');
    if (!heatmap || !contour) throw new Error('heatmap or contour missing');
    expect(heatmap['colorscale']).toEqual(stabilityColorscale());
    expect(contour['z']).toBe(heatmap['z']);
    expect(contour['contours']).toMatchObject({ coloring: 'none', start: 1, end: 1, showlabels: true });
    expect(contour['showlegend']).toBe(true);
    expect(String(contour['name'])).toContain('|μ| = 1');
    const levels = heatmap['z'] as number[][];
    expect(levels[0][0]).toBeLessThan(1);
    expect(levels[0][1]).toBeLessThan(1);
    expect(levels[1][0]).toBeGreaterThan(1);
    expect(levels[1][1]).toBe(MULTIPLIER_CLIP);
    // The colour bar reads in |μ|, its clipped end marked as such.
    expect((heatmap['colorbar'] as { ticktext: string[] }).ticktext).toEqual(['0', '0.5', '1', '1.5', '≥ 2']);
  });
});
