/**
 * Numbers and words as the app shows them, for places that render outside the Angular tabs (the case report) or
 * compare stored results (History): the default display units (mm, Hz, °), the outcome and recheck words, and the
 * label and unit of each sweepable field. Stored values stay SI.
 */
import { SWEEPABLE_FIELDS } from './case-fields';
import type { ChainLink } from './case-schema';

/** A number for reading: `digits` significant digits, no trailing zeros, a dash when missing. */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '—';
  if (!Number.isFinite(value)) return value > 0 ? '∞' : '−∞';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  const text = abs >= 1e6 || abs < 1e-4 ? value.toExponential(digits - 1).replace(/\.?0+e/, 'e') : String(Number(value.toPrecision(digits)));
  return text.replace(/^-/, '−');
}

/** A signed percentage: "+12.3 %". */
export function formatPercent(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${value < 0 ? '−' : '+'}${formatNumber(Math.abs(value), digits)} %`;
}

/** How a stored SI quantity is shown: unit text and the factor from SI. */
export interface ShownUnit {
  readonly unit: string;
  readonly scale: number;
}

export const SHOWN_UNITS = {
  length: { unit: 'mm', scale: 1000 },
  frequency: { unit: 'Hz', scale: 1 },
  angle: { unit: '°', scale: 180 / Math.PI },
  rate: { unit: '°/s', scale: 180 / Math.PI },
} as const satisfies Record<string, ShownUnit>;

/** An SI value in a shown unit: "12.5 mm", "3.2°". */
export function formatShown(si: number | null | undefined, unit: ShownUnit, digits = 4): string {
  if (si === null || si === undefined || Number.isNaN(si)) return '—';
  const text = formatNumber(si * unit.scale, digits);
  if (unit.unit === '') return text;
  return unit.unit === '°' ? `${text}°` : `${text} ${unit.unit}`;
}

export const formatLength = (si: number | null | undefined, digits = 4): string => formatShown(si, SHOWN_UNITS.length, digits);
export const formatFrequency = (si: number | null | undefined, digits = 4): string => formatShown(si, SHOWN_UNITS.frequency, digits);
export const formatAngle = (si: number | null | undefined, digits = 4): string => formatShown(si, SHOWN_UNITS.angle, digits);

/** The engine's outcome words as the UI shows them. */
export const OUTCOME_WORDS: Readonly<Record<string, string>> = {
  'holds-upright': 'holds upright',
  'settles-tilted': 'settles tilted',
  falls: 'falls',
  tumbles: 'tumbles',
  irregular: 'irregular',
};

/** Outcome words for a stored value; a missing outcome (invalid case at that point) reads as such. */
export function outcomeWords(outcome: unknown): string {
  if (typeof outcome !== 'string') return 'no valid case';
  return OUTCOME_WORDS[outcome] ?? outcome;
}

/** One colour per outcome (the same as the tabs' plots). */
export const OUTCOME_COLOURS: Readonly<Record<string, string>> = {
  'holds-upright': '#1b7f5b',
  'settles-tilted': '#3b6fb6',
  falls: '#c0392b',
  tumbles: '#8e44ad',
  irregular: '#b7791f',
};

export const RECHECK_STATE_WORDS: Readonly<Record<string, string>> = {
  draft: 'Draft',
  'awaiting-recheck': 'Awaiting recheck',
  confirmed: 'Confirmed',
  disputed: 'Disputed',
};

const SI_UNIT_SHOWN: Readonly<Record<string, ShownUnit>> = {
  m: SHOWN_UNITS.length,
  Hz: SHOWN_UNITS.frequency,
  rad: SHOWN_UNITS.angle,
  'rad/s': SHOWN_UNITS.rate,
  'rad/s^2': { unit: 'rad/s²', scale: 1 },
  'm/s^2': { unit: 'm/s²', scale: 1 },
  '1/rad': { unit: '1/rad', scale: 1 },
  kg: { unit: 'kg', scale: 1 },
  '1': { unit: '', scale: 1 },
};

/** Label and shown unit of a sweepable case field ("Drive amplitude", mm). */
export function fieldDisplay(path: string): { label: string; unit: ShownUnit } {
  const field = SWEEPABLE_FIELDS.find((f) => f.path === path);
  if (!field) return { label: 'Swept value', unit: { unit: '', scale: 1 } };
  return { label: field.label, unit: SI_UNIT_SHOWN[field.unit] ?? { unit: field.unit, scale: 1 } };
}

/** The run kinds as the tabs name them. */
export const RUN_KIND_LABELS: Readonly<Record<string, string>> = {
  motion: 'Motion',
  margins: 'Floquet margins',
  sweep: 'Sweep',
  chart: 'Stability chart',
  map: 'Outcome map',
  basin: 'Basin map',
  leanest: 'Leanest drive',
  holdprob: 'Hold probability',
};

/** Joint damping as shown: "0.002 N·m·s/rad". */
export function formatJointDamping(si: number): string {
  return `${formatNumber(si)} N·m·s/rad`;
}

/**
 * One chain link in words and shown units: "Link 1: rod 300 mm, 0.2 kg, bob 0.05 kg (radius 10 mm) at 280 mm;
 * joint damping 0 N·m·s/rad".
 */
export function chainLinkWords(link: ChainLink, index: number): string {
  const body =
    link.kind === 'point-mass'
      ? `point mass ${formatNumber(link.mass)} kg at ${formatLength(link.length)}`
      : `rod ${formatLength(link.rodLength)}, ${formatNumber(link.rodMass)} kg` +
        (link.bobMass > 0 ? `, bob ${formatNumber(link.bobMass)} kg (radius ${formatLength(link.bobRadius)}) at ${formatLength(link.bobDistance)}` : '');
  const bend = link.startBend ? `; starts bent ${formatAngle(link.startBend)}` : '';
  const bendRate = link.startBendRate ? ` turning ${formatShown(link.startBendRate, SHOWN_UNITS.rate)}` : '';
  return `Link ${index + 1}: ${body}; joint damping ${formatJointDamping(link.jointDamping)}${bend}${bendRate}`;
}

/** m: hinge-to-hinge length of a chain link. */
export function chainLinkLength(link: ChainLink): number {
  return link.kind === 'point-mass' ? link.length : link.rodLength;
}
