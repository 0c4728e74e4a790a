import { demoRigCase, templateCase } from '../../../../../shared/case/templates';
import { defaultRunSettings } from '../../../../../shared/engine/run-kinds';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { axisForm, defaultAxisForm, mapAxisView, mapGridOf, type MapAxisForm } from './outcome-map-form';

const params = templateCase();

function defaults(): { x: MapAxisForm; y: MapAxisForm } {
  const { grid } = defaultRunSettings('map', params);
  return { x: axisForm(grid.x, params, DEFAULT_UNITS), y: axisForm(grid.y, params, DEFAULT_UNITS) };
}

describe('outcome map form', () => {
  it('starts from the registry default, drive frequency by drive amplitude, in Hz and mm', () => {
    const { x, y } = defaults();
    const f = params.drive.frequency;
    expect(x).toEqual({ field: 'drive.frequency', from: f / 2, to: 2 * f, count: 9, scale: 'linear' });
    expect(y.field).toBe('drive.amplitude');
    expect(y.from).toBeCloseTo((params.drive.amplitude * 1000) / 2, 9);
    const view = mapAxisView(defaultRunSettings('map', params).grid.y, params, DEFAULT_UNITS);
    expect(view.label).toBe('Drive amplitude');
    expect(view.unit).toBe('mm');
    expect(view.toShown(0.004)).toBe(4);
  });

  it('turns a valid form into the SI grid the run registry accepts', () => {
    const { x, y } = defaults();
    const result = mapGridOf({ ...x, count: 6 }, { ...y, count: 5, scale: 'log' }, params, DEFAULT_UNITS);
    if (!('grid' in result)) throw new Error(result.problem);
    expect(result.grid.x).toEqual({ field: 'drive.frequency', from: x.from, to: x.to, count: 6, scale: 'linear' });
    expect(result.grid.y.from).toBeCloseTo(params.drive.amplitude / 2, 12);
    expect(result.grid.y.scale).toBe('log');
    expect(defaultRunSettings('map', params).kind).toBe('map');
  });

  it('says in words what is wrong with the form, naming the axis', () => {
    const { x, y } = defaults();
    const problem = (a: MapAxisForm, b: MapAxisForm) => {
      const r = mapGridOf(a, b, params, DEFAULT_UNITS);
      return 'problem' in r ? r.problem : null;
    };
    expect(problem(x, { ...y, field: 'drive.frequency' })).toBe('Pick two different fields: one for each axis.');
    expect(problem({ ...x, to: null }, y)).toBe('Horizontal axis: enter both ends of the range.');
    expect(problem(x, { ...y, to: y.from })).toBe('Vertical axis: the range needs two different ends.');
    expect(problem(x, { ...y, count: 201 })).toBe('Vertical axis: cells must be a whole number from 2 to 200.');
    expect(problem({ ...x, count: 2.5 }, y)).toBe('Horizontal axis: cells must be a whole number from 2 to 200.');
    const angle = defaultAxisForm('start.angle', 5, params, DEFAULT_UNITS);
    expect(angle.field).toBe('start.angle');
    expect(problem({ ...angle, from: -10, to: 10, scale: 'log' }, y)).toBe('Horizontal axis: a logarithmic spacing needs both ends above zero.');
  });

  it('refuses a corner of the grid the case rules forbid, in display units', () => {
    const { x, y } = defaults();
    const r = mapGridOf(x, { ...y, to: -5 }, params, DEFAULT_UNITS);
    expect('problem' in r && r.problem).toMatch(/^At Drive frequency [\d.]+ Hz, Drive amplitude −5 mm: Drive amplitude must be at least 0 mm/);
  });

  it('offers a picked field a range around the case value in its display unit', () => {
    const rod = demoRigCase('shaker-tall-rod');
    if (!rod) throw new Error('demo rig missing');
    const a = defaultAxisForm('body.rodLength', 7, rod, DEFAULT_UNITS);
    expect(a).toEqual({ field: 'body.rodLength', from: rod.body.kind === 'rod-bob' ? rod.body.rodLength * 500 : NaN, to: rod.body.kind === 'rod-bob' ? rod.body.rodLength * 2000 : NaN, count: 7, scale: 'linear' });
    expect(mapAxisView({ field: 'start.angle', from: 0, to: 1, count: 2 }, rod, DEFAULT_UNITS).unit).toBe('°');
  });
});
