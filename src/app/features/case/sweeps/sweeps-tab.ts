import { ChangeDetectionStrategy, Component, computed, effect, inject, signal, untracked } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';

import { getField, sweepableFieldsFor, type SweepableField } from '../../../../../shared/case/case-fields';
import { MAX_SWEEP_STEPS } from '../../../../../shared/engine/run-kinds';
import type { RunSettings } from '../../../../../shared/engine/run-record';
import type { SweepSpec } from '../../../../../shared/engine/sweep';
import { Plot } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { rangeProblem } from '../range-check';
import { RunStrip } from '../run-strip';
import { ServerRun } from '../server-run';
import { StoredMark } from '../stored-mark';
import { OUTCOME_WORDS, outcomeWords } from '../../../../../shared/case/display';
import { formatNumber } from '../../../core/units/format-number';
import { dimensionOfSiUnit, fromDisplay, toDisplay, unitLabelOf, type Dimension } from '../../../core/units/display-units';
import { probesOnlySeenBisecting, sweepAxis, sweepPlot, sweepResultPlot } from './sweep-plot';
import { SweepTable } from './sweep-table';
import { ScrollRegion } from '../../../ui/scroll-region/scroll-region';


/** The Sweeps tab: one case field varied over a range, every point a full motion run across the worker pool. */
@Component({
  selector: 'qp-sweeps-tab',
  imports: [
    ScrollRegion,
    FormsModule,
    MatFormFieldModule,
    MatInputModule,
    MatSelectModule,
    Plot,
    RunStrip,
    ServerRun,
    StoredMark,
    SweepTable,
  ],
  templateUrl: './sweeps-tab.html',
  styleUrl: '../tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SweepsTab {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly job = this.workspace.sweepJob;
  protected readonly units = this.workspace.units;
  protected readonly result = this.workspace.sweep;
  protected readonly stale = computed(() => this.workspace.isStale(this.result()));
  protected readonly maxPoints = MAX_SWEEP_STEPS;

  protected readonly fields = computed(() => sweepableFieldsFor(this.workspace.draft()));
  protected readonly fieldPath = signal('drive.amplitude');
  protected readonly from = signal<number | null>(null);
  protected readonly to = signal<number | null>(null);
  protected readonly count = signal<number | null>(20);
  protected readonly scale = signal<'linear' | 'log'>('linear');

  protected readonly field = computed<SweepableField>(
    () => this.fields().find((f) => f.path === this.fieldPath()) ?? this.fields()[0],
  );
  protected readonly dimension = computed<Dimension>(() => dimensionOfSiUnit(this.field().unit));
  protected readonly unit = computed(() =>
    this.dimension() === 'plain' ? this.field().unit : unitLabelOf(this.dimension(), this.units()),
  );

  protected readonly problem = computed(() => {
    const from = this.from();
    const to = this.to();
    const count = this.count();
    if (from === null || to === null || !Number.isFinite(from) || !Number.isFinite(to)) return 'Enter both ends of the range.';
    if (from === to) return 'The range needs two different ends.';
    if (count === null || !Number.isInteger(count) || count < 2 || count > MAX_SWEEP_STEPS) {
      return `Points: a whole number from 2 to ${MAX_SWEEP_STEPS}.`;
    }
    if (this.scale() === 'log' && (from <= 0 || to <= 0)) return 'A log scale needs both ends above zero.';
    const dimension = this.dimension();
    const units = this.units();
    const axis = { field: this.field().path, from: fromDisplay(from, dimension, units), to: fromDisplay(to, dimension, units) };
    return rangeProblem(this.workspace.draft(), [axis], units);
  });

  /** Progress of the running sweep in points, so the bar and its text tell the same count. */
  protected readonly steps = computed(() =>
    this.job.running()
      ? { done: this.workspace.sweepPartial().length, total: this.workspace.sweepSteps(), noun: 'points', after: 'refining the thresholds' }
      : null,
  );

  /** The sweep's field description, taken from the result so it stays right when the form changes later. */
  protected readonly shown = computed(() => {
    const r = this.result();
    return r ? { ...sweepAxis(r.value, r.params, this.units()), params: r.params } : null;
  });

  protected readonly thresholds = computed(() => {
    const r = this.result();
    const s = this.shown();
    if (!r || !s) return [];
    const units = this.units();
    return r.value.thresholds.map((t, i) => {
      const deviation = s.averaged === null ? null : (100 * (t.value - s.averaged)) / s.averaged;
      return {
        key: `${t.kind}-${i}`,
        kind: t.kind === 'outcome' ? 'outcome changes' : 'largest |μ| crosses 1',
        value: formatNumber(toDisplay(t.value, s.dimension, units), 6),
        change: `${outcomeWords(t.below)} → ${outcomeWords(t.above)}`,
        deviation: deviation === null ? '—' : `${deviation >= 0 ? '+' : '−'}${formatNumber(Math.abs(deviation), 3)} %`,
        probes: probesOnlySeenBisecting(r.value.points, t).map((p) => ({
          value: formatNumber(toDisplay(p.value, s.dimension, units), 6),
          outcome: outcomeWords(p.outcome),
        })),
      };
    });
  });

  protected readonly plot = computed(() => {
    const r = this.result();
    const s = this.shown();
    return r && s ? sweepResultPlot(r.value, s, this.units()) : null;
  });

  /** The points of the running sweep finished so far, drawn while the rest are computed. */
  protected readonly livePlot = computed(() => {
    if (!this.job.running()) return null;
    const points = this.workspace.sweepPartial();
    if (points.length === 0) return null;
    const dimension = this.dimension();
    const units = this.units();
    return sweepPlot(points, {
      label: this.field().label, unit: this.unit(), toX: (v) => toDisplay(v, dimension, units), logX: this.scale() === 'log',
      thresholds: [], averaged: null,
    });
  });

  /** The field whose default range was set last; a new field gets a new default range. */
  private rangeFor: string | null = null;

  constructor() {
    // The settings show the sweep on screen: on coming back to the tab, and when a stored sweep arrives.
    effect(() => {
      const shown = this.result()?.value.spec;
      if (!shown) return;
      untracked(() => {
        const dimension = dimensionOfSiUnit(sweepableFieldsFor(this.workspace.draft()).find((f) => f.path === shown.field)?.unit ?? '');
        this.rangeFor = shown.field;
        this.fieldPath.set(shown.field);
        this.count.set(shown.steps);
        this.scale.set(shown.scale ?? 'linear');
        this.from.set(toDisplay(shown.from, dimension, this.units()));
        this.to.set(toDisplay(shown.to, dimension, this.units()));
      });
    });
    // A new field (or a first visit) gets a sensible default range around the case's value.
    effect(() => {
      const path = this.field().path;
      if (path === this.rangeFor) return;
      this.rangeFor = path;
      const dimension = dimensionOfSiUnit(this.field().unit);
      const units = this.units();
      const value = getField(this.workspace.draft(), path);
      const [lo, hi] = value > 0 ? [value / 4, value * 2] : [value - 1, value + 1];
      this.from.set(toDisplay(lo, dimension, units));
      this.to.set(toDisplay(hi, dimension, units));
    });
  }

  /** The sweep the form asks for, in SI; null while the form cannot run (`problem` says why). */
  protected readonly spec = computed<SweepSpec | null>(() => {
    const from = this.from();
    const to = this.to();
    const count = this.count();
    if (this.problem() !== null || from === null || to === null || count === null) return null;
    const dimension = this.dimension();
    const units = this.units();
    return {
      field: this.field().path,
      from: fromDisplay(from, dimension, units),
      to: fromDisplay(to, dimension, units),
      steps: count,
      scale: this.scale(),
    };
  });

  /** The same sweep as a server job's settings. */
  protected readonly serverSettings = computed<RunSettings | null>(() => {
    const spec = this.spec();
    return spec ? { kind: 'sweep', spec } : null;
  });

  protected run(): void {
    const spec = this.spec();
    if (spec) this.workspace.runSweep(spec);
  }

  protected fmt(value: number | null): string {
    const s = this.shown();
    return value === null || !s ? '—' : formatNumber(toDisplay(value, s.dimension, this.units()), 6);
  }
}
