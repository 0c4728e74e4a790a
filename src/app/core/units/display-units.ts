import { fromSi, toSi, unitById } from '../../../../shared/engine/units';

export type LengthUnit = 'm' | 'cm' | 'mm';
export type FrequencyUnit = 'Hz' | 'rpm';
export type AngleUnit = 'deg' | 'rad';

/** The units the page shows; cases are always stored in SI. */
export interface DisplayUnits {
  readonly length: LengthUnit;
  readonly frequency: FrequencyUnit;
  readonly angle: AngleUnit;
}

export const DEFAULT_UNITS: DisplayUnits = { length: 'mm', frequency: 'Hz', angle: 'deg' };

/** What a numeric field measures; decides which display unit it takes. */
export type Dimension = 'length' | 'frequency' | 'angle' | 'rate' | 'plain';

/** Unit id (shared/engine/units.ts) of a dimension under the chosen display units; null for plain numbers. */
export function unitIdOf(dimension: Dimension, units: DisplayUnits): string | null {
  switch (dimension) {
    case 'length':
      return units.length;
    case 'frequency':
      return units.frequency;
    case 'angle':
      return units.angle;
    case 'rate':
      return units.angle === 'deg' ? 'deg/s' : 'rad/s';
    case 'plain':
      return null;
  }
}

/** Short label of a dimension's display unit, e.g. "mm", "rev/min", "°/s". */
export function unitLabelOf(dimension: Dimension, units: DisplayUnits): string {
  const id = unitIdOf(dimension, units);
  return id === null ? '' : unitById(id).label;
}

/** SI value to display value, rounded to 12 significant digits so 0.02 m shows as 20 mm, not 20.000000000000004. */
export function toDisplay(si: number, dimension: Dimension, units: DisplayUnits): number {
  const id = unitIdOf(dimension, units);
  const value = id === null ? si : fromSi(si, id);
  return Number.isFinite(value) ? Number(value.toPrecision(12)) : value;
}

/** Significant digits a Rig field shows; the stored SI value keeps all of its digits (see RigForm). */
export const SHOWN_DIGITS = 6;

/** SI value as a Rig field shows it: in the display unit, at most SHOWN_DIGITS significant digits. */
export function toShown(si: number, dimension: Dimension, units: DisplayUnits): number {
  const id = unitIdOf(dimension, units);
  const value = id === null ? si : fromSi(si, id);
  return Number.isFinite(value) ? Number(value.toPrecision(SHOWN_DIGITS)) : value;
}

/** Display value back to SI. */
export function fromDisplay(value: number, dimension: Dimension, units: DisplayUnits): number {
  const id = unitIdOf(dimension, units);
  return id === null ? value : toSi(value, id);
}

/** Dimension of a stored SI unit string (SWEEPABLE_FIELDS units). */
export function dimensionOfSiUnit(unit: string): Dimension {
  if (unit === 'm') return 'length';
  if (unit === 'Hz') return 'frequency';
  if (unit === 'rad') return 'angle';
  if (unit === 'rad/s') return 'rate';
  return 'plain';
}

