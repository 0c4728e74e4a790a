/**
 * Case parameters as flat rows (dotted path, display value, unit) and the row-by-row difference of two revisions.
 * Works on the stored JSON as it is, so a revision whose parameters no longer validate still shows.
 */

/** A display unit: how a stored SI value is shown. */
interface DisplayUnit {
  readonly unit: string;
  readonly scale: number;
}

const MM: DisplayUnit = { unit: 'mm', scale: 1000 };
const DEG: DisplayUnit = { unit: '°', scale: 180 / Math.PI };

/** By the last key of the path (or the whole path where the key alone is ambiguous). */
const UNITS: Readonly<Record<string, DisplayUnit>> = {
  'body.length': MM,
  'body.rodLength': MM,
  'body.bobRadius': MM,
  'body.bobDistance': MM,
  'body.mass': { unit: 'kg', scale: 1 },
  'body.rodMass': { unit: 'kg', scale: 1 },
  'body.bobMass': { unit: 'kg', scale: 1 },
  'body.swingFrequency': { unit: 'Hz', scale: 1 },
  'drive.direction': DEG,
  'drive.amplitude': MM,
  'drive.frequency': { unit: 'Hz', scale: 1 },
  'drive.waveform.connectingRod': MM,
  'drive.ramp.fromFrequency': { unit: 'Hz', scale: 1 },
  'drive.ramp.duration': { unit: 's', scale: 1 },
  phase: DEG,
  relAmplitude: { unit: '× amplitude', scale: 1 },
  'damping.viscousRatio': { unit: 'ζ', scale: 1 },
  'damping.quadratic': { unit: '1/rad', scale: 1 },
  'damping.friction': { unit: 'rad/s²', scale: 1 },
  'damping.frictionSmoothing': { unit: 'rad/s', scale: 1 },
  'start.angle': DEG,
  'start.rate': { unit: 'rad/s', scale: 1 },
  gravity: { unit: 'm/s²', scale: 1 },
  'run.duration': { unit: 's', scale: 1 },
  'run.strobePhase': DEG,
  'run.transientFraction': { unit: 'of the run', scale: 1 },
  'run.outputPoints': { unit: 'points', scale: 1 },
};

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
  /** Shown value in the display unit, or the text of a non-numeric value. */
  readonly value: string;
  readonly unit: string;
}

export interface ParamDiffRow {
  readonly path: string;
  readonly unit: string;
  /** null: the field does not exist in that revision. */
  readonly left: string | null;
  readonly right: string | null;
  readonly changed: boolean;
}

function unitOf(path: string): DisplayUnit | null {
  const key = path.split('.').pop() ?? path;
  return UNITS[path] ?? UNITS[key] ?? null;
}

/** Up to 9 significant digits, without float noise (0.1 + 0.2 shows as 0.3). */
export function formatNumber(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  if (value === 0) return '0';
  return String(Number(value.toPrecision(9)));
}

/** Depth-first, in the stored key order; arrays by index (`drive.waveform.terms.0.order`). */
export function flattenParams(params: unknown, prefix = ''): FlatParam[] {
  if (params === null || typeof params !== 'object') {
    if (prefix === '') return [];
    const unit = unitOf(prefix);
    if (typeof params === 'number') {
      return [{ path: prefix, value: formatNumber(unit ? params * unit.scale : params), unit: unit?.unit ?? '' }];
    }
    return [{ path: prefix, value: String(params), unit: '' }];
  }
  const entries: [string, unknown][] = Array.isArray(params)
    ? params.map((v, i) => [String(i), v])
    : ordered(prefix, Object.entries(params));
  return entries.flatMap(([key, value]) => flattenParams(value, prefix ? `${prefix}.${key}` : key));
}

/** Every path of either side once, in the left side's order with the right side's new paths after. */
export function diffParams(left: unknown, right: unknown): ParamDiffRow[] {
  const a = new Map(flattenParams(left).map((p) => [p.path, p]));
  const b = new Map(flattenParams(right).map((p) => [p.path, p]));
  const paths = [...new Set([...a.keys(), ...b.keys()])];
  return paths.map((path) => {
    const l = a.get(path) ?? null;
    const r = b.get(path) ?? null;
    return {
      path,
      unit: l?.unit || r?.unit || '',
      left: l?.value ?? null,
      right: r?.value ?? null,
      changed: l?.value !== r?.value,
    };
  });
}
