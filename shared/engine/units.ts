/** Units the UI offers; the engine and stored cases are SI (m, kg, s, Hz, rad). */
export type Dimension = 'length' | 'frequency' | 'angle' | 'rate' | 'acceleration' | 'mass' | 'time' | 'force';

export interface UnitDef {
  id: string;
  label: string;
  dimension: Dimension;
  /** SI value of one of this unit; displayed = si / toSi */
  toSi: number;
}

const STANDARD_GRAVITY = 9.80665;

export const UNITS: readonly UnitDef[] = [
  { id: 'm', label: 'm', dimension: 'length', toSi: 1 },
  { id: 'cm', label: 'cm', dimension: 'length', toSi: 0.01 },
  { id: 'mm', label: 'mm', dimension: 'length', toSi: 0.001 },
  { id: 'Hz', label: 'Hz', dimension: 'frequency', toSi: 1 },
  { id: 'rpm', label: 'rev/min', dimension: 'frequency', toSi: 1 / 60 },
  { id: 'rad/s-freq', label: 'rad/s', dimension: 'frequency', toSi: 1 / (2 * Math.PI) },
  { id: 'rad', label: 'rad', dimension: 'angle', toSi: 1 },
  { id: 'deg', label: '°', dimension: 'angle', toSi: Math.PI / 180 },
  { id: 'rad/s', label: 'rad/s', dimension: 'rate', toSi: 1 },
  { id: 'deg/s', label: '°/s', dimension: 'rate', toSi: Math.PI / 180 },
  { id: 'm/s2', label: 'm/s²', dimension: 'acceleration', toSi: 1 },
  { id: 'g', label: 'g', dimension: 'acceleration', toSi: STANDARD_GRAVITY },
  { id: 'kg', label: 'kg', dimension: 'mass', toSi: 1 },
  { id: 'gram', label: 'g', dimension: 'mass', toSi: 0.001 },
  { id: 's', label: 's', dimension: 'time', toSi: 1 },
  { id: 'ms', label: 'ms', dimension: 'time', toSi: 0.001 },
  { id: 'N', label: 'N', dimension: 'force', toSi: 1 },
];

export function unitById(id: string): UnitDef {
  const unit = UNITS.find((u) => u.id === id);
  if (!unit) throw new Error(`unknown unit "${id}"`);
  return unit;
}

/** Converts between two units of one dimension; throws if the dimensions differ. */
export function convert(value: number, from: string, to: string): number {
  const a = unitById(from);
  const b = unitById(to);
  if (a.dimension !== b.dimension) throw new Error(`cannot convert ${a.dimension} (${from}) to ${b.dimension} (${to})`);
  return (value * a.toSi) / b.toSi;
}

export const toSi = (value: number, unit: string): number => value * unitById(unit).toSi;
export const fromSi = (value: number, unit: string): number => value / unitById(unit).toSi;

export const degToRad = (deg: number): number => (deg * Math.PI) / 180;
export const radToDeg = (rad: number): number => (rad * 180) / Math.PI;
export const hzToRpm = (hz: number): number => hz * 60;
export const rpmToHz = (rpm: number): number => rpm / 60;
export const hzToRadPerSecond = (hz: number): number => 2 * Math.PI * hz;
export const radPerSecondToHz = (w: number): number => w / (2 * Math.PI);
