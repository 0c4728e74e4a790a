import { ChangeDetectionStrategy, Component, ElementRef, afterRenderEffect, computed, inject, signal } from '@angular/core';
import { ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatSelectModule } from '@angular/material/select';

import { DEMO_RIGS, templateCase } from '../../../../../shared/case/templates';
import { averagedAnalysis } from '../../../../../shared/engine/averaged';
import { bodyProperties } from '../../../../../shared/engine/body';
import { chainLinkWords } from '../../../../../shared/case/display';
import { CHAIN_LINKS } from '../../../../../shared/case/case-schema';
import { driveSizing } from '../../../../../shared/engine/sizing';
import { CaseWorkspace } from '../case-workspace';
import { formatIn, formatNumber } from '../../../core/units/format-number';
import { CautionPanel } from './caution-panel';
import { NumberField } from './number-field';
import { fieldLabel } from '../../../core/units/field-table';
import { formPathOf, readableIssue } from './rig-form';
import { unitLabelOf, type AngleUnit, type DisplayUnits, type FrequencyUnit, type LengthUnit } from '../../../core/units/display-units';
import { RigSchematic } from './rig-schematic';

/** Slow swings the judged part of a run should hold so the Motion tab measures the slow frequency. */
const MIN_SLOW_SWINGS = 3;

interface SummaryRow {
  readonly label: string;
  readonly value: string;
  readonly note?: string;
}

/** The Rig tab: the whole case as a form in display units, presets, a live summary, a schematic and safety notes. */
@Component({
  selector: 'qp-rig-tab',
  imports: [
    ReactiveFormsModule,
    MatButtonModule,
    MatButtonToggleModule,
    MatCheckboxModule,
    MatFormFieldModule,
    MatIconModule,
    MatSelectModule,
    NumberField,
    RigSchematic,
    CautionPanel,
  ],
  templateUrl: './rig-tab.html',
  styleUrl: './rig-tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RigTab {
  protected readonly workspace = inject(CaseWorkspace);
  private readonly host = inject<ElementRef<HTMLElement>>(ElementRef);

  protected readonly form = this.workspace.form;
  protected readonly c = this.form.group.controls;
  protected readonly presets = DEMO_RIGS;
  protected readonly presetId = signal<string>('');
  protected readonly units = this.workspace.units;
  protected readonly draft = this.workspace.draft;
  protected readonly readOnly = this.workspace.readOnly;

  /** Bumps whenever the form changes, so kind-dependent parts of the template follow it. */
  private readonly formTick = this.workspace.formTick;
  protected readonly bodyKind = computed(() => {
    this.formTick();
    return this.c.body.controls.kind.value;
  });
  /** A chain's links in words and units, as last valid (a summary beside the link fields). */
  protected readonly chainLinks = computed(() => {
    const body = this.draft().body;
    return body.kind === 'chain' ? body.links.map(chainLinkWords) : [];
  });
  protected readonly linkGroups = computed(() => {
    this.formTick();
    return [...this.form.links.controls];
  });
  protected readonly maxLinks = CHAIN_LINKS.max;
  protected readonly minLinks = CHAIN_LINKS.min;
  protected readonly waveformKind = computed(() => {
    this.formTick();
    return this.c.drive.controls.waveform.value;
  });
  protected readonly rampOn = computed(() => {
    this.formTick();
    return this.c.drive.controls.rampOn.value;
  });
  protected readonly harmonicGroups = computed(() => {
    this.formTick();
    return [...this.form.harmonics.controls];
  });

  /** Unit labels by dimension. */
  protected readonly u = computed(() => {
    const units = this.units();
    return {
      length: unitLabelOf('length', units),
      frequency: unitLabelOf('frequency', units),
      angle: unitLabelOf('angle', units),
      rate: unitLabelOf('rate', units),
    };
  });

  /** The message for each form path with an issue. */
  protected readonly messages = computed(() => {
    const units = this.units();
    const out: Record<string, string> = {};
    for (const issue of this.workspace.issues()) {
      const path = formPathOf(issue.field);
      out[path] ??= readableIssue(issue, units);
    }
    return out;
  });
  protected readonly issueCount = computed(() => this.workspace.issues().length);
  /** Issues no control shows, in words: the whole case, or a field the form has no control for. */
  protected readonly caseLevelIssues = computed(() =>
    this.workspace
      .issues()
      .filter((i) => this.form.controlFor(i.field) === null || i.field === '')
      .map((i) => ({ key: i.field + i.message, text: `${i.field ? fieldLabel(i.field) : 'Case'}: ${readableIssue(i, this.units())}` })),
  );

  constructor() {
    // A refused run links here with the field to fix: focus it once it is rendered.
    afterRenderEffect(() => {
      const path = this.workspace.focusRequest();
      if (path === null) return;
      this.host.nativeElement.querySelector<HTMLElement>(`[data-field="${path}"]`)?.focus();
      this.workspace.requestFocus(null);
    });
  }

  protected readonly summary = computed<SummaryRow[]>(() => {
    const p = this.draft();
    const units = this.units();
    const body = bodyProperties(p.body, p.gravity);
    const averaged = averagedAnalysis(p);
    const sizing = driveSizing(p);
    const omega = 2 * Math.PI * p.drive.frequency;
    const aw2 = (p.drive.amplitude * omega) ** 2 / (p.gravity * body.equivalentLength);
    const rows: SummaryRow[] = [
      {
        label: 'Equivalent length L',
        value: formatIn(body.equivalentLength, 'length', units),
        ...(p.body.kind === 'chain' ? { note: 'of the chain’s slowest free swing' } : {}),
      },
      {
        label: 'Natural frequency ω₀ = √(g/L)',
        value: `${formatNumber(body.naturalFrequency)} rad/s`,
        note: `${p.body.kind === 'chain' ? 'slowest ' : ''}free swing ${formatIn(body.swingFrequencyHz, 'frequency', units)}`,
      },
      { label: 'Drive to swing ratio ω/ω₀', value: formatNumber(averaged.frequencyRatio, 3), note: 'averaged theory wants ≫ 1' },
      { label: '(aω)²/(gL)', value: formatNumber(aw2, 3), note: 'a vertical sine holds the upright above 2 (averaged theory)' },
      { label: '⟨ṡ²⟩/(gL)', value: formatNumber(averaged.stiffnessRatio, 3), note: 'the same test for any waveform: above 1' },
      { label: 'Peak pivot acceleration', value: `${formatNumber(sizing.peakAccelerationG, 3)} g` },
    ];
    if (averaged.lowerAmplitude !== null) {
      rows.push({ label: 'Averaged lower amplitude', value: formatIn(averaged.lowerAmplitude, 'length', units), note: 'at this frequency' });
    }
    if (averaged.lowerFrequency !== null) {
      rows.push({ label: 'Averaged lower frequency', value: formatIn(averaged.lowerFrequency, 'frequency', units), note: 'at this amplitude' });
    }
    if (averaged.uprightSlowFrequency !== null && averaged.uprightSlowFrequency > 0) {
      // The slow frequency is measured from crossings in the judged part of the run: it needs a few slow swings.
      const judged = p.run.duration * (1 - p.run.transientFraction);
      const period = (2 * Math.PI) / averaged.uprightSlowFrequency;
      const swings = judged / period;
      rows.push({
        label: 'Slow swings in the judged time',
        value: formatNumber(swings, 2),
        note:
          swings < MIN_SLOW_SWINGS
            ? `too few to measure the slow frequency: simulate at least ${formatNumber(Math.ceil((MIN_SLOW_SWINGS * period) / (1 - p.run.transientFraction)))} s`
            : 'averaged theory; enough to measure the slow frequency',
      });
    }
    if (averaged.tiltFromDown !== null) {
      rows.push({ label: 'Averaged tilt from hanging', value: formatIn(averaged.tiltFromDown, 'angle', units) });
    }
    rows.push(
      { label: 'Peak pivot velocity', value: `${formatNumber(sizing.peakVelocity)} m/s` },
      { label: 'Stroke (peak to peak)', value: formatIn(sizing.stroke, 'length', units) },
      { label: 'Peak pivot force on the body', value: `${formatNumber(sizing.pivotForcePeak)} N` },
      {
        label: `Amplitude for ⟨ṡ²⟩/(gL) = ${sizing.targetRatio}`,
        value: formatIn(sizing.amplitudeForTarget, 'length', units),
        note: 'crank radius at this speed',
      },
      {
        label: `Speed for ⟨ṡ²⟩/(gL) = ${sizing.targetRatio}`,
        value: formatIn(sizing.frequencyForTarget, 'frequency', units),
        note: sizing.motorSpeedRpm === null ? undefined : `motor ${formatNumber(sizing.motorSpeedRpm)} rev/min`,
      },
    );
    return rows;
  });

  protected applyPreset(): void {
    const id = this.presetId();
    const rig = DEMO_RIGS.find((r) => r.id === id);
    const params = rig ? structuredClone(rig.params) : templateCase();
    this.workspace.applyParams(params);
    if (this.workspace.isNew() && rig) this.workspace.title.set(rig.title);
  }

  protected setLengthUnit(unit: LengthUnit): void {
    this.setUnits({ ...this.units(), length: unit });
  }

  protected setFrequencyUnit(unit: FrequencyUnit): void {
    this.setUnits({ ...this.units(), frequency: unit });
  }

  protected setAngleUnit(unit: AngleUnit): void {
    this.setUnits({ ...this.units(), angle: unit });
  }

  protected addLink(): void {
    this.form.addLink();
  }

  protected removeLink(index: number): void {
    this.form.removeLink(index);
  }

  protected addHarmonic(): void {
    this.form.addHarmonic();
  }

  protected removeHarmonic(index: number): void {
    this.form.removeHarmonic(index);
  }

  private setUnits(units: DisplayUnits): void {
    this.workspace.setUnits(units);
  }
}
