import type { BoundRelation } from '../../../../shared/case/case-schema';
import { boundWords } from '../../../../shared/case/case-schema';
import { formatNumber, formatPercent } from '../../../../shared/case/display';
import { toDisplay, unitLabelOf, type Dimension, type DisplayUnits } from './display-units';

/**
 * The client's number formatting. The one rule for significant digits is shared/case/display.ts's formatNumber
 * (the case report uses it too); this adds display units and limits.
 */
export { formatNumber, formatPercent };

/** Significant digits of a number shown for reading. */
export const READING_DIGITS = 4;

/** A number with its unit: "12.5 mm", "3°", or the bare number when the unit is empty. */
export function withUnit(text: string, unit: string): string {
  if (!unit || text === '—') return text;
  return unit.startsWith('°') ? `${text}${unit}` : `${text} ${unit}`;
}

/** An SI value shown in the chosen display unit, with the unit: "12.5 mm". */
export function formatIn(si: number | null | undefined, dimension: Dimension, units: DisplayUnits, digits = READING_DIGITS): string {
  if (si === null || si === undefined) return '—';
  return withUnit(formatNumber(toDisplay(si, dimension, units), digits), unitLabelOf(dimension, units));
}

/**
 * A limit in the display unit, rounded towards the allowed side so the shown value itself is allowed:
 * "at least 1.115 Hz" (1.1144... rounded up), "at most 10 000 mm".
 */
export function formatBound(relation: BoundRelation, si: number, dimension: Dimension, units: DisplayUnits, plainUnit = ''): string {
  const value = toDisplay(si, dimension, units);
  const unit = dimension === 'plain' ? plainUnit : unitLabelOf(dimension, units);
  let shown = value;
  if (value !== 0 && Number.isFinite(value)) {
    const step = 10 ** (Math.floor(Math.log10(Math.abs(value))) - (READING_DIGITS - 1));
    const round = relation.startsWith('>') ? Math.ceil : Math.floor;
    shown = round(Number((value / step).toPrecision(12))) * step;
  }
  return `${boundWords(relation)} ${withUnit(formatNumber(shown), unit)}`;
}
