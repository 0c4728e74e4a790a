import type { CaseParams } from './case-schema';

/** A numeric case field that sweeps, stability charts and maps can vary. */
export interface SweepableField {
  /** Dotted path into CaseParams. */
  path: string;
  label: string;
  /** SI unit as stored. */
  unit: string;
  /** Body kind the field exists for; absent when it exists for every case. */
  bodyKind?: CaseParams['body']['kind'];
  /** True for fields a chain holds fixed (it is driven vertically and damped at its joints). */
  notForChain?: true;
  /** Waveform kind the field exists for; absent when it exists for every waveform. */
  waveformKind?: CaseParams['drive']['waveform']['kind'];
}

export const SWEEPABLE_FIELDS: readonly SweepableField[] = [
  { path: 'drive.amplitude', label: 'Drive amplitude', unit: 'm' },
  { path: 'drive.frequency', label: 'Drive frequency', unit: 'Hz' },
  { path: 'drive.direction', label: 'Drive direction from vertical', unit: 'rad', notForChain: true },
  { path: 'drive.waveform.connectingRod', label: 'Connecting rod length', unit: 'm', waveformKind: 'crank-slider' },
  { path: 'damping.viscousRatio', label: 'Damping ratio', unit: '1', notForChain: true },
  { path: 'damping.quadratic', label: 'Quadratic (air) damping', unit: '1/rad', notForChain: true },
  { path: 'damping.friction', label: 'Pivot friction', unit: 'rad/s^2', notForChain: true },
  { path: 'body.length', label: 'Length', unit: 'm', bodyKind: 'point-mass' },
  { path: 'body.rodLength', label: 'Rod length', unit: 'm', bodyKind: 'rod-bob' },
  { path: 'body.bobDistance', label: 'Bob distance', unit: 'm', bodyKind: 'rod-bob' },
  { path: 'body.bobMass', label: 'Bob mass', unit: 'kg', bodyKind: 'rod-bob' },
  { path: 'body.swingFrequency', label: 'Free swing frequency', unit: 'Hz', bodyKind: 'measured-swing' },
  { path: 'start.angle', label: 'Start angle', unit: 'rad' },
  { path: 'start.rate', label: 'Start rate', unit: 'rad/s' },
  { path: 'gravity', label: 'Gravity', unit: 'm/s^2' },
];

/** Fields that exist in this case (its body and waveform kinds) and that it may vary. */
export function sweepableFieldsFor(params: CaseParams): SweepableField[] {
  return SWEEPABLE_FIELDS.filter(
    (f) =>
      (f.bodyKind === undefined || f.bodyKind === params.body.kind) &&
      !(f.notForChain && params.body.kind === 'chain') &&
      (f.waveformKind === undefined || f.waveformKind === params.drive.waveform.kind),
  );
}

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/**
 * Reads a numeric field by dotted path. Throws when the path does not exist in this case or does not name a
 * number (a programming error: paths come from SWEEPABLE_FIELDS).
 */
export function getField(params: CaseParams, path: string): number {
  let node: unknown = params;
  for (const key of path.split('.')) {
    if (!isRecord(node) || !(key in node)) throw new Error(`case has no field "${path}"`);
    node = node[key];
  }
  if (typeof node !== 'number') throw new Error(`case field "${path}" is not numeric`);
  return node;
}

function setIn(node: unknown, keys: readonly string[], value: number, path: string): unknown {
  if (!isRecord(node) || !(keys[0] in node)) throw new Error(`case has no field "${path}"`);
  const [key, ...rest] = keys;
  if (rest.length === 0) {
    if (typeof node[key] !== 'number') throw new Error(`case field "${path}" is not numeric`);
    return { ...node, [key]: value };
  }
  return { ...node, [key]: setIn(node[key], rest, value, path) };
}

/** Returns a NEW case with one numeric field replaced; the input is left untouched. The result is not re-validated. */
export function setField(params: CaseParams, path: string, value: number): CaseParams {
  return setIn(params, path.split('.'), value, path) as CaseParams;
}
