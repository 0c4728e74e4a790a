import { OUTCOME_COLOURS } from '../../../../../shared/case/display';
import type { MapCell } from '../../../../../shared/engine/sweep';
import { cellMapPlot, outcomeColorscale, outcomeCounts, type MapAxisView } from './cell-map-plot';

const cell = (outcome: MapCell['outcome']): MapCell => ({ outcome, meanAngle: 0, maxDeviation: 0, slowFrequencyHz: null });

const freq: MapAxisView = { label: 'Drive frequency', unit: 'Hz', toShown: (v) => v, log: false };
const amp: MapAxisView = { label: 'Drive amplitude', unit: 'mm', toShown: (v) => v * 1000, log: false };

describe('outcome map plot', () => {
  it('counts every outcome (also at zero) over the computed cells, then the cells with no valid case', () => {
    const counts = outcomeCounts([cell('holds-upright'), cell('holds-upright'), cell('falls'), cell(null), null, undefined]);
    expect(counts.map((c) => [c.label, c.count])).toEqual([
      ['holds upright', 2], ['settles tilted', 0], ['falls', 1], ['tumbles', 0], ['irregular', 0], ['no valid case', 1],
    ]);
    expect(counts[0].share).toBeCloseTo(0.5, 12);
    expect(counts[0].color).toBe(OUTCOME_COLOURS['holds-upright']);
    expect(outcomeCounts([cell('tumbles')]).some((c) => c.key === 'invalid')).toBe(false);
  });

  it('draws each outcome in its own colour band, grey for no valid case, and leaves cells not yet computed blank', () => {
    const plot = cellMapPlot(
      { xValues: [10, 20, 30], yValues: [0.004, 0.008], cells: [cell('holds-upright'), cell('falls'), cell(null), null, null, null] },
      freq,
      amp,
    );
    const trace = plot.data[0] as { z: Array<Array<number | null>>; text: string[][]; x: number[]; y: number[]; colorscale: Array<[number, string]> };
    expect(trace.x).toEqual([10, 20, 30]);
    expect(trace.y).toEqual([4, 8]);
    expect(trace.z).toEqual([[0, 2, 5], [null, null, null]]);
    expect(trace.text[0]).toEqual(['holds upright', 'falls', 'no valid case']);
    // A value z sits in the band [z + 0.5, z + 1.5) / 6 of the scale (zmin -0.5, zmax 5.5).
    const colourOf = (z: number) => trace.colorscale.find(([t], i, all) => t <= (z + 0.5) / 6 && (z + 0.5) / 6 < (all[i + 1]?.[0] ?? 2))?.[1];
    expect(colourOf(0)).toBe(OUTCOME_COLOURS['holds-upright']);
    expect(colourOf(2)).toBe(OUTCOME_COLOURS['falls']);
    expect(colourOf(5)).toBe('#9e9e9e');
    expect(outcomeColorscale()).toHaveLength(12);
  });

  it('names both fields with their units on the axes, in the hover and in the CSV of the computed cells', () => {
    const plot = cellMapPlot({ xValues: [10, 20], yValues: [0.004], cells: [cell('tumbles'), null] }, freq, amp);
    const layout = plot.layout as { xaxis: { title: { text: string } }; yaxis: { title: { text: string } } };
    expect(layout.xaxis.title.text).toBe('Drive frequency (Hz)');
    expect(layout.yaxis.title.text).toBe('Drive amplitude (mm)');
    const trace = plot.data[0] as { hovertemplate: string };
    expect(trace.hovertemplate).toBe('Drive frequency %{x:.4~g} Hz<br>Drive amplitude %{y:.4~g} mm<br>%{text}<extra></extra>');
    expect(plot.csv.columns).toEqual([{ header: 'Drive frequency', unit: 'Hz' }, { header: 'Drive amplitude', unit: 'mm' }, { header: 'outcome' }]);
    expect(plot.csv.rows).toEqual([[10, 4, 'tumbles']]);
  });

  it('puts a logarithmic axis on a log scale with ticks written in full, and leaves out an empty unit', () => {
    const ratio: MapAxisView = { label: 'Damping ratio', unit: '', toShown: (v) => v, log: true };
    const plot = cellMapPlot({ xValues: [0.01, 0.1], yValues: [0.004], cells: [cell('falls'), cell('falls')] }, ratio, amp);
    const xaxis = (plot.layout as { xaxis: { type: string; title: { text: string }; tickvals: number[]; ticktext: string[] } }).xaxis;
    expect(xaxis.type).toBe('log');
    expect(xaxis.title.text).toBe('Damping ratio');
    expect(xaxis.tickvals).toEqual([0.01, 0.02, 0.05, 0.1]);
    expect((plot.data[0] as { hovertemplate: string }).hovertemplate).toMatch(/^Damping ratio %\{x:\.4~g\}<br>/);
  });
});
