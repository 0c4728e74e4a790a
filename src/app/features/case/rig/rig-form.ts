import { AbstractControl, FormArray, FormControl, FormGroup, Validators } from '@angular/forms';

import type { CaseParams, ChainBody, HarmonicTerm } from '../../../../../shared/case/case-schema';
import { chainLinkLength } from '../../../../../shared/case/display';
import { CASE_SCHEMA_VERSION, STANDARD_GRAVITY } from '../../../../../shared/case/case-schema';
import { parseCase, type CaseIssue, type ParseCaseResult } from '../../../../../shared/case/validate';
import {
  DEFAULT_UNITS,
  fromDisplay,
  toDisplay,
  toShown,
  type Dimension,
  type DisplayUnits,
} from '../../../core/units/display-units';
import { fieldInfo, formatFieldValue } from '../../../core/units/field-table';
import { formatBound } from '../../../core/units/format-number';

type Num = FormControl<number | null>;
export type BodyKind = CaseParams['body']['kind'];
export type WaveformKind = CaseParams['drive']['waveform']['kind'];

export interface HarmonicControls {
  order: Num;
  relAmplitude: Num;
  phase: Num;
}

export interface RigControls {
  body: FormGroup<{
    kind: FormControl<BodyKind>;
    length: Num;
    mass: Num;
    rodLength: Num;
    rodMass: Num;
    bobMass: Num;
    bobRadius: Num;
    bobDistance: Num;
    swingFrequency: Num;
  }>;
  drive: FormGroup<{
    direction: Num;
    amplitude: Num;
    frequency: Num;
    waveform: FormControl<WaveformKind>;
    connectingRod: Num;
    harmonics: FormArray<FormGroup<HarmonicControls>>;
    rampOn: FormControl<boolean>;
    rampFrom: Num;
    rampDuration: Num;
  }>;
  damping: FormGroup<{ viscousRatio: Num; quadratic: Num; friction: Num; frictionSmoothing: Num }>;
  start: FormGroup<{ angle: Num; rate: Num }>;
  gravity: Num;
  run: FormGroup<{
    duration: Num;
    rtol: Num;
    atol: Num;
    outputPoints: Num;
    strobePhase: Num;
    transientFraction: Num;
  }>;
}

/** Form paths of the fields that carry a unit (harmonic phases are handled by pattern). */
const FIELD_DIMENSIONS: Readonly<Record<string, Dimension>> = {
  'body.length': 'length',
  'body.rodLength': 'length',
  'body.bobRadius': 'length',
  'body.bobDistance': 'length',
  'body.swingFrequency': 'frequency',
  'drive.direction': 'angle',
  'drive.amplitude': 'length',
  'drive.frequency': 'frequency',
  'drive.connectingRod': 'length',
  'drive.rampFrom': 'frequency',
  'start.angle': 'angle',
  'start.rate': 'rate',
  'run.strobePhase': 'angle',
};

/** Dimension of a form control path such as `drive.amplitude` or `drive.harmonics.2.phase`. */
export function dimensionOf(formPath: string): Dimension {
  if (/^drive\.harmonics\.\d+\.phase$/.test(formPath)) return 'angle';
  return FIELD_DIMENSIONS[formPath] ?? 'plain';
}

/** Maps a case path (from parseCase issues) to the form control that edits it. */
export function formPathOf(casePath: string): string {
  if (casePath === 'drive.waveform.connectingRod') return 'drive.connectingRod';
  if (casePath.startsWith('drive.waveform.terms')) return casePath.replace('drive.waveform.terms', 'drive.harmonics');
  if (casePath === 'drive.ramp.fromFrequency') return 'drive.rampFrom';
  if (casePath === 'drive.ramp.duration') return 'drive.rampDuration';
  return casePath;
}

/**
 * A case issue in the user's words and display unit: "Must be at least 1.115 Hz: a drive slower than a tenth of the
 * free swing has no slow motion to average", "Must be a whole number", "Must be one of: sine, …".
 */
export function readableIssue(issue: CaseIssue, units: DisplayUnits): string {
  const info = fieldInfo(issue.field);
  if (issue.bound) {
    const bound = formatBound(issue.bound.relation, issue.bound.value, info?.dimension ?? 'plain', units, info?.unit ?? '');
    return `Must be ${bound}${issue.reason ? `: ${issue.reason}` : ''}`;
  }
  if (issue.expected === 'int') return 'Must be a whole number';
  if (issue.expected === 'number') return 'Enter a number';
  if (issue.expected?.includes(' | ')) {
    const allowed = issue.expected.split(' | ').map((value) => formatFieldValue(issue.field, value, units));
    return `Must be one of: ${allowed.join(', ')}`;
  }
  if (issue.expected === 'object' || issue.expected === 'array') return 'Missing';
  if (issue.expected) return `Must be ${issue.expected === 'string' ? 'text' : `a ${issue.expected}`}`;
  return issue.message.charAt(0).toUpperCase() + issue.message.slice(1);
}

const num = (value: number): Num => new FormControl<number | null>(value, Validators.required);

function harmonicGroup(term: HarmonicTerm, units: DisplayUnits): FormGroup<HarmonicControls> {
  return new FormGroup<HarmonicControls>({
    order: num(term.order),
    relAmplitude: num(term.relAmplitude),
    phase: num(toDisplay(term.phase, 'angle', units)),
  });
}

/** Values for the body kinds the case does not use, so switching kind starts from something plausible. */
function bodyFallbacks(params: CaseParams): Record<string, number> {
  const g = params.gravity;
  const b = params.body;
  const length =
    b.kind === 'point-mass' ? b.length
    : b.kind === 'rod-bob' ? b.rodLength
    : b.kind === 'chain' ? b.links.reduce((sum, link) => sum + chainLinkLength(link), 0)
    : g / (2 * Math.PI * b.swingFrequency) ** 2;
  const mass =
    b.kind === 'rod-bob' ? b.rodMass + b.bobMass
    : b.kind === 'chain' ? b.links.reduce((sum, link) => sum + (link.kind === 'rod-bob' ? link.rodMass + link.bobMass : link.mass), 0)
    : b.mass;
  return {
    length,
    mass,
    rodLength: length,
    rodMass: mass / 5,
    bobMass: (4 * mass) / 5,
    bobRadius: length / 20,
    bobDistance: (9 * length) / 10,
    swingFrequency: Math.sqrt(g / length) / (2 * Math.PI),
  };
}

/**
 * The Rig tab's typed reactive form over the whole case, in display units. `setParams` fills it from an SI case,
 * `parse` reads it back through `parseCase` and puts each issue on the control that edits the field.
 *
 * Fields show rounded values (SHOWN_DIGITS); each control remembers the exact SI value behind what it shows, and
 * reading the form uses that value while the field still shows it. So opening a case, switching units and saving
 * leaves every field the user did not edit bit-for-bit as stored (same case digest, nothing marked edited).
 */
export class RigForm {
  readonly group: FormGroup<RigControls>;
  private currentUnits: DisplayUnits;
  private readonly exact = new WeakMap<AbstractControl, { readonly si: number; readonly shown: number }>();
  /**
   * The case's chain, kept whole: this form does not edit links, so a chain is saved exactly as it was opened (or,
   * chosen here for a single body, as two equal point-mass links of the body's length and mass).
   */
  private chain: ChainBody | null = null;

  constructor(params: CaseParams, units: DisplayUnits = DEFAULT_UNITS) {
    this.currentUnits = units;
    this.group = new FormGroup<RigControls>({
      body: new FormGroup({
        kind: new FormControl<BodyKind>('point-mass', { nonNullable: true }),
        length: num(0),
        mass: num(0),
        rodLength: num(0),
        rodMass: num(0),
        bobMass: num(0),
        bobRadius: num(0),
        bobDistance: num(0),
        swingFrequency: num(0),
      }),
      drive: new FormGroup({
        direction: num(0),
        amplitude: num(0),
        frequency: num(0),
        waveform: new FormControl<WaveformKind>('sine', { nonNullable: true }),
        connectingRod: num(0),
        harmonics: new FormArray<FormGroup<HarmonicControls>>([]),
        rampOn: new FormControl(false, { nonNullable: true }),
        rampFrom: num(0),
        rampDuration: num(1),
      }),
      damping: new FormGroup({ viscousRatio: num(0), quadratic: num(0), friction: num(0), frictionSmoothing: num(0.01) }),
      start: new FormGroup({ angle: num(0), rate: num(0) }),
      gravity: num(STANDARD_GRAVITY),
      run: new FormGroup({
        duration: num(1),
        rtol: num(1e-8),
        atol: num(1e-10),
        outputPoints: num(4000),
        strobePhase: num(0),
        transientFraction: num(0.5),
      }),
    });
    this.setParams(params);
  }

  get units(): DisplayUnits {
    return this.currentUnits;
  }

  get harmonics(): FormArray<FormGroup<HarmonicControls>> {
    return this.group.controls.drive.controls.harmonics;
  }

  /** Fills every control from an SI case, without emitting value changes. */
  setParams(params: CaseParams): void {
    // The form is first filled in SI, then each numeric control is switched to its shown value (see `show`).
    const fb = bodyFallbacks(params);
    const b = params.body;
    this.chain = b.kind === 'chain' ? b : null;
    const body = {
      kind: b.kind,
      length: b.kind === 'point-mass' ? b.length : fb['length'],
      mass: b.kind === 'point-mass' || b.kind === 'measured-swing' ? b.mass : fb['mass'],
      rodLength: b.kind === 'rod-bob' ? b.rodLength : fb['rodLength'],
      rodMass: b.kind === 'rod-bob' ? b.rodMass : fb['rodMass'],
      bobMass: b.kind === 'rod-bob' ? b.bobMass : fb['bobMass'],
      bobRadius: b.kind === 'rod-bob' ? b.bobRadius : fb['bobRadius'],
      bobDistance: b.kind === 'rod-bob' ? b.bobDistance : fb['bobDistance'],
      swingFrequency: b.kind === 'measured-swing' ? b.swingFrequency : fb['swingFrequency'],
    };
    const w = params.drive.waveform;
    const terms: HarmonicTerm[] = w.kind === 'harmonics' ? w.terms : [{ order: 1, relAmplitude: 1, phase: 0 }];
    const harmonics = this.harmonics;
    harmonics.clear({ emitEvent: false });
    for (const term of terms) harmonics.push(harmonicGroup(term, this.currentUnits), { emitEvent: false });
    const ramp = params.drive.ramp;
    this.group.setValue(
      {
        body,
        drive: {
          direction: params.drive.direction,
          amplitude: params.drive.amplitude,
          frequency: params.drive.frequency,
          waveform: w.kind,
          connectingRod: w.kind === 'crank-slider' ? w.connectingRod : params.drive.amplitude * 5 || 0.1,
          harmonics: terms.map((t) => ({ order: t.order, relAmplitude: t.relAmplitude, phase: t.phase })),
          rampOn: ramp !== undefined,
          rampFrom: ramp?.fromFrequency ?? 0,
          rampDuration: ramp?.duration ?? Math.min(1, params.run.duration / 4),
        },
        damping: { ...params.damping },
        start: { ...params.start },
        gravity: params.gravity,
        run: { ...params.run },
      },
      { emitEvent: false },
    );
    this.forEachNumeric((control, path) => {
      if (control.value !== null) this.show(control, control.value, dimensionOf(path));
    });
    this.group.markAsPristine();
  }

  /** Switches display units, converting every shown value (without emitting value changes). */
  setUnits(next: DisplayUnits): void {
    const prev = this.currentUnits;
    this.currentUnits = next;
    this.forEachNumeric((control, path) => {
      const dim = dimensionOf(path);
      const value = control.value;
      if (dim === 'plain' || value === null || !Number.isFinite(value)) return;
      this.show(control, this.siOf(control, dim, prev), dim);
    });
  }

  /** Two equal point-mass links sharing a body's length and mass, for a case switched to a chain here. */
  private defaultChain(length: number, mass: number): ChainBody {
    const link = { kind: 'point-mass' as const, length: length / 2, mass: mass / 2, jointDamping: 0 };
    return { kind: 'chain', links: [link, { ...link }] };
  }

  addHarmonic(): void {
    this.harmonics.push(harmonicGroup({ order: this.harmonics.length + 1, relAmplitude: 0.1, phase: 0 }, this.currentUnits));
  }

  removeHarmonic(index: number): void {
    if (this.harmonics.length > 1) this.harmonics.removeAt(index);
  }

  /** The form's case in SI, unvalidated (empty fields become NaN, which the schema refuses). */
  rawParams(): unknown {
    const v = this.group.getRawValue();
    const c = this.group.controls;
    const b = c.body.controls;
    const dr = c.drive.controls;
    const dm = c.damping.controls;
    const r = c.run.controls;
    const si = (control: Num, dim: Dimension) => this.siOf(control, dim, this.currentUnits);
    const n = (control: Num) => this.siOf(control, 'plain', this.currentUnits);
    const body =
      v.body.kind === 'point-mass'
        ? { kind: v.body.kind, length: si(b.length, 'length'), mass: n(b.mass) }
        : v.body.kind === 'rod-bob'
          ? {
              kind: v.body.kind,
              rodLength: si(b.rodLength, 'length'),
              rodMass: n(b.rodMass),
              bobMass: n(b.bobMass),
              bobRadius: si(b.bobRadius, 'length'),
              bobDistance: si(b.bobDistance, 'length'),
            }
          : v.body.kind === 'chain'
            ? this.chain ?? this.defaultChain(si(b.length, 'length'), n(b.mass))
            : { kind: v.body.kind, swingFrequency: si(b.swingFrequency, 'frequency'), mass: n(b.mass) };
    const waveform =
      v.drive.waveform === 'sine'
        ? { kind: 'sine' }
        : v.drive.waveform === 'crank-slider'
          ? { kind: 'crank-slider', connectingRod: si(dr.connectingRod, 'length') }
          : {
              kind: 'harmonics',
              terms: dr.harmonics.controls.map(({ controls: t }) => ({
                order: n(t.order),
                relAmplitude: n(t.relAmplitude),
                phase: si(t.phase, 'angle'),
              })),
            };
    return {
      schemaVersion: CASE_SCHEMA_VERSION,
      body,
      drive: {
        direction: si(dr.direction, 'angle'),
        amplitude: si(dr.amplitude, 'length'),
        frequency: si(dr.frequency, 'frequency'),
        waveform,
        ...(v.drive.rampOn
          ? { ramp: { fromFrequency: si(dr.rampFrom, 'frequency'), duration: n(dr.rampDuration) } }
          : {}),
      },
      damping: {
        viscousRatio: n(dm.viscousRatio),
        quadratic: n(dm.quadratic),
        friction: n(dm.friction),
        frictionSmoothing: n(dm.frictionSmoothing),
      },
      start: { angle: si(c.start.controls.angle, 'angle'), rate: si(c.start.controls.rate, 'rate') },
      gravity: n(c.gravity),
      run: {
        duration: n(r.duration),
        rtol: n(r.rtol),
        atol: n(r.atol),
        outputPoints: n(r.outputPoints),
        strobePhase: si(r.strobePhase, 'angle'),
        transientFraction: n(r.transientFraction),
      },
    };
  }

  /**
   * Validates the form's case with `parseCase` and shows each issue on its control (error key `case`), clearing
   * issues that no longer apply. Returns the parse result.
   */
  parse(): ParseCaseResult {
    const result = parseCase(this.rawParams());
    this.forEachNumeric((control) => clearCaseError(control));
    clearCaseError(this.group);
    if (!result.ok) this.applyIssues(result.issues);
    return result;
  }

  /** The control that edits a case path, if any. */
  controlFor(casePath: string): AbstractControl | null {
    return this.group.get(formPathOf(casePath));
  }

  /** Shows an SI value on a control, rounded, and remembers the exact value behind it. */
  private show(control: Num, si: number, dim: Dimension): void {
    const shown = toShown(si, dim, this.currentUnits);
    control.setValue(shown, { emitEvent: false });
    this.exact.set(control, { si, shown });
  }

  /** A control's SI value: the exact one while it shows what `show` put there, else its value converted. */
  private siOf(control: Num, dim: Dimension, units: DisplayUnits): number {
    const value = control.value;
    if (value === null) return Number.NaN;
    const exact = this.exact.get(control);
    return exact !== undefined && exact.shown === value ? exact.si : fromDisplay(value, dim, units);
  }

  private applyIssues(issues: readonly CaseIssue[]): void {
    for (const issue of issues) {
      const formPath = formPathOf(issue.field);
      const control = this.group.get(formPath) ?? this.group;
      const message = readableIssue(issue, this.currentUnits);
      control.setErrors({ ...(control.errors ?? {}), case: message }, { emitEvent: false });
      control.markAsTouched();
    }
  }

  private forEachNumeric(visit: (control: FormControl<number | null>, path: string) => void): void {
    const walk = (control: AbstractControl, path: string) => {
      if (control instanceof FormGroup || control instanceof FormArray) {
        for (const [key, child] of Object.entries(control.controls as Record<string, AbstractControl>)) {
          walk(child, path ? `${path}.${key}` : key);
        }
      } else if (control instanceof FormControl && (typeof control.value === 'number' || control.value === null)) {
        visit(control as FormControl<number | null>, path);
      }
    };
    walk(this.group, '');
  }
}

function clearCaseError(control: AbstractControl): void {
  const errors = control.errors;
  if (!errors || !('case' in errors)) return;
  const rest = Object.fromEntries(Object.entries(errors).filter(([key]) => key !== 'case'));
  control.setErrors(Object.keys(rest).length > 0 ? rest : null, { emitEvent: false });
}

/** The message to show under a control: its case issue, else "Enter a number" when empty. */
export function controlMessage(control: AbstractControl | null): string | null {
  if (!control?.errors) return null;
  const caseIssue: unknown = control.errors['case'];
  if (typeof caseIssue === 'string') return caseIssue;
  if (control.errors['required']) return 'Enter a number';
  return null;
}
