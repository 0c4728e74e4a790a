import type { MotionOutcome } from '../../../../../shared/engine/classify';
import type { SweepPoint, SweepThreshold } from '../../../../../shared/engine/sweep';
import { multiplierAxis, probesOnlySeenBisecting, sweepPlot, type SweepPlotOptions } from './sweep-plot';

function point(index: number, value: number, outcome: MotionOutcome | null, slowFrequencyHz: number | null, maxMultiplier: number | null): SweepPoint {
  return { index, value, outcome, slowFrequencyHz, maxMultiplier, meanAngle: 0, maxDeviation: 0.01 };
}

const points: SweepPoint[] = [
  point(0, 0.002, 'falls', null, 1.8),
  point(1, 0.004, 'falls', null, 1.3),
  point(2, 0.006, 'holds-upright', 1.25, 0.999),
  point(3, 0.008, 'holds-upright', 2.5, 0.998),
];

const threshold: SweepThreshold = {
  kind: 'outcome', value: 0.00503, bracket: [0.00502, 0.00504], tolerance: 0.00003,
  below: 'irregular', above: 'holds-upright',
  probes: [
    { value: 0.005, outcome: 'irregular' },
    { value: 0.0045, outcome: 'falls' },
    { value: 0.00504, outcome: 'holds-upright' },
  ],
};

const options: SweepPlotOptions = { label: 'Drive amplitude', unit: 'mm', toX: (v) => v * 1000, logX: false, thresholds: [threshold], averaged: null };

type Trace = Record<string, unknown>;

describe('sweep plot', () => {
  it('draws no slow frequency where none was measured, and counts those points for the note', () => {
    const plot = sweepPlot(points, options);
    const onFrequencyAxis = plot.data.filter((t: Trace) => t['yaxis'] === undefined && t['mode'] === 'markers');
    const ys = onFrequencyAxis.flatMap((t: Trace) => t['y'] as number[]);
    expect(ys).toEqual([1.25, 2.5]);
    expect(ys).not.toContain(0);
    expect(plot.unmeasured).toBe(2);
    expect(plot.total).toBe(4);
    // Every point's outcome is still drawn, in the strip under the plot.
    const strip = plot.data.filter((t: Trace) => t['yaxis'] === 'y3' && t['name'] !== 'bisection point');
    expect(strip.flatMap((t: Trace) => t['x'] as number[]).sort((a, b) => a - b)).toEqual([2, 4, 6, 8]);
  });

  it('gives the |μ| axis round ticks from 0 to a round top that includes 1', () => {
    expect(multiplierAxis([0.9993, 0.99981, null])).toEqual({ range: [0, 1.2], tick0: 0, dtick: 0.2 });
    expect(multiplierAxis([0.7, 1.31])).toEqual({ range: [0, 1.5], tick0: 0, dtick: 0.5 });
    expect(multiplierAxis([1.01, 250, Number.POSITIVE_INFINITY])).toEqual({ range: [0, 3], tick0: 0, dtick: 0.5 });
    const axis = sweepPlot(points, options).layout['yaxis2'] as Record<string, unknown>;
    expect(axis['dtick']).toBe(0.5);
    expect(axis['range']).toEqual([0, 2]);
  });

  it('shows the bisection points behind a threshold whose outcome no sweep point has', () => {
    // 'irregular' occurs at no listed point: its only evidence is the bisection's evaluation at 5 mm.
    expect(probesOnlySeenBisecting(points, threshold)).toEqual([{ value: 0.005, outcome: 'irregular' }]);
    const probes = sweepPlot(points, options).data.find((t: Trace) => t['name'] === 'bisection point');
    expect(probes?.['x']).toEqual([5]);
    expect(probes?.['text']).toEqual(['irregular']);
  });

  it('adds no bisection points when every named outcome has a sweep point', () => {
    const plain: SweepThreshold = { ...threshold, below: 'falls' };
    expect(probesOnlySeenBisecting(points, plain)).toEqual([]);
    expect(sweepPlot(points, { ...options, thresholds: [plain] }).data.some((t: Trace) => t['name'] === 'bisection point')).toBe(false);
  });
});
