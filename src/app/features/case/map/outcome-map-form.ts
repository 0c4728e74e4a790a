import { getField, sweepableFieldsFor } from '../../../../../shared/case/case-fields';
import type { CaseParams } from '../../../../../shared/case/case-schema';
import type { Grid2, GridAxis } from '../../../../../shared/engine/chart';
import { MAX_MAP_COUNT } from '../../../../../shared/engine/run-kinds';
import { fromDisplay, toDisplay, type Dimension, type DisplayUnits } from '../../../core/units/display-units';
import { fieldInfo, fieldUnit } from '../../../core/units/field-table';
import { rangeProblem } from '../range-check';
import type { MapAxisView } from './cell-map-plot';

/** Fewest cells per axis the form offers (one cell is no map). */
export const MIN_MAP_COUNT = 2;

/** One axis of the outcome-map form, as the user typed it: the field, its range in display units, cells, spacing. */
export interface MapAxisForm {
  readonly field: string;
  readonly from: number | null;
  readonly to: number | null;
  readonly count: number | null;
  readonly scale: 'linear' | 'log';
}

/** How the axes are called on screen. */
export const AXIS_NAMES = { x: 'Horizontal axis', y: 'Vertical axis' } as const;

/** A map field as the tabs show it: the Sweeps tab's label, the display unit of the Rig form. */
export function mapField(path: string, params: CaseParams, units: DisplayUnits): { label: string; dimension: Dimension; unit: string } {
  const label = sweepableFieldsFor(params).find((f) => f.path === path)?.label ?? fieldInfo(path)?.label ?? path;
  return { label, dimension: fieldInfo(path)?.dimension ?? 'plain', unit: fieldUnit(path, units) };
}

/** A grid axis (SI) as the plot shows it. */
export function mapAxisView(axis: GridAxis, params: CaseParams, units: DisplayUnits): MapAxisView {
  const f = mapField(axis.field, params, units);
  return { label: f.label, unit: f.unit, toShown: (si) => toDisplay(si, f.dimension, units), log: axis.scale === 'log' };
}

/** A grid axis (SI) as the form shows it. */
export function axisForm(axis: GridAxis, params: CaseParams, units: DisplayUnits): MapAxisForm {
  const { dimension } = mapField(axis.field, params, units);
  return {
    field: axis.field,
    from: toDisplay(axis.from, dimension, units),
    to: toDisplay(axis.to, dimension, units),
    count: axis.count,
    scale: axis.scale ?? 'linear',
  };
}

/** A default range for a newly picked field: half to twice the case's value (one unit either side of zero). */
export function defaultAxisForm(field: string, count: number, params: CaseParams, units: DisplayUnits): MapAxisForm {
  const value = getField(params, field);
  const [from, to] = value > 0 ? [value / 2, value * 2] : [value - 1, value + 1];
  return axisForm({ field, from, to, count, scale: 'linear' }, params, units);
}

function axisProblem(name: string, a: MapAxisForm): string | null {
  if (a.from === null || a.to === null || !Number.isFinite(a.from) || !Number.isFinite(a.to)) return `${name}: enter both ends of the range.`;
  if (a.from === a.to) return `${name}: the range needs two different ends.`;
  if (a.count === null || !Number.isInteger(a.count) || a.count < MIN_MAP_COUNT || a.count > MAX_MAP_COUNT) {
    return `${name}: cells must be a whole number from ${MIN_MAP_COUNT} to ${MAX_MAP_COUNT}.`;
  }
  if (a.scale === 'log' && (a.from <= 0 || a.to <= 0)) return `${name}: a logarithmic spacing needs both ends above zero.`;
  return null;
}

function toGridAxis(a: MapAxisForm, params: CaseParams, units: DisplayUnits): GridAxis {
  const { dimension } = mapField(a.field, params, units);
  return {
    field: a.field,
    from: fromDisplay(a.from ?? 0, dimension, units),
    to: fromDisplay(a.to ?? 0, dimension, units),
    count: a.count ?? 0,
    scale: a.scale,
  };
}

/**
 * The outcome map the form asks for, in SI, or the first problem in words (axis by axis, then every corner of the
 * grid checked against the case's rules, as the sweep does).
 */
export function mapGridOf(x: MapAxisForm, y: MapAxisForm, params: CaseParams, units: DisplayUnits): { grid: Grid2 } | { problem: string } {
  const fields = sweepableFieldsFor(params).map((f) => f.path);
  if (!fields.includes(x.field) || !fields.includes(y.field)) return { problem: 'Pick a field for each axis.' };
  if (x.field === y.field) return { problem: 'Pick two different fields: one for each axis.' };
  const problem = axisProblem(AXIS_NAMES.x, x) ?? axisProblem(AXIS_NAMES.y, y);
  if (problem) return { problem };
  const grid = { x: toGridAxis(x, params, units), y: toGridAxis(y, params, units) };
  const corner = rangeProblem(params, [grid.x, grid.y], units);
  return corner ? { problem: corner } : { grid };
}
