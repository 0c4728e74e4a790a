import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';

import { OUTCOME_RULES, type MotionOutcome, type OutcomeNumbers } from '../../../../../shared/engine/classify';
import type { FloquetAnalysis } from '../../../../../shared/engine/floquet';
import type { MotionResult, MotionSummary } from '../../../../../shared/engine/motion';
import type { Computed } from '../case-workspace';
import { OUTCOME_COLOURS, outcomeWords } from '../../../../../shared/case/display';
import { formatIn, formatNumber } from '../../../core/units/format-number';
import type { DisplayUnits } from '../../../core/units/display-units';

/**
 * Largest Floquet multiplier modulus of the upright for the motion's case, as the Margins tab computed it (in its
 * worker) for the same inputs; `value` null when no periodic motion exists near the upright.
 */
export type UprightMultiplier =
  | { readonly kind: 'from-margins'; readonly value: number | null }
  | { readonly kind: 'not-computed' };

/** What the outcome card shows: the verdict and the numbers behind it. */
export interface OutcomeView {
  readonly outcome: MotionOutcome;
  readonly numbers: OutcomeNumbers;
  readonly summary: MotionSummary;
  readonly status: string;
  readonly rhsEvaluations: number;
  /** Absent when the drive is not periodic (a ramp): the multiplier then says nothing about this run. */
  readonly uprightMultiplier?: UprightMultiplier;
}

/** Outcomes whose verdict the upright's Floquet multiplier speaks to. */
const MULTIPLIER_OUTCOMES: readonly MotionOutcome[] = ['holds-upright', 'settles-tilted'];

/**
 * The upright's multiplier for a motion result: from the Margins result when it was computed for the same case,
 * `not-computed` when it was not, undefined when the drive has a ramp (not periodic).
 */
export function uprightMultiplierFor(
  motion: Computed<MotionResult>,
  margins: Computed<FloquetAnalysis> | null,
): UprightMultiplier | undefined {
  if (motion.params.drive.ramp !== undefined) return undefined;
  if (!margins || margins.paramsDigest !== motion.paramsDigest) return { kind: 'not-computed' };
  const upright = margins.value.upright;
  return { kind: 'from-margins', value: upright && Number.isFinite(upright.maxMultiplier) ? upright.maxMultiplier : null };
}

function multiplierRow(view: OutcomeView): Row[] {
  const m = view.uprightMultiplier;
  if (!m || !MULTIPLIER_OUTCOMES.includes(view.outcome)) return [];
  const label = 'Largest Floquet multiplier |μ| of the upright';
  if (m.kind === 'not-computed') return [{ label, value: 'run Margins for these inputs to see it' }];
  const value = m.value === null ? 'no periodic motion near the upright' : formatNumber(m.value, 6);
  return [{ label, value: `${value} (from Margins)` }];
}

interface Row {
  readonly label: string;
  readonly value: string;
}

/**
 * Why the run got its verdict, in the display units of the rows beside it. The same rules as classifyMotion
 * (shared/engine/classify.ts), told from the numbers it returns rather than its SI reason text.
 */
export function outcomeSentence(outcome: MotionOutcome, n: OutcomeNumbers, status: string, units: DisplayUnits): string {
  const angle = (rad: number) => formatIn(rad, 'angle', units);
  switch (outcome) {
    case 'holds-upright':
      return `The slow motion stayed within ${angle(n.maxDeviation)} of the upright (band ${angle(OUTCOME_RULES.uprightBand)}).`;
    case 'tumbles':
      return `The angle ran through ${formatNumber(n.slowRange / (2 * Math.PI), 2)} turns after the transient.`;
    case 'settles-tilted':
      return `Settled at ${angle(n.meanAngle)} from the upright (slow range ${angle(n.slowRange)}).`;
    case 'falls':
      return n.slowRange < OUTCOME_RULES.settledRange
        ? `Settled ${angle(Math.PI - Math.abs(n.meanAngle))} from hanging down.`
        : `Swings about hanging down (slow range ${angle(n.slowRange)}).`;
    case 'irregular':
      return status !== 'completed' || n.samples === 0
        ? 'The integration ended early, so there is no verdict on the motion.'
        : `The slow motion neither settled nor stayed upright (range ${angle(n.slowRange)}, mean ${angle(n.meanAngle)}).`;
  }
}

/** The slow frequency, or why it was not measured and what to change. */
function slowFrequencyText(n: OutcomeNumbers, units: DisplayUnits): string {
  if (n.slowFrequencyHz !== null) return formatIn(n.slowFrequencyHz, 'frequency', units);
  return 'not measured: under 2 slow swings after the transient; lengthen the simulated time';
}

/** The verdict of a motion run in large type, its reason in words, and the numbers it rests on. */
@Component({
  selector: 'qp-outcome-card',
  template: `
    <section class="card" [style.border-color]="color()" aria-labelledby="outcome-title">
      <p class="kicker">Outcome</p>
      <h2 id="outcome-title" class="verdict" [style.color]="color()" data-testid="outcome">{{ label() }}</h2>
      <p class="reason" data-testid="outcome-reason">{{ sentence() }}</p>
      <dl>
        @for (row of rows(); track row.label) {
          <div class="row">
            <dt>{{ row.label }}</dt>
            <dd>{{ row.value }}</dd>
          </div>
        }
      </dl>
    </section>
  `,
  styles: `
    .card { border: 2px solid; border-radius: 12px; padding: 12px 16px; }
    .kicker { margin: 0; font: var(--mat-sys-label-medium); text-transform: uppercase; letter-spacing: 0.08em; color: var(--mat-sys-on-surface-variant); }
    .verdict { margin: 4px 0; font: var(--mat-sys-headline-medium); }
    .reason { margin: 0 0 8px; color: var(--mat-sys-on-surface-variant); }
    dl { margin: 0; }
    .row { display: flex; justify-content: space-between; gap: 12px; padding: 3px 0; border-bottom: 1px solid var(--mat-sys-outline-variant); }
    dt { color: var(--mat-sys-on-surface-variant); }
    dd { margin: 0; text-align: right; font-variant-numeric: tabular-nums; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class OutcomeCard {
  readonly view = input.required<OutcomeView>();
  readonly units = input.required<DisplayUnits>();

  protected readonly label = computed(() => outcomeWords(this.view().outcome));
  protected readonly sentence = computed(() => outcomeSentence(this.view().outcome, this.view().numbers, this.view().status, this.units()));
  protected readonly color = computed(() => OUTCOME_COLOURS[this.view().outcome] ?? 'currentColor');
  protected readonly rows = computed<Row[]>(() => {
    const { numbers: n, summary: s } = this.view();
    const u = this.units();
    return [
      ...multiplierRow(this.view()),
      { label: 'Largest slow deviation from upright', value: formatIn(n.maxDeviation, 'angle', u) },
      { label: 'Mean slow angle', value: formatIn(n.meanAngle, 'angle', u) },
      { label: 'Slow range', value: formatIn(n.slowRange, 'angle', u) },
      { label: 'Slow frequency', value: slowFrequencyText(n, u) },
      { label: 'Full turns', value: String(n.netTurns) },
      { label: 'Judged from', value: `${formatNumber(n.windowStart)} s on (${n.samples} drive periods)` },
      { label: 'Peak pivot acceleration', value: `${formatNumber(s.peakPivotAccelerationG, 3)} g` },
      { label: 'Peak pivot force', value: `${formatNumber(s.peakPivotForce)} N` },
      { label: 'Drive periods simulated', value: formatNumber(s.drivePeriods, 6) },
      { label: 'Integration', value: `${this.view().status}, ${this.view().rhsEvaluations.toLocaleString('en')} evaluations` },
    ];
  });
}
