import { DEFAULT_UNITS, SHOWN_DIGITS, toDisplay, type DisplayUnits } from '../../core/units/display-units';
import { fieldInfo, fieldLabel, fieldUnit, formatFieldValue } from '../../core/units/field-table';
import { formatNumber } from '../../core/units/format-number';

/**
 * Case parameters as flat rows (dotted path, label, display value, unit) and the row-by-row difference of two revisions.
 * Works on the stored JSON as it is, so a revision whose parameters no longer validate still shows.
 */

/** Display order of keys per object path, as the Rig form reads; keys not listed follow in their stored order. */
const KEY_ORDER: Readonly<Record<string, readonly string[]>> = {
  '': ['schemaVersion', 'body', 'drive', 'damping', 'start', 'gravity', 'run'],
  body: ['kind', 'length', 'mass', 'rodLength', 'rodMass', 'bobMass', 'bobRadius', 'bobDistance', 'swingFrequency'],
  drive: ['direction', 'amplitude', 'frequency', 'waveform', 'ramp'],
  'drive.waveform': ['kind', 'connectingRod', 'terms'],
  'drive.ramp': ['fromFrequency', 'duration'],
  damping: ['viscousRatio', 'quadratic', 'friction', 'frictionSmoothing'],
  start: ['angle', 'rate'],
  run: ['duration', 'rtol', 'atol', 'outputPoints', 'strobePhase', 'transientFraction'],
  tolerances: ['field', 'distribution', 'sigma', 'halfWidth'],
  noise: ['kind', 'rms', 'density', 'bandwidth', 'seed'],
};

/** Stored JSON (PostgreSQL's JSONB) does not keep key order, so rows are put in the form's order. */
function ordered(prefix: string, entries: [string, unknown][]): [string, unknown][] {
  const order = KEY_ORDER[prefix.replace(/\.\d+(?=\.|$)/g, '')] ?? [];
  const rank = (key: string) => {
    const i = order.indexOf(key);
    return i === -1 ? order.length : i;
  };
  return [...entries].sort((a, b) => rank(a[0]) - rank(b[0]));
}

export interface FlatParam {
  readonly path: string;
  /** The field's name from the field table. */
  readonly label: string;
  /** Shown value in the display unit, or the text of a non-numeric value. */
  readonly value: string;
  readonly unit: string;
}

export interface ParamDiffRow {
  readonly path: string;
  readonly label: string;
  readonly unit: string;
  /** null: the field does not exist in that revision. */
  readonly left: string | null;
  readonly right: string | null;
  readonly changed: boolean;
}

/**
 * A tolerance's σ or ± reads in the unit of the field it is on ("Tolerance 1 σ, Drive amplitude": mm); null for
 * other paths.
 */
function toleranceSpread(root: unknown, path: string): { field: string } | null {
  const m = /^tolerances\.(\d+)\.(sigma|halfWidth)$/.exec(path);
  if (!m || root === null || typeof root !== 'object') return null;
  const list = (root as { tolerances?: unknown }).tolerances;
  const entry = Array.isArray(list) ? (list[Number(m[1])] as { field?: unknown } | undefined) : undefined;
  return typeof entry?.field === 'string' ? { field: entry.field } : null;
}

/** Depth-first, in the stored key order; arrays by index (`drive.waveform.terms.0.order`). */
export function flattenParams(params: unknown, units: DisplayUnits = DEFAULT_UNITS, prefix = '', root: unknown = params): FlatParam[] {
  if (params === null || typeof params !== 'object') {
    if (prefix === '') return [];
    const label = fieldLabel(prefix);
    if (typeof params === 'number') {
      const spread = toleranceSpread(root, prefix);
      const unitPath = spread?.field ?? prefix;
      const dimension = fieldInfo(unitPath)?.dimension ?? 'plain';
      const value = formatNumber(toDisplay(params, dimension, units), SHOWN_DIGITS);
      return [{ path: prefix, label: spread ? `${label}, ${fieldLabel(spread.field)}` : label, value, unit: fieldUnit(unitPath, units) }];
    }
    return [{ path: prefix, label, value: formatFieldValue(prefix, params, units), unit: '' }];
  }
  const entries: [string, unknown][] = Array.isArray(params)
    ? params.map((v, i) => [String(i), v])
    : ordered(prefix, Object.entries(params));
  return entries.flatMap(([key, value]) => flattenParams(value, units, prefix ? `${prefix}.${key}` : key, root));
}

/** Every path of either side once, in the left side's order with the right side's new paths after. */
export function diffParams(left: unknown, right: unknown, units: DisplayUnits = DEFAULT_UNITS): ParamDiffRow[] {
  const a = new Map(flattenParams(left, units).map((p) => [p.path, p]));
  const b = new Map(flattenParams(right, units).map((p) => [p.path, p]));
  const paths = [...new Set([...a.keys(), ...b.keys()])];
  return paths.map((path) => {
    const l = a.get(path) ?? null;
    const r = b.get(path) ?? null;
    return {
      path,
      label: l?.label ?? r?.label ?? path,
      unit: l?.unit || r?.unit || '',
      left: l?.value ?? null,
      right: r?.value ?? null,
      changed: l?.value !== r?.value,
    };
  });
}
