/**
 * A run's compared numbers in the reviewer's terms: labels and units as in the tabs, the entries that differ first,
 * a sweep's points as one compact table in point order, and the tolerance stated once for the run.
 */
import { fieldInfo, fieldLabel, formatFieldValue } from '../../core/units/field-table';
import { DEFAULT_UNITS } from '../../core/units/display-units';
import { formatIn, formatNumber, withUnit } from '../../core/units/format-number';
import { RUN_KIND_LABELS } from '../history/stored-runs-table';
import type { SummaryValue } from '../library/library-types';

/** A sweep point's summary entry: `point.<i>.<what>`. */
const SWEEP_POINT_KEY = /^point\.(\d+)\.(outcome|maxMultiplier)$/;
/** Compared numbers keep 9 significant digits: a recheck is about differences in the last digits. */
const COMPARED_DIGITS = 9;

/** JSON cannot hold non-finite numbers: stored summaries carry them as words. */
const revive = (v: unknown): unknown => (v === 'Infinity' || v === '-Infinity' || v === 'NaN' ? Number(v) : v);

/** The table path a summary entry's value reads by: a threshold value takes the swept field's unit. */
function valuePath(key: string, sweptField: string | null): string {
  return /^threshold\.\d+\.value$/.test(key) && sweptField !== null ? sweptField : `summary.${key}`;
}

const showValue = (path: string, value: unknown): string => formatFieldValue(path, revive(value), DEFAULT_UNITS, COMPARED_DIGITS);

/** A run kind as the tabs name it. */
export function runKindWords(kind: string | null | undefined): string {
  return kind ? (RUN_KIND_LABELS[kind] ?? kind) : 'Run';
}

/** The swept field of a run's stored settings, if it is a sweep. */
export function sweptFieldOf(settings: unknown): string | null {
  if (typeof settings !== 'object' || settings === null || !('spec' in settings)) return null;
  const spec = settings.spec;
  if (typeof spec !== 'object' || spec === null || !('field' in spec)) return null;
  return typeof spec.field === 'string' ? spec.field : null;
}

/** One compared number, from a rerun in this browser or from the server's comparison. */
export interface ComparisonRow {
  readonly name: string;
  readonly stored: SummaryValue;
  readonly rerun: SummaryValue;
  readonly difference?: number | null;
  readonly tolerance: number | null;
  readonly match: boolean;
}

export interface ShownComparisonRow {
  readonly key: string;
  readonly label: string;
  readonly stored: string;
  readonly rerun: string;
  /** In the entry's unit; empty for words. */
  readonly difference: string;
  readonly match: boolean;
}

export interface SweepPointRow {
  /** 1-based, as the Sweeps tab numbers points. */
  readonly point: number;
  readonly outcomeStored: string;
  readonly outcomeRerun: string;
  readonly multiplierStored: string;
  readonly multiplierRerun: string;
  readonly match: boolean;
}

export interface ComparisonGroup {
  /** Single numbers and words, those that differ first, otherwise in the order given. */
  readonly rows: readonly ShownComparisonRow[];
  /** A sweep's points in numeric point order (point 2 before point 10). */
  readonly points: readonly SweepPointRow[];
  readonly pointsDiffering: number;
  readonly differing: number;
  readonly total: number;
  /** The tolerance of the group's numbers, once: "relative 1e-6 of each stored value"; null when no number was held to one. */
  readonly tolerance: string | null;
}

const numberOf = (v: unknown): number | null => {
  const r = revive(v);
  return typeof r === 'number' ? r : null;
};

/** |rerun − stored| in the value's display unit (the scales are linear); empty for words. */
function differenceText(row: ComparisonRow, path: string): string {
  const a = numberOf(row.stored);
  const b = numberOf(row.rerun);
  const d = row.difference ?? (a !== null && b !== null ? Math.abs(b - a) : null);
  if (d === null || !Number.isFinite(d)) return '';
  const info = fieldInfo(path);
  if (!info || info.dimension === 'plain') return withUnit(formatNumber(d, 3), info?.kind === 'percent' ? '%' : (info?.unit ?? ''));
  return formatIn(d, info.dimension, DEFAULT_UNITS, 3);
}

/** The relative tolerance the numbers were held to (tolerance / |stored|), the largest one when they vary. */
function toleranceText(rows: readonly ComparisonRow[]): string | null {
  let relative = 0;
  let absolute = 0;
  for (const row of rows) {
    const stored = numberOf(row.stored);
    if (row.tolerance === null || row.tolerance === undefined || stored === null) continue;
    if (stored === 0) absolute = Math.max(absolute, row.tolerance);
    else relative = Math.max(relative, row.tolerance / Math.abs(stored));
  }
  if (relative === 0 && absolute === 0) return null;
  const parts = [];
  if (relative > 0) parts.push(`each number within ${formatNumber(Number(relative.toPrecision(2)), 2)} of its stored value (relative)`);
  if (absolute > 0) parts.push(`numbers stored as zero within ${formatNumber(absolute, 2)}`);
  return `${parts.join('; ')}; words and flags must be equal.`;
}

/** Groups a run's compared numbers; `sweptField` is the sweep's field (threshold values take its unit). */
export function groupComparison(rows: readonly ComparisonRow[], sweptField?: string | null): ComparisonGroup {
  const storedField = rows.find((r) => r.name === 'field')?.stored;
  const field = sweptField ?? (typeof storedField === 'string' ? storedField : null);
  const single: ShownComparisonRow[] = [];
  const points = new Map<number, { outcome?: ComparisonRow; multiplier?: ComparisonRow }>();
  for (const row of rows) {
    const point = SWEEP_POINT_KEY.exec(row.name);
    if (point) {
      const index = Number(point[1]);
      const entry = points.get(index) ?? {};
      if (point[2] === 'outcome') entry.outcome = row;
      else entry.multiplier = row;
      points.set(index, entry);
      continue;
    }
    const path = valuePath(row.name, typeof field === 'string' ? field : null);
    single.push({
      key: row.name,
      label: fieldLabel(`summary.${row.name}`),
      stored: showValue(path, row.stored),
      rerun: showValue(path, row.rerun),
      difference: differenceText(row, path),
      match: row.match,
    });
  }
  const pointRows = [...points.entries()]
    .sort(([a], [b]) => a - b)
    .map(([index, p]): SweepPointRow => {
      const outcomePath = `summary.point.${index}.outcome`;
      const multiplierPath = `summary.point.${index}.maxMultiplier`;
      return {
        point: index + 1,
        outcomeStored: p.outcome ? showValue(outcomePath, p.outcome.stored) : '—',
        outcomeRerun: p.outcome ? showValue(outcomePath, p.outcome.rerun) : '—',
        multiplierStored: p.multiplier ? showValue(multiplierPath, p.multiplier.stored) : '—',
        multiplierRerun: p.multiplier ? showValue(multiplierPath, p.multiplier.rerun) : '—',
        match: (p.outcome?.match ?? true) && (p.multiplier?.match ?? true),
      };
    });
  // Stable sort: differing rows first, each part in the given order.
  const ordered = [...single.filter((r) => !r.match), ...single.filter((r) => r.match)];
  const pointsDiffering = pointRows.filter((p) => !p.match).length;
  return {
    rows: ordered,
    points: pointRows,
    pointsDiffering,
    differing: rows.filter((r) => !r.match).length,
    total: rows.length,
    tolerance: toleranceText(rows),
  };
}
