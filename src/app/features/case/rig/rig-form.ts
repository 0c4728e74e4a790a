import { AbstractControl, FormArray, FormControl, FormGroup, Validators } from '@angular/forms';

import type { CaseParams, HarmonicTerm } from '../../../../../shared/case/case-schema';
import { CASE_SCHEMA_VERSION, STANDARD_GRAVITY } from '../../../../../shared/case/case-schema';
import { parseCase, type CaseIssue, type ParseCaseResult } from '../../../../../shared/case/validate';
import { fromSi, toSi, unitById } from '../../../../../shared/engine/units';

export type LengthUnit = 'm' | 'cm' | 'mm';
export type FrequencyUnit = 'Hz' | 'rpm';
export type AngleUnit = 'deg' | 'rad';

/** The units the page shows; cases are always stored in SI. */
export interface DisplayUnits {
  readonly length: LengthUnit;
  readonly frequency: FrequencyUnit;
  readonly angle: AngleUnit;
}

export const DEFAULT_UNITS: DisplayUnits = { length: 'mm', frequency: 'Hz', angle: 'deg' };

/** What a numeric field measures; decides which display unit it takes. */
export type Dimension = 'length' | 'frequency' | 'angle' | 'rate' | 'plain';

/** Unit id (shared/engine/units.ts) of a dimension under the chosen display units; null for plain numbers. */
export function unitIdOf(dimension: Dimension, units: DisplayUnits): string | null {
  switch (dimension) {
    case 'length':
      return units.length;
    case 'frequency':
      return units.frequency;
    case 'angle':
      return units.angle;
    case 'rate':
      return units.angle === 'deg' ? 'deg/s' : 'rad/s';
    case 'plain':
      return null;
  }
}

/** Short label of a dimension's display unit, e.g. "mm", "rev/min", "°/s". */
export function unitLabelOf(dimension: Dimension, units: DisplayUnits): string {
  const id = unitIdOf(dimension, units);
  return id === null ? '' : unitById(id).label;
}

/** SI value to display value, rounded to 12 significant digits so 0.02 m shows as 20 mm, not 20.000000000000004. */
export function toDisplay(si: number, dimension: Dimension, units: DisplayUnits): number {
  const id = unitIdOf(dimension, units);
  const value = id === null ? si : fromSi(si, id);
  return Number.isFinite(value) ? Number(value.toPrecision(12)) : value;
}

/** Significant digits a Rig field shows; the stored SI value keeps all of its digits (see RigForm). */
export const SHOWN_DIGITS = 6;

/** SI value as a Rig field shows it: in the display unit, at most SHOWN_DIGITS significant digits. */
export function toShown(si: number, dimension: Dimension, units: DisplayUnits): number {
  const id = unitIdOf(dimension, units);
  const value = id === null ? si : fromSi(si, id);
  return Number.isFinite(value) ? Number(value.toPrecision(SHOWN_DIGITS)) : value;
}

/** Display value back to SI. */
export function fromDisplay(value: number, dimension: Dimension, units: DisplayUnits): number {
  const id = unitIdOf(dimension, units);
  return id === null ? value : toSi(value, id);
}

/** Dimension of a stored SI unit string (SWEEPABLE_FIELDS units). */
export function dimensionOfSiUnit(unit: string): Dimension {
  if (unit === 'm') return 'length';
  if (unit === 'Hz') return 'frequency';
  if (unit === 'rad') return 'angle';
  if (unit === 'rad/s') return 'rate';
  return 'plain';
}

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

/** Rewrites zod's numeric bound messages in the field's display unit ("must be at most 100000 mm"). */
export function readableIssue(message: string, dimension: Dimension, units: DisplayUnits): string {
  const bound = /expected number to be ([<>]=?)(-?[\d.e+-]+)/i.exec(message);
  if (bound) {
    const value = toDisplay(Number(bound[2]), dimension, units);
    const unit = unitLabelOf(dimension, units);
    const words: Record<string, string> = { '>': 'more than', '>=': 'at least', '<': 'less than', '<=': 'at most' };
    return `Must be ${words[bound[1]] ?? bound[1]} ${value}${unit ? ` ${unit}` : ''}`;
  }
  if (/expected int/i.test(message)) return 'Must be a whole number';
  if (/received NaN|expected number/i.test(message)) return 'Enter a number';
  return message.charAt(0).toUpperCase() + message.slice(1);
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
  const length = b.kind === 'point-mass' ? b.length : b.kind === 'rod-bob' ? b.rodLength : g / (2 * Math.PI * b.swingFrequency) ** 2;
  const mass = b.kind === 'rod-bob' ? b.rodMass + b.bobMass : b.mass;
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
    const body = {
      kind: b.kind,
      length: b.kind === 'point-mass' ? b.length : fb['length'],
      mass: b.kind === 'rod-bob' ? fb['mass'] : b.mass,
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
      const message = readableIssue(issue.message, dimensionOf(formPath), this.currentUnits);
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
