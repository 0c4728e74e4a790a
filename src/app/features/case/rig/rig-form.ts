import { AbstractControl, FormArray, FormControl, FormGroup, Validators } from '@angular/forms';

import type { CaseParams, ChainLink, HarmonicTerm } from '../../../../../shared/case/case-schema';
import { CHAIN_LINKS } from '../../../../../shared/case/case-schema';
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

export type LinkKind = ChainLink['kind'];

/** One chain link: both link kinds' fields (the unused kind's keep plausible values for switching). */
export interface LinkControls {
  kind: FormControl<LinkKind>;
  length: Num;
  mass: Num;
  rodLength: Num;
  rodMass: Num;
  bobMass: Num;
  bobRadius: Num;
  bobDistance: Num;
  jointDamping: Num;
  startBend: Num;
  startBendRate: Num;
}

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
    links: FormArray<FormGroup<LinkControls>>;
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
  const link = /^body\.links\.\d+\.(\w+)$/.exec(formPath)?.[1];
  if (link === 'length' || link === 'rodLength' || link === 'bobRadius' || link === 'bobDistance') return 'length';
  if (link === 'startBend') return 'angle';
  if (link === 'startBendRate') return 'rate';
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

/** A link's full control values in SI: its own fields, and fallbacks for the other kind's. */
function linkValue(link: ChainLink) {
  const length = chainLinkLength(link);
  const mass = link.kind === 'rod-bob' ? link.rodMass + link.bobMass : link.mass;
  return {
    kind: link.kind,
    length: link.kind === 'point-mass' ? link.length : length,
    mass: link.kind === 'point-mass' ? link.mass : mass,
    rodLength: link.kind === 'rod-bob' ? link.rodLength : length,
    rodMass: link.kind === 'rod-bob' ? link.rodMass : mass / 5,
    bobMass: link.kind === 'rod-bob' ? link.bobMass : (4 * mass) / 5,
    bobRadius: link.kind === 'rod-bob' ? link.bobRadius : length / 20,
    bobDistance: link.kind === 'rod-bob' ? link.bobDistance : length,
    jointDamping: link.jointDamping,
    startBend: link.startBend ?? 0,
    startBendRate: link.startBendRate ?? 0,
  };
}

function linkGroup(): FormGroup<LinkControls> {
  return new FormGroup<LinkControls>({
    kind: new FormControl<LinkKind>('point-mass', { nonNullable: true }),
    length: num(0),
    mass: num(0),
    rodLength: num(0),
    rodMass: num(0),
    bobMass: num(0),
    bobRadius: num(0),
    bobDistance: num(0),
    jointDamping: num(0),
    startBend: num(0),
    startBendRate: num(0),
  });
}

/** A single body's chain fallback: two equal point-mass links sharing its length and mass. */
function fallbackLinks(length: number, mass: number): ChainLink[] {
  const link = { kind: 'point-mass' as const, length: length / 2, mass: mass / 2, jointDamping: 0 };
  return [link, { ...link }];
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
  /** Links whose stored case had a start bend (rate) key, so a bend of 0 is saved as stored, present or absent. */
  private readonly storedBends = new WeakMap<AbstractControl, { bend: boolean; rate: boolean }>();
  /** The case's tolerances and drive noise: edited in the Sign-off tab, carried through the form unchanged. */
  private extras: Pick<CaseParams, 'tolerances' | 'noise'> = {};

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
        links: new FormArray<FormGroup<LinkControls>>([]),
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

  get links(): FormArray<FormGroup<LinkControls>> {
    return this.group.controls.body.controls.links;
  }

  get harmonics(): FormArray<FormGroup<HarmonicControls>> {
    return this.group.controls.drive.controls.harmonics;
  }

  /** Fills every control from an SI case, without emitting value changes. */
  setParams(params: CaseParams): void {
    this.setExtras({ tolerances: params.tolerances, noise: params.noise });
    // The form is first filled in SI, then each numeric control is switched to its shown value (see `show`).
    const fb = bodyFallbacks(params);
    const b = params.body;
    const chainLinks = b.kind === 'chain' ? b.links : fallbackLinks(fb['length'], fb['mass']);
    this.links.clear({ emitEvent: false });
    for (const link of chainLinks) {
      const group = linkGroup();
      this.storedBends.set(group, { bend: link.startBend !== undefined, rate: link.startBendRate !== undefined });
      this.links.push(group, { emitEvent: false });
    }
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
      links: chainLinks.map(linkValue),
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

  /** Adds a link beyond the last, a copy of it, straight on (up to the most a chain may have). */
  addLink(): void {
    if (this.links.length >= CHAIN_LINKS.max) return;
    const last = this.links.at(this.links.length - 1);
    const group = linkGroup();
    this.links.push(group, { emitEvent: false });
    group.controls.kind.setValue(last.controls.kind.value, { emitEvent: false });
    for (const [key, control] of Object.entries(group.controls)) {
      if (key === 'kind') continue;
      const from = last.get(key);
      const dim = dimensionOf(`body.links.0.${key}`);
      const si = key === 'startBend' || key === 'startBendRate' ? 0 : from instanceof FormControl ? this.siOf(from as Num, dim, this.currentUnits) : 0;
      this.show(control as Num, si, dim);
    }
    this.links.updateValueAndValidity();
  }

  /** Removes a link (a chain keeps at least two). */
  removeLink(index: number): void {
    if (this.links.length > CHAIN_LINKS.min) this.links.removeAt(index);
  }

  /** One link of the form in SI; a bend of 0 is left out unless the stored link had it. */
  private linkParams(group: FormGroup<LinkControls>): Record<string, unknown> {
    const l = group.controls;
    const si = (control: Num, dim: Dimension) => this.siOf(control, dim, this.currentUnits);
    const n = (control: Num) => this.siOf(control, 'plain', this.currentUnits);
    const stored = this.storedBends.get(group) ?? { bend: false, rate: false };
    const bend = si(l.startBend, 'angle');
    const bendRate = si(l.startBendRate, 'rate');
    const joint = {
      jointDamping: n(l.jointDamping),
      ...(bend !== 0 || stored.bend ? { startBend: bend } : {}),
      ...(bendRate !== 0 || stored.rate ? { startBendRate: bendRate } : {}),
    };
    return l.kind.value === 'point-mass'
      ? { kind: 'point-mass', length: si(l.length, 'length'), mass: n(l.mass), ...joint }
      : {
          kind: 'rod-bob',
          rodLength: si(l.rodLength, 'length'),
          rodMass: n(l.rodMass),
          bobMass: n(l.bobMass),
          bobRadius: si(l.bobRadius, 'length'),
          bobDistance: si(l.bobDistance, 'length'),
          ...joint,
        };
  }

  addHarmonic(): void {
    this.harmonics.push(harmonicGroup({ order: this.harmonics.length + 1, relAmplitude: 0.1, phase: 0 }, this.currentUnits));
  }

  removeHarmonic(index: number): void {
    if (this.harmonics.length > 1) this.harmonics.removeAt(index);
  }

  /** Replaces the tolerances and drive noise the form carries (absent keys stay absent, so the digest is kept). */
  setExtras(extras: Pick<CaseParams, 'tolerances' | 'noise'>): void {
    this.extras = {
      ...(extras.tolerances !== undefined ? { tolerances: extras.tolerances } : {}),
      ...(extras.noise !== undefined ? { noise: extras.noise } : {}),
    };
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
            ? { kind: 'chain', links: this.links.controls.map((group) => this.linkParams(group)) }
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
      ...this.extras,
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
