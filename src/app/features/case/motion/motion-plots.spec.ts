import { demoRigCase } from '../../../../../shared/case/templates';
import { simulateMotion } from '../../../../../shared/engine/motion';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { angleTimePlot, phasePortraitPlot, strobePlot } from './motion-plots';

describe('angleTimePlot', () => {
  it('draws every link of a chain with its slow motion, and puts every joint in the CSV', () => {
    const demo = demoRigCase('three-link-beads');
    if (!demo) throw new Error('three-link demo missing');
    const r = simulateMotion({ ...demo, run: { ...demo.run, duration: 0.5, outputPoints: 50 } });
    const plot = angleTimePlot(r, DEFAULT_UNITS);
    expect(plot.data.map((d) => d['name'])).toEqual([
      'link 1 angle θ1', 'link 1 slow motion', 'link 2 angle θ2', 'link 2 slow motion', 'link 3 angle θ3', 'link 3 slow motion',
    ]);
    expect(plot.csv.columns.map((c) => c.header)).toEqual(['t', 'theta1', 'rate1', 'theta2', 'rate2', 'theta3', 'rate3', 'pivot position']);
    // degrees by default; the demo starts link 2 bent -0.04 rad from link 1 (0.05 rad)
    const first = plot.csv.rows[0];
    expect(first[1]).toBeCloseTo((0.05 * 180) / Math.PI, 10);
    expect(first[3]).toBeCloseTo((0.01 * 180) / Math.PI, 10);
    const phase = phasePortraitPlot(r, DEFAULT_UNITS);
    expect(phase.data.map((d) => d['name'])).toEqual(['link 1', 'link 2', 'link 3']);
    expect(phase.csv.columns).toHaveLength(7);
    // The stroboscopic section: every link's angle and rate once per drive period.
    const strobe = strobePlot(r, DEFAULT_UNITS);
    expect(strobe.data.map((d) => d['name'])).toEqual(['link 1', 'link 2', 'link 3']);
    expect(strobe.csv.columns.map((c) => c.header)).toEqual(['t', 'theta1', 'rate1', 'theta2', 'rate2', 'theta3', 'rate3']);
    expect(strobe.csv.rows.length).toBe(r.strobe.t.length);
    expect(strobe.csv.rows.length).toBeGreaterThan(5);
    const chain = r.chain;
    if (!chain) throw new Error('chain motion missing');
    expect(strobe.csv.rows[2][4]).toBeCloseTo((chain.strobeRate[1][2] * 180) / Math.PI, 9);
    expect(Array.from(r.strobe.rate)).toEqual(Array.from(chain.strobeRate[0]));
  });

  it('keeps one angle trace for a single body', () => {
    const demo = demoRigCase('shaker-tall-rod');
    if (!demo) throw new Error('demo missing');
    const plot = angleTimePlot(simulateMotion({ ...demo, run: { ...demo.run, duration: 0.5, outputPoints: 50 } }), DEFAULT_UNITS);
    expect(plot.data.map((d) => d['name'])).toEqual(['angle θ', 'slow motion (period mean)']);
  });
});
