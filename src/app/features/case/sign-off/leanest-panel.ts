import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { RouterLink } from '@angular/router';

import { LEANEST_CONSTRAINT_WORDS, LEANEST_COST_WORDS, bindingWords } from '../../../../../shared/case/leanest-words';
import type { ConstraintUse, LeanestCost } from '../../../../../shared/engine/leanest';
import { defaultLeanestSettings, leanestSettingsSchema, LEANEST_COSTS, type LeanestSettings } from '../../../../../shared/engine/run-kinds';
import { fromDisplay, toShown, unitLabelOf, type Dimension } from '../../../core/units/display-units';
import { formatIn, formatNumber, formatPercent, withUnit } from '../../../core/units/format-number';
import { Plot } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { rangeProblem } from '../range-check';
import { RunStrip } from '../run-strip';
import { ServerRun } from '../server-run';
import { StoredMark } from '../stored-mark';
import { leanestPlot } from './leanest-plot';

type Hardware = 'none' | 'shaker' | 'crank';

/** How a number field reads: a display dimension (mm/Hz follow the page's units), rev/min, or a fixed unit. */
type FieldUnit = { dimension: Exclude<Dimension, 'plain'> } | { rpm: true } | { fixed: string };

interface NumberField {
  readonly key: string;
  readonly label: string;
  readonly unit: FieldUnit;
  /** the settings path the schema names in its issues */
  readonly path: string;
}

const SHAKER_FIELDS: readonly NumberField[] = [
  { key: 'ratedForce', label: 'Rated force', unit: { fixed: 'N' }, path: 'envelope.ratedForce' },
  { key: 'maxStroke', label: 'Stroke, peak to peak', unit: { dimension: 'length' }, path: 'envelope.maxStroke' },
  { key: 'maxVelocity', label: 'Peak velocity', unit: { fixed: 'm/s' }, path: 'envelope.maxVelocity' },
  { key: 'minFrequency', label: 'Lowest frequency', unit: { dimension: 'frequency' }, path: 'envelope.minFrequency' },
  { key: 'maxFrequency', label: 'Highest frequency', unit: { dimension: 'frequency' }, path: 'envelope.maxFrequency' },
];

const CRANK_FIELDS: readonly NumberField[] = [
  { key: 'minRadius', label: 'Smallest crank radius', unit: { dimension: 'length' }, path: 'envelope.minRadius' },
  { key: 'maxRadius', label: 'Largest crank radius', unit: { dimension: 'length' }, path: 'envelope.maxRadius' },
  { key: 'minSpeed', label: 'Lowest motor speed', unit: { rpm: true }, path: 'envelope.minSpeed' },
  { key: 'maxSpeed', label: 'Highest motor speed', unit: { rpm: true }, path: 'envelope.maxSpeed' },
];

const RANGE_FIELDS: readonly NumberField[] = [
  { key: 'freqFrom', label: 'Frequencies from', unit: { dimension: 'frequency' }, path: 'grid.x.from' },
  { key: 'freqTo', label: 'Frequencies to', unit: { dimension: 'frequency' }, path: 'grid.x.to' },
  { key: 'ampFrom', label: 'Amplitudes from', unit: { dimension: 'length' }, path: 'grid.y.from' },
  { key: 'ampTo', label: 'Amplitudes to', unit: { dimension: 'length' }, path: 'grid.y.to' },
];

const LABEL_OF_PATH: Readonly<Record<string, string>> = {
  marginPercent: 'Wanted margin',
  movingMass: 'Moving mass',
  ...Object.fromEntries([...SHAKER_FIELDS, ...CRANK_FIELDS, ...RANGE_FIELDS].map((f) => [f.path, f.label])),
};

const capitalised = (words: string) => words.charAt(0).toUpperCase() + words.slice(1);

/** Cost words with a capital, for the choice. */
const COST_CHOICES = LEANEST_COSTS.map((c) => ({ value: c, label: capitalised(LEANEST_COST_WORDS[c]) }));

/**
 * The leanest drive: the cheapest drive frequency and amplitude that keep a wanted amplitude margin, inside a
 * shaker's ratings or a motor and crank's ranges; the stability chart with the cells that keep it, and "Apply to the
 * rig". Values are entered in the page's units (mm, Hz or rev/min) and kept in SI.
 */
@Component({
  selector: 'qp-leanest-panel',
  imports: [
    FormsModule, MatButtonModule, MatButtonToggleModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule,
    RouterLink, Plot, RunStrip, ServerRun, StoredMark,
  ],
  templateUrl: './leanest-panel.html',
  styleUrls: ['../tab.scss', './leanest-panel.scss'],
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LeanestPanel {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly job = this.workspace.leanestJob;
  protected readonly result = this.workspace.leanest;
  protected readonly units = this.workspace.units;
  protected readonly costs = COST_CHOICES;
  protected readonly shakerFields = SHAKER_FIELDS;
  protected readonly crankFields = CRANK_FIELDS;
  protected readonly rangeFields = RANGE_FIELDS;

  protected readonly marginPercent = signal(15);
  protected readonly cost = signal<LeanestCost>('acceleration');
  protected readonly hardware = signal<Hardware>('none');
  protected readonly movingMass = signal(0);
  protected readonly count = signal(40);
  /** SI values of the envelope and range fields; absent: no limit (envelope) or around the case (range). */
  private readonly values = signal<Readonly<Record<string, number>>>({});
  protected readonly applied = signal<string | null>(null);
  protected readonly applyRefusal = signal<string | null>(null);

  protected readonly crankDrive = computed(() => this.workspace.draft().drive.waveform.kind === 'crank-slider');
  protected readonly stale = computed(() => this.workspace.isStale(this.result()));

  /** The settings the form asks for (not yet checked). */
  protected readonly settings = computed<LeanestSettings>(() => {
    const d = defaultLeanestSettings(this.workspace.draft());
    const v = this.values();
    const hw = this.hardware();
    const pick = (fields: readonly NumberField[]) =>
      Object.fromEntries(fields.filter((f) => v[f.key] !== undefined).map((f) => [f.key, v[f.key]]));
    const envelope: LeanestSettings['envelope'] =
      hw === 'shaker' ? { kind: 'shaker', ...pick(SHAKER_FIELDS) } : hw === 'crank' ? { kind: 'crank', ...pick(CRANK_FIELDS) } : { kind: 'none' };
    const n = this.count();
    return {
      ...d,
      marginPercent: this.marginPercent(),
      cost: this.cost(),
      movingMass: this.movingMass(),
      envelope,
      grid: {
        x: { ...d.grid.x, count: n, from: v['freqFrom'] ?? d.grid.x.from, to: v['freqTo'] ?? d.grid.x.to },
        y: { ...d.grid.y, count: n, from: v['ampFrom'] ?? d.grid.y.from, to: v['ampTo'] ?? d.grid.y.to },
      },
    };
  });

  /** Why the search cannot run as set, in words: the settings' own check, then the case's limits at the range's corners. */
  protected readonly problem = computed<string | null>(() => {
    const s = this.settings();
    const checked = leanestSettingsSchema.safeParse(s);
    if (!checked.success) {
      const issue = checked.error.issues[0];
      const path = issue.path.join('.');
      return `${LABEL_OF_PATH[path] ?? 'A search setting'}: ${issue.message}.`;
    }
    return rangeProblem(this.workspace.draft(), [s.grid.x, s.grid.y], this.units(), true);
  });

  protected readonly plot = computed(() => {
    const r = this.result()?.value;
    return r ? leanestPlot(r, this.units()) : null;
  });

  protected readonly optimum = computed(() => this.result()?.value.optimum ?? null);

  protected readonly optimumRows = computed(() => {
    const r = this.result()?.value;
    const o = r?.optimum;
    if (!r || !o) return [];
    const u = this.units();
    const crank = this.result()?.params.drive.waveform.kind === 'crank-slider';
    const g = this.result()?.params.gravity ?? 9.80665;
    return [
      { label: 'Drive frequency', value: `${formatIn(o.frequency, 'frequency', u)} (${formatNumber(o.frequency * 60, 4)} rev/min)` },
      { label: crank ? 'Crank radius' : 'Drive amplitude', value: formatIn(o.amplitude, 'length', u) },
      { label: 'Peak acceleration', value: `${withUnit(formatNumber(o.peakAcceleration, 4), 'm/s²')} (${formatNumber(o.peakAcceleration / g, 4)} g)` },
      { label: 'Stroke, peak to peak', value: formatIn(o.stroke, 'length', u) },
      { label: 'Peak velocity', value: withUnit(formatNumber(o.peakVelocity, 4), 'm/s') },
      { label: 'Drive force (moving mass and body)', value: withUnit(formatNumber(o.force, 4), 'N') },
      { label: 'Power proxy (force × velocity / 2)', value: withUnit(formatNumber(o.power, 4), 'W') },
      { label: 'Pivot force on the body', value: withUnit(formatNumber(o.pivotForcePeak, 4), 'N') },
      { label: 'Amplitude margin', value: formatPercent(o.amplitudeMarginPercent) },
      { label: 'Frequency margin', value: formatPercent(o.frequencyMarginPercent) },
      { label: 'Limited by', value: bindingWords(o.binding) },
    ];
  });

  protected readonly costText = computed(() => {
    const r = this.result()?.value;
    const o = r?.optimum;
    if (!r || !o) return '';
    const u = this.units();
    const g = this.result()?.params.gravity ?? 9.80665;
    switch (r.cost) {
      case 'acceleration': return `${withUnit(formatNumber(o.cost, 4), 'm/s²')} (${formatNumber(o.cost / g, 4)} g)`;
      case 'stroke': return formatIn(o.cost, 'length', u);
      case 'force': return withUnit(formatNumber(o.cost, 4), 'N');
      case 'power': return withUnit(formatNumber(o.cost, 4), 'W');
    }
  });

  /** The frequency margin at the optimum is below the wanted one: the Margins tab's headline (the smaller) shows it. */
  protected readonly frequencyShortfall = computed(() => {
    const r = this.result()?.value;
    const o = r?.optimum;
    return r && o && o.frequencyMarginPercent !== null && o.frequencyMarginPercent < r.marginPercent - 1e-6 ? o.frequencyMarginPercent : null;
  });

  protected readonly constraintRows = computed(() => {
    const o = this.optimum();
    if (!o) return [];
    const u = this.units();
    return o.constraints.map((c, i) => ({
      key: `${c.constraint}-${i}`,
      what: capitalised(LEANEST_CONSTRAINT_WORDS[c.constraint]),
      value: this.formatConstraint(c, c.value, u),
      limit: `${c.sense === 'at-least' ? '≥' : '≤'} ${this.formatConstraint(c, c.limit, u)}`,
      room: formatPercent(100 * c.slack),
      binding: o.binding.includes(c.constraint),
    }));
  });

  protected readonly costWord = computed(() => LEANEST_COST_WORDS[this.result()?.value.cost ?? 'acceleration']);

  protected unitOf(f: NumberField): string {
    if ('dimension' in f.unit) return unitLabelOf(f.unit.dimension, this.units());
    return 'rpm' in f.unit ? 'rev/min' : f.unit.fixed;
  }

  /** The field's value in its shown unit; null when empty. */
  protected shown(f: NumberField): number | null {
    const si = this.values()[f.key];
    if (si === undefined) return f.path.startsWith('grid.') ? this.shownDefault(f) : null;
    return this.toShownValue(f, si);
  }

  protected setValue(f: NumberField, value: number | string | null): void {
    const number = value === null || value === '' ? null : Number(value);
    this.values.update((v) => {
      const next = { ...v };
      if (number === null || !Number.isFinite(number)) delete next[f.key];
      else next[f.key] = this.fromShownValue(f, number);
      return next;
    });
  }

  protected resetRange(): void {
    this.values.update((v) => Object.fromEntries(Object.entries(v).filter(([k]) => !RANGE_FIELDS.some((f) => f.key === k))));
  }

  protected runSearch(): void {
    this.applied.set(null);
    this.applyRefusal.set(null);
    this.workspace.runLeanest(this.settings());
  }

  protected applyToRig(): void {
    const o = this.optimum();
    const r = this.result();
    if (!o || !r) return;
    const u = this.units();
    const words = `${formatIn(o.frequency, 'frequency', u)} and ${formatIn(o.amplitude, 'length', u)}`;
    const refusal = this.workspace.applyDrive(
      o.frequency, o.amplitude,
      `Drive set to the leanest drive (${this.costWord()}, ${formatPercent(r.value.marginPercent)} amplitude margin): ${words}.`,
    );
    this.applyRefusal.set(refusal);
    this.applied.set(refusal === null ? words : null);
  }

  private shownDefault(f: NumberField): number {
    const g = defaultLeanestSettings(this.workspace.draft()).grid;
    const si = f.key === 'freqFrom' ? g.x.from : f.key === 'freqTo' ? g.x.to : f.key === 'ampFrom' ? g.y.from : g.y.to;
    return this.toShownValue(f, si);
  }

  private toShownValue(f: NumberField, si: number): number {
    if ('dimension' in f.unit) return toShown(si, f.unit.dimension, this.units());
    return 'rpm' in f.unit ? Number((si * 60).toPrecision(6)) : si;
  }

  private fromShownValue(f: NumberField, value: number): number {
    if ('dimension' in f.unit) return fromDisplay(value, f.unit.dimension, this.units());
    return 'rpm' in f.unit ? value / 60 : value;
  }

  private formatConstraint(c: ConstraintUse, si: number, u: ReturnType<CaseWorkspace['units']>): string {
    switch (c.constraint) {
      case 'rated-force': return withUnit(formatNumber(si, 4), 'N');
      case 'velocity': return withUnit(formatNumber(si, 4), 'm/s');
      case 'min-frequency': case 'max-frequency': case 'frequency-range': return formatIn(si, 'frequency', u);
      default: return formatIn(si, 'length', u);
    }
  }
}
