import { describe, expect, it } from 'vitest';
import { demoRigCase, templateCase } from '../case';
import { axisValues } from './chart';
import { driveLimits } from './floquet';
import { leanestColumns, leanestPoint, leanestRefine, type LeanestSpec } from './leanest';

const c = templateCase();

function spec(over: Partial<LeanestSpec> = {}): LeanestSpec {
  return {
    marginPercent: 15,
    cost: 'acceleration',
    grid: {
      x: { field: 'drive.frequency', from: 2, to: 80, count: 16, scale: 'log' },
      y: { field: 'drive.amplitude', from: 0.001, to: 0.2, count: 12, scale: 'log' },
    },
    movingMass: 0.5,
    envelope: {},
    relTolerance: 1e-6,
    ...over,
  };
}

function optimumOf(s: LeanestSpec) {
  const cols = leanestColumns(c, s, Array.from(axisValues(s.grid.x)), axisValues(s.grid.y));
  return { cols, optimum: leanestRefine(c, s, cols.points) };
}

const rel = (x: number, ref: number) => Math.abs(x / ref - 1);

describe('leanest drive', () => {
  it('keeps the stated amplitude margin at the optimum, as the Margins tab computes it there', () => {
    const s = spec();
    const { cols, optimum } = optimumOf(s);
    if (!optimum) throw new Error('no optimum');
    const limits = driveLimits({ ...c, drive: { ...c.drive, frequency: optimum.frequency, amplitude: optimum.amplitude } }, 'drive.amplitude');
    expect(limits.marginPercent).not.toBeNull();
    expect(Math.abs((limits.marginPercent as number) - 15)).toBeLessThan(1e-3);
    expect(optimum.binding).toContain('lower-margin');
    // No admissible column is cheaper than the refined optimum.
    for (const p of cols.points) if (p.feasible) expect(p.cost).toBeGreaterThanOrEqual(optimum.cost * (1 - 1e-9));
  }, 60_000);

  it('finds peak acceleration least at the lowest frequency where the band still has room for the margin', () => {
    const { optimum } = optimumOf(spec());
    if (!optimum) throw new Error('no optimum');
    expect(optimum.binding).toEqual(expect.arrayContaining(['lower-margin', 'upper-margin']));
    expect(optimum.found).toBe('edge');
    // Just below that frequency no amplitude holds with the margin.
    expect(leanestPoint(c, spec(), optimum.frequency * (1 - 1e-3)).feasible).toBe(false);
  }, 60_000);

  it('stops the stroke at the shaker\'s rated force: the cheapest stroke is the highest frequency the force allows', () => {
    const s = spec({ cost: 'stroke', envelope: { ratedForce: 100 } });
    const { optimum } = optimumOf(s);
    if (!optimum) throw new Error('no optimum');
    expect(optimum.binding).toEqual(expect.arrayContaining(['lower-margin', 'rated-force']));
    expect(rel(optimum.force, 100)).toBeLessThan(1e-3);
    expect(rel(optimum.stroke, 2 * optimum.amplitude)).toBeLessThan(1e-9);
  }, 60_000);

  it('holds a motor to its lowest speed when that is above the free optimum', () => {
    const s = spec({ envelope: { minFrequency: 10 } });
    const { optimum } = optimumOf(s);
    if (!optimum) throw new Error('no optimum');
    expect(optimum.binding).toContain('min-frequency');
    expect(rel(optimum.frequency, 10)).toBeLessThan(1e-5);
  }, 60_000);

  it('reports the power proxy as half the peak force times the peak velocity', () => {
    const { optimum } = optimumOf(spec({ cost: 'power' }));
    if (!optimum) throw new Error('no optimum');
    const w = 2 * Math.PI * optimum.frequency;
    expect(rel(optimum.cost, ((0.5 + 0.1) * optimum.amplitude * w * w * optimum.amplitude * w) / 2)).toBeLessThan(1e-6);
  }, 60_000);

  it('finds nothing when the margin is wider than any band in the range', () => {
    // Below about 3.5 Hz the 20 cm template's band is narrower than 1.15 / 0.85 (upper over lower limit).
    const grid = { ...spec().grid, x: { field: 'drive.frequency', from: 2, to: 3.3, count: 4 } };
    const { cols, optimum } = optimumOf(spec({ grid }));
    expect(optimum).toBeNull();
    expect(cols.cells.every((v) => v === 0)).toBe(true);
  }, 60_000);

  it('keeps a crank inside its radius range on a crank-slider rig', () => {
    const crank = demoRigCase('bench-crank-rig');
    if (!crank) throw new Error('demo rig missing');
    const s = spec({
      cost: 'power',
      grid: { x: { field: 'drive.frequency', from: 5, to: 60, count: 10, scale: 'log' }, y: { field: 'drive.amplitude', from: 0.002, to: 0.05, count: 6, scale: 'log' } },
      envelope: { minAmplitude: 0.015, maxAmplitude: 0.03 },
      relTolerance: 1e-5,
    });
    const cols = leanestColumns(crank, s, Array.from(axisValues(s.grid.x)), null);
    const optimum = leanestRefine(crank, s, cols.points);
    if (!optimum) throw new Error('no optimum');
    expect(optimum.amplitude).toBeGreaterThanOrEqual(0.015 * (1 - 1e-12));
    expect(optimum.amplitude).toBeLessThanOrEqual(0.03);
    expect(optimum.amplitudeMarginPercent as number).toBeGreaterThanOrEqual(15 - 1e-3);
  }, 120_000);
});
