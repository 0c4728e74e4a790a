import { toDisplay, unitLabelOf, type Dimension, type DisplayUnits } from './rig/rig-form';

/** A number for reading: `digits` significant digits, no trailing zeros, a dash when missing. */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '—';
  if (!Number.isFinite(value)) return value > 0 ? '∞' : '−∞';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 1e6 || abs < 1e-4) return value.toExponential(digits - 1).replace(/\.?0+e/, 'e');
  return String(Number(value.toPrecision(digits)));
}

/** An SI value shown in the chosen display unit, with the unit: "12.5 mm". */
export function formatIn(si: number | null | undefined, dimension: Dimension, units: DisplayUnits, digits = 4): string {
  if (si === null || si === undefined) return '—';
  const unit = unitLabelOf(dimension, units);
  const text = formatNumber(toDisplay(si, dimension, units), digits);
  if (!unit) return text;
  return unit.startsWith('°') ? `${text}${unit}` : `${text} ${unit}`;
}

/** A signed percentage: "+12.3 %". */
export function formatPercent(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const text = formatNumber(Math.abs(value), digits);
  return `${value < 0 ? '−' : '+'}${text} %`;
}

/** The outcome words of the engine as the UI shows them. */
export const OUTCOME_LABELS: Readonly<Record<string, string>> = {
  'holds-upright': 'holds upright',
  'settles-tilted': 'settles tilted',
  falls: 'falls',
  tumbles: 'tumbles',
  irregular: 'irregular',
};

/** One colour per outcome, used by plots, maps and chips alike. */
export const OUTCOME_COLORS: Readonly<Record<string, string>> = {
  'holds-upright': '#1b7f5b',
  'settles-tilted': '#3b6fb6',
  falls: '#c0392b',
  tumbles: '#8e44ad',
  irregular: '#b7791f',
};
