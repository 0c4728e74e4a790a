/**
 * The stored results of two revisions side by side, in the words and units of the tabs: the motion outcome and slow
 * motion, the Floquet margin and drive limits, and the sweep thresholds, each with the direction and size of the
 * change. Reads the runs' summaries only (the latest run of each kind per revision), so it needs no recomputation.
 */
import {
  SHOWN_UNITS, fieldDisplay, formatNumber, formatPercent, formatShown, outcomeWords, type ShownUnit,
} from '../../../../shared/case/display';

/** What the diff needs of a stored run. */
export interface DiffRun {
  readonly kind: string;
  readonly summary: Readonly<Record<string, unknown>>;
}

export type ChangeDirection = 'up' | 'down' | 'same' | 'changed' | 'missing';

export interface ResultDiffRow {
  readonly key: string;
  /** "Motion", "Floquet margins", "Sweep". */
  readonly group: string;
  readonly label: string;
  readonly left: string;
  readonly right: string;
  readonly direction: ChangeDirection;
  /** Arrow of the direction: ↑, ↓, =, ≠ or nothing when a side has no value. */
  readonly arrow: string;
  /** Relative change ("+12.3 %"), the change of a percentage in points, or words; empty when equal. */
  readonly change: string;
  readonly changed: boolean;
}

const ARROWS: Record<ChangeDirection, string> = { up: '↑', down: '↓', same: '=', changed: '≠', missing: '' };

const num = (v: unknown): number | null => {
  if (typeof v === 'number') return v;
  if (v === 'Infinity' || v === '-Infinity') return Number(v);
  return null;
};

function latest(runs: readonly DiffRun[], kind: string): DiffRun | undefined {
  return runs.filter((r) => r.kind === kind).at(-1);
}

interface NumberSpec {
  key: string;
  group: string;
  label: string;
  unit: ShownUnit;
  /** The quantity is itself a percentage: its change is given in points, not relative. */
  percent?: boolean;
  digits?: number;
}

function numberRow(spec: NumberSpec, a: number | null, b: number | null, present: [boolean, boolean]): ResultDiffRow {
  const show = (v: number | null, here: boolean) => (!here ? '—' : spec.percent ? formatPercent(v) : v === null ? 'none found' : formatShown(v, spec.unit, spec.digits ?? 5));
  const base = { key: spec.key, group: spec.group, label: spec.label, left: show(a, present[0]), right: show(b, present[1]) };
  if (!present[0] || !present[1]) return { ...base, direction: 'missing', arrow: '', change: present[0] ? 'not in the second' : 'not in the first', changed: true };
  if (a === null || b === null || !Number.isFinite(a) || !Number.isFinite(b)) {
    const same = a === b;
    return { ...base, direction: same ? 'same' : 'changed', arrow: ARROWS[same ? 'same' : 'changed'], change: same ? '' : 'changed', changed: !same };
  }
  // Numbers equal to the digits shown read as unchanged: a recomputation's last-digit noise is no change.
  if (base.left === base.right) return { ...base, direction: 'same', arrow: ARROWS.same, change: '', changed: false };
  const direction: ChangeDirection = b > a ? 'up' : 'down';
  const change = spec.percent ? `${b - a < 0 ? '−' : '+'}${formatNumber(Math.abs(b - a), 3)} points` : a === 0 ? 'from zero' : formatPercent((100 * (b - a)) / Math.abs(a));
  return { ...base, direction, arrow: ARROWS[direction], change, changed: true };
}

function wordRow(key: string, group: string, label: string, a: string | null, b: string | null): ResultDiffRow {
  const left = a ?? '—';
  const right = b ?? '—';
  if (a === null || b === null) {
    return { key, group, label, left, right, direction: 'missing', arrow: '', change: a === null ? 'not in the first' : 'not in the second', changed: true };
  }
  const same = a === b;
  return { key, group, label, left, right, direction: same ? 'same' : 'changed', arrow: ARROWS[same ? 'same' : 'changed'], change: same ? '' : 'changed', changed: !same };
}

function motionRows(a: DiffRun | undefined, b: DiffRun | undefined): ResultDiffRow[] {
  if (!a && !b) return [];
  const group = 'Motion';
  const present: [boolean, boolean] = [!!a, !!b];
  return [
    wordRow('motion.outcome', group, 'Outcome', a ? outcomeWords(a.summary['outcome']) : null, b ? outcomeWords(b.summary['outcome']) : null),
    numberRow({ key: 'motion.slow', group, label: 'Slow frequency', unit: SHOWN_UNITS.frequency, digits: 4 }, num(a?.summary['slowFrequencyHz']), num(b?.summary['slowFrequencyHz']), present),
    numberRow({ key: 'motion.deviation', group, label: 'Largest slow deviation from upright', unit: SHOWN_UNITS.angle, digits: 4 }, num(a?.summary['maxDeviation']), num(b?.summary['maxDeviation']), present),
  ];
}

function marginRows(a: DiffRun | undefined, b: DiffRun | undefined): ResultDiffRow[] {
  if (!a && !b) return [];
  const group = 'Floquet margins';
  const present: [boolean, boolean] = [!!a, !!b];
  const holds = (r: DiffRun | undefined) => (r ? (r.summary['uprightHolds'] === true ? 'holds' : r.summary['uprightHolds'] === false ? 'lost' : '—') : null);
  const row = (key: string, label: string, unit: ShownUnit, percent = false) =>
    numberRow({ key: `margins.${key}`, group, label, unit, percent, digits: 6 }, num(a?.summary[key]), num(b?.summary[key]), present);
  return [
    row('marginPercent', 'Margin of the upright', { unit: '%', scale: 1 }, true),
    wordRow('margins.upright', group, 'Upright', holds(a), holds(b)),
    row('amplitudeLower', 'Lower amplitude limit', SHOWN_UNITS.length),
    row('amplitudeUpper', 'Upper amplitude limit', SHOWN_UNITS.length),
    row('frequencyLower', 'Lower frequency limit', SHOWN_UNITS.frequency),
    row('frequencyUpper', 'Upper frequency limit', SHOWN_UNITS.frequency),
  ];
}

const THRESHOLD_WORDS: Readonly<Record<string, string>> = { outcome: 'outcome changes', multiplier: 'upright |μ| crosses 1' };

function sweepRows(a: DiffRun | undefined, b: DiffRun | undefined): ResultDiffRow[] {
  if (!a && !b) return [];
  const group = 'Sweep';
  const fieldA = typeof a?.summary['field'] === 'string' ? a.summary['field'] : null;
  const fieldB = typeof b?.summary['field'] === 'string' ? b.summary['field'] : null;
  if (a && b && fieldA !== fieldB) {
    return [wordRow('sweep.field', group, 'Swept field', fieldDisplay(fieldA ?? '').label, fieldDisplay(fieldB ?? '').label)];
  }
  const { label, unit } = fieldDisplay(fieldA ?? fieldB ?? '');
  const count = Math.max(num(a?.summary['thresholds']) ?? 0, num(b?.summary['thresholds']) ?? 0);
  const rows: ResultDiffRow[] = [];
  for (let i = 0; i < count; i++) {
    const kind = String(a?.summary[`threshold.${i}.kind`] ?? b?.summary[`threshold.${i}.kind`] ?? '');
    const va = num(a?.summary[`threshold.${i}.value`]);
    const vb = num(b?.summary[`threshold.${i}.value`]);
    rows.push(
      numberRow(
        { key: `sweep.threshold.${i}`, group, label: `${label} threshold ${i + 1} (${THRESHOLD_WORDS[kind] ?? kind})`, unit, digits: 5 },
        va,
        vb,
        [va !== null, vb !== null],
      ),
    );
  }
  if (count === 0) rows.push(wordRow('sweep.none', group, `${label} thresholds`, a ? 'none' : null, b ? 'none' : null));
  return rows;
}

/** Rows comparing the stored results of two revisions (left: the earlier one chosen, right: the later). */
export function resultsDiff(left: readonly DiffRun[], right: readonly DiffRun[]): ResultDiffRow[] {
  return [
    ...motionRows(latest(left, 'motion'), latest(right, 'motion')),
    ...marginRows(latest(left, 'margins'), latest(right, 'margins')),
    ...sweepRows(latest(left, 'sweep'), latest(right, 'sweep')),
  ];
}
