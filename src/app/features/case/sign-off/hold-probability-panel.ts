import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';

import { sweepableFieldsFor } from '../../../../../shared/case/case-fields';
import { MAX_NOISE_BANDWIDTH_RATIO, type CaseParams, type DriveNoise, type Tolerance } from '../../../../../shared/case/case-schema';
import { HOLDPROB_PARTS_WORDS } from '../../../../../shared/case/holdprob-words';
import {
  defaultHoldProbSettings, holdprobSettingsSchema, HOLDPROB_PARTS, type HoldProbSettings,
} from '../../../../../shared/engine/run-kinds';
import { fromDisplay, toDisplay, toShown, unitLabelOf, type DisplayUnits } from '../../../core/units/display-units';
import { fieldInfo, fieldLabel, fieldUnit } from '../../../core/units/field-table';
import { formatIn, formatNumber, withUnit } from '../../../core/units/format-number';
import { Plot } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { RunStrip } from '../run-strip';
import { ServerRun } from '../server-run';
import { StoredMark } from '../stored-mark';
import { holdProbabilityPlot } from './hold-probability-plot';

type Parts = HoldProbSettings['parts'];
type NoiseKind = DriveNoise['kind'] | 'none';

/** A tolerance's spread (SI) as it reads on screen: "σ 0.5 mm", "± 2 %" in the field's display unit. */
export function spreadText(t: Tolerance, units: DisplayUnits): string {
  const si = t.distribution === 'normal' ? t.sigma : t.halfWidth;
  const info = fieldInfo(t.field);
  const value = !info || info.dimension === 'plain' ? withUnit(formatNumber(si), info?.unit ?? '') : formatIn(si, info.dimension, units);
  return `${t.distribution === 'normal' ? 'σ' : '±'} ${value}`;
}

const pct = (p: number, digits = 3) => `${formatNumber(100 * p, digits)} %`;

/**
 * Probability of holding: the case's tolerances (each on a rig field, normal with σ or uniform within ±, entered in
 * the field's display unit), a Monte Carlo run over them (and the drive noise the case carries) with progress and
 * cancel, the probability with its 95 % interval, the fields whose spread matters most, and the margin histogram.
 */
@Component({
  selector: 'qp-hold-probability-panel',
  imports: [FormsModule, MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule, Plot, RunStrip, ServerRun, StoredMark],
  templateUrl: './hold-probability-panel.html',
  styleUrls: ['../tab.scss', './hold-probability-panel.scss'],
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class HoldProbabilityPanel {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly job = this.workspace.holdprobJob;
  protected readonly result = this.workspace.holdprob;
  protected readonly units = this.workspace.units;

  protected readonly samples = signal(256);
  /** stop once the interval is narrower than this many percentage points; 0: run every sample */
  protected readonly targetPoints = signal(10);
  protected readonly seed = signal(1927);
  private readonly chosenParts = signal<Parts | null>(null);
  protected readonly toleranceError = signal<string | null>(null);

  protected readonly stale = computed(() => this.workspace.isStale(this.result()));
  private readonly draft = computed(() => this.workspace.draft());

  /** The fields this case can carry a tolerance on, as the Rig form names them, with their display unit. */
  protected readonly fieldChoices = computed(() => {
    const u = this.units();
    return sweepableFieldsFor(this.draft()).map((f) => {
      const unit = fieldUnit(f.path, u);
      return { path: f.path, label: fieldLabel(f.path), unit };
    });
  });

  /** The case's tolerances as rows in display units. */
  protected readonly rows = computed(() => {
    const u = this.units();
    return (this.draft().tolerances ?? []).map((t, i) => {
      const si = t.distribution === 'normal' ? t.sigma : t.halfWidth;
      return { index: i, field: t.field, label: fieldLabel(t.field), unit: fieldUnit(t.field, u), distribution: t.distribution, shown: this.toShownSpread(t.field, si) };
    });
  });

  protected readonly canAdd = computed(() => {
    const used = new Set(this.rows().map((r) => r.field));
    return !this.workspace.readOnly() && this.fieldChoices().some((f) => !used.has(f.path));
  });

  protected readonly noiseError = signal<string | null>(null);
  /** Drive noise is modelled for a single body (the schema refuses it on a chain). */
  protected readonly isChain = computed(() => this.draft().body.kind === 'chain');
  protected readonly noise = computed(() => this.draft().noise ?? null);
  protected readonly noiseKind = computed<NoiseKind>(() => this.noise()?.kind ?? 'none');
  protected readonly lengthUnit = computed(() => unitLabelOf('length', this.units()));
  protected readonly angleUnit = computed(() => unitLabelOf('angle', this.units()));
  protected readonly frequencyUnit = computed(() => unitLabelOf('frequency', this.units()));
  /** The noise's numbers in display units: RMS phase (° or rad), density (mm²/Hz in mm), bandwidth. */
  protected readonly noiseShown = computed(() => {
    const n = this.noise();
    const u = this.units();
    if (!n) return null;
    const scale = toDisplay(1, 'length', u);
    return {
      rms: n.kind === 'phase-jitter' ? toShown(n.rms, 'angle', u) : null,
      density: n.kind === 'amplitude' ? Number((n.density * scale * scale).toPrecision(6)) : null,
      bandwidth: toShown(n.bandwidth, 'frequency', u),
      seed: n.seed,
      /** amplitude noise as the RMS displacement it gives, sqrt(S B) */
      displacementRms: n.kind === 'amplitude' ? formatIn(Math.sqrt(n.density * n.bandwidth), 'length', u) : null,
      bandwidthLimit: formatIn(MAX_NOISE_BANDWIDTH_RATIO * this.draft().drive.frequency, 'frequency', u),
    };
  });

  /** What can be sampled: the tolerances, the drive noise, or both, as the case carries them. */
  protected readonly partChoices = computed(() => {
    const c = this.draft();
    const tol = (c.tolerances?.length ?? 0) > 0;
    const noise = c.noise !== undefined;
    return HOLDPROB_PARTS.filter((p) => (p === 'tolerances' ? tol : p === 'noise' ? noise : tol && noise))
      .map((p) => ({ value: p, label: HOLDPROB_PARTS_WORDS[p].charAt(0).toUpperCase() + HOLDPROB_PARTS_WORDS[p].slice(1) }));
  });

  protected readonly parts = computed<Parts>(() => {
    const chosen = this.chosenParts();
    const choices = this.partChoices();
    if (chosen && choices.some((c) => c.value === chosen)) return chosen;
    return defaultHoldProbSettings(this.draft()).parts;
  });

  protected readonly settings = computed<HoldProbSettings>(() => ({
    ...defaultHoldProbSettings(this.draft()),
    samples: this.samples(),
    targetWidth: this.targetPoints() / 100,
    seed: this.seed(),
    parts: this.parts(),
    relTolerance: 1e-4,
  }));

  protected readonly problem = computed<string | null>(() => {
    if (this.partChoices().length === 0) return 'Add a tolerance or drive noise first: the probability samples them.';
    const checked = holdprobSettingsSchema.safeParse(this.settings());
    if (!checked.success) {
      const issue = checked.error.issues[0];
      const label = { samples: 'Samples', targetWidth: 'Stop when the interval is narrower than', seed: 'Seed' }[String(issue.path[0])] ?? 'A setting';
      return `${label}: ${issue.message}.`;
    }
    return null;
  });

  protected readonly headline = computed(() => {
    const r = this.result()?.value;
    if (!r) return null;
    return {
      probability: pct(r.probability),
      interval: `${pct(r.interval.lower)} to ${pct(r.interval.upper)}`,
      width: formatNumber(100 * (r.interval.upper - r.interval.lower), 2),
      samples: `${r.samplesUsed} of ${r.samplesRequested} samples, ${r.held} held`,
      stopped: r.stopped === 'target-width' ? `stopped early: the interval is narrower than ${formatNumber(100 * r.targetWidth, 3)} points` : null,
      invalid: r.invalid,
      parts: HOLDPROB_PARTS_WORDS[r.parts],
      seed: r.seed,
    };
  });

  protected readonly ranking = computed(() => {
    const r = this.result()?.value;
    if (!r) return [];
    const u = this.units();
    return r.ranking.map((s) => {
      const t = r.tolerances.find((x) => x.field === s.field);
      const rho = s.rankCorrelation;
      return {
        field: s.field,
        label: fieldLabel(s.field),
        spread: t ? spreadText(t, u) : '',
        rho: rho === null ? 'did not vary' : formatNumber(rho, 3),
        bar: rho === null ? 0 : Math.round(100 * Math.abs(rho)),
      };
    });
  });

  protected readonly plot = computed(() => {
    const r = this.result()?.value;
    return r ? holdProbabilityPlot(r) : null;
  });

  protected isUsed(path: string): boolean {
    return this.rows().some((r) => r.field === path);
  }

  protected setParts(p: Parts): void {
    this.chosenParts.set(p);
  }

  protected addTolerance(): void {
    const used = new Set(this.rows().map((r) => r.field));
    const free = this.fieldChoices().find((f) => !used.has(f.path));
    if (!free) return;
    this.apply([...this.current(), { field: free.path, distribution: 'normal', sigma: this.defaultSpread(free.path) }]);
  }

  protected removeTolerance(index: number): void {
    this.apply(this.current().filter((_, i) => i !== index));
  }

  protected setField(index: number, path: string): void {
    this.apply(this.current().map((t, i) => (i === index ? this.withSpread({ ...t, field: path }, this.defaultSpread(path)) : t)));
  }

  protected setDistribution(index: number, distribution: Tolerance['distribution']): void {
    this.apply(this.current().map((t, i) => {
      if (i !== index) return t;
      const si = t.distribution === 'normal' ? t.sigma : t.halfWidth;
      return distribution === 'normal' ? { field: t.field, distribution, sigma: si } : { field: t.field, distribution, halfWidth: si };
    }));
  }

  protected setSpread(index: number, value: number | string | null): void {
    const shown = value === null || value === '' ? NaN : Number(value);
    const row = this.rows()[index];
    if (!Number.isFinite(shown) || shown < 0) {
      this.toleranceError.set(`${row?.label ?? 'Tolerance'}: the spread must be a number, zero or more.`);
      return;
    }
    this.apply(this.current().map((t, i) => (i === index ? this.withSpread(t, this.fromShownSpread(t.field, shown)) : t)));
  }

  /** None, or a first noise of the kind: 3° RMS phase jitter, or 1 % of the amplitude RMS; both up to the drive frequency. */
  protected setNoiseKind(kind: NoiseKind): void {
    const c = this.draft();
    const f = c.drive.frequency;
    const seed = this.noise()?.seed ?? 1;
    if (kind === 'none') this.applyNoise(null);
    else if (kind === 'phase-jitter') this.applyNoise({ kind, rms: 0.05, bandwidth: f, seed });
    else this.applyNoise({ kind, density: (0.01 * c.drive.amplitude) ** 2 / f, bandwidth: f, seed });
  }

  protected setNoiseValue(key: 'rms' | 'density' | 'bandwidth' | 'seed', value: number | string | null): void {
    const n = this.noise();
    const shown = value === null || value === '' ? NaN : Number(value);
    const label = { rms: 'RMS phase error', density: 'Spectral density', bandwidth: 'Bandwidth', seed: 'Noise seed' }[key];
    if (!n) return;
    if (!Number.isFinite(shown) || shown < 0) {
      this.noiseError.set(`${label}: must be a number, zero or more.`);
      return;
    }
    const u = this.units();
    const scale = toDisplay(1, 'length', u);
    if (key === 'seed') this.applyNoise({ ...n, seed: shown });
    else if (key === 'bandwidth') this.applyNoise({ ...n, bandwidth: fromDisplay(shown, 'frequency', u) });
    else if (key === 'rms' && n.kind === 'phase-jitter') this.applyNoise({ ...n, rms: fromDisplay(shown, 'angle', u) });
    else if (key === 'density' && n.kind === 'amplitude') this.applyNoise({ ...n, density: shown / (scale * scale) });
  }

  protected runProbability(): void {
    this.workspace.runHoldProb(this.settings());
  }

  private current(): Tolerance[] {
    return [...(this.draft().tolerances ?? [])];
  }

  private apply(list: Tolerance[]): void {
    const refusal = this.workspace.setTolerances(list);
    this.toleranceError.set(refusal === null ? null : `Tolerances: ${refusal}`);
  }

  private applyNoise(noise: DriveNoise | null): void {
    const refusal = this.workspace.setNoise(noise);
    this.noiseError.set(refusal === null ? null : `Drive noise: ${refusal}`);
  }

  private withSpread(t: Tolerance, si: number): Tolerance {
    return t.distribution === 'normal' ? { field: t.field, distribution: 'normal', sigma: si } : { field: t.field, distribution: 'uniform', halfWidth: si };
  }

  /** 1 % of the field's value (0 when the value is 0), a starting point to edit. */
  private defaultSpread(path: string): number {
    const c: CaseParams = this.draft();
    let node: unknown = c;
    for (const key of path.split('.')) node = (node as Record<string, unknown> | undefined)?.[key];
    return typeof node === 'number' ? Number((Math.abs(node) * 0.01).toPrecision(3)) : 0;
  }

  private toShownSpread(path: string, si: number): number {
    const dim = fieldInfo(path)?.dimension ?? 'plain';
    return dim === 'plain' ? si : toShown(si, dim, this.units());
  }

  private fromShownSpread(path: string, shown: number): number {
    const dim = fieldInfo(path)?.dimension ?? 'plain';
    return dim === 'plain' ? shown : fromDisplay(shown, dim, this.units());
  }
}
