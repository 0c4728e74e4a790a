import { DEFAULT_UNITS, unitLabelOf, type Dimension, type DisplayUnits } from './display-units';
import { formatIn, formatNumber, formatPercent, withUnit } from './format-number';
import { outcomeWords } from '../../../../shared/case/display';
import { LEANEST_COST_WORDS } from '../../../../shared/case/leanest-words';

/** How a value of a field reads. */
type ValueKind = 'number' | 'percent' | 'probability' | 'outcome' | 'yes-no' | 'words';

/** One case field or stored-run summary number: what it is called, what it measures, how it reads. */
export interface FieldInfo {
  /** The full name, readable on its own (History, summaries, the visitor page). */
  readonly label: string;
  /** The name inside its Rig section, where the section heading gives the context; defaults to `label`. */
  readonly short?: string;
  /** Which display unit the value takes; `plain` values show `unit` as it is. */
  readonly dimension: Dimension;
  /** Unit of a plain value ("kg", "s"). */
  readonly unit?: string;
  readonly kind?: ValueKind;
  /** Words for the stored values of a `words` field. */
  readonly words?: Readonly<Record<string, string>>;
}

const length = (label: string, short?: string): FieldInfo => ({ label, short, dimension: 'length' });
const frequency = (label: string, short?: string): FieldInfo => ({ label, short, dimension: 'frequency' });
const angle = (label: string, short?: string): FieldInfo => ({ label, short, dimension: 'angle' });
const plain = (label: string, unit = '', short?: string): FieldInfo => ({ label, short, dimension: 'plain', unit });

/**
 * Every case field (dotted case path, `#` for an array index) and every stored-run summary key (under `summary.`),
 * with its label and unit. The Rig form, the tabs, History, stored-run summaries, the recheck page and the visitor
 * page all name and unit values through this table.
 */
export const FIELD_TABLE: Readonly<Record<string, FieldInfo>> = {
  schemaVersion: plain('Case format version'),
  body: plain('Body'),
  drive: plain('Drive'),
  damping: plain('Damping'),
  start: plain('Start'),
  run: plain('Run settings'),
  'body.kind': {
    label: 'Body',
    dimension: 'plain',
    kind: 'words',
    words: { 'point-mass': 'point mass on a light rod', 'rod-bob': 'rod with a bob', 'measured-swing': 'measured free swing', chain: 'chain of hinged links' },
  },
  'body.length': length('Length, pivot to mass'),
  'body.mass': plain('Mass', 'kg'),
  'body.rodLength': length('Rod length'),
  'body.rodMass': plain('Rod mass', 'kg'),
  'body.bobMass': plain('Bob mass', 'kg'),
  'body.bobRadius': length('Bob radius'),
  'body.bobDistance': length('Pivot to bob centre'),
  'body.swingFrequency': frequency('Free swing frequency (hanging)'),
  'drive.direction': angle('Drive direction from vertical', 'Direction from vertical'),
  'drive.amplitude': length('Drive amplitude', 'Amplitude'),
  'drive.frequency': frequency('Drive frequency', 'Frequency'),
  'drive.waveform.kind': {
    label: 'Drive waveform',
    dimension: 'plain',
    kind: 'words',
    words: { sine: 'sine', 'crank-slider': 'crank and connecting rod', harmonics: 'sum of harmonics' },
  },
  'body.links': plain('Chain links'),
  'body.links.#.kind': {
    label: 'Link # kind',
    short: 'Link',
    dimension: 'plain',
    kind: 'words',
    words: { 'point-mass': 'point mass on a light link', 'rod-bob': 'rod with a bob' },
  },
  'body.links.#.length': length('Link # length, hinge to mass', 'Length, hinge to mass'),
  'body.links.#.mass': plain('Link # mass', 'kg', 'Mass'),
  'body.links.#.rodLength': length('Link # rod length, hinge to hinge', 'Rod length, hinge to hinge'),
  'body.links.#.rodMass': plain('Link # rod mass', 'kg', 'Rod mass'),
  'body.links.#.bobMass': plain('Link # bob mass', 'kg', 'Bob mass'),
  'body.links.#.bobRadius': length('Link # bob radius', 'Bob radius'),
  'body.links.#.bobDistance': length('Link # hinge to bob centre', 'Hinge to bob centre'),
  'body.links.#.jointDamping': plain('Link # joint damping', 'N·m·s/rad', 'Joint damping'),
  'body.links.#.startBend': angle('Link # start bend from the previous link', 'Start bend'),
  'body.links.#.startBendRate': { label: 'Link # start bend rate', short: 'Start bend rate', dimension: 'rate' },
  'drive.waveform.connectingRod': length('Connecting rod'),
  'drive.waveform.terms.#.order': plain('Harmonic # order k', '', 'Order k'),
  'drive.waveform.terms.#.relAmplitude': plain('Harmonic # relative amplitude', '× amplitude', 'Relative amplitude'),
  'drive.waveform.terms.#.phase': angle('Harmonic # phase', 'Phase'),
  'drive.ramp.fromFrequency': frequency('Spin-up start frequency', 'Start frequency'),
  'drive.ramp.duration': plain('Spin-up time', 's'),
  'damping.viscousRatio': plain('Viscous damping ratio ζ'),
  'damping.quadratic': plain('Quadratic (air) damping', '1/rad', 'Quadratic (air)'),
  'damping.friction': plain('Pivot friction', 'rad/s²'),
  'damping.frictionSmoothing': plain('Friction smoothing', 'rad/s'),
  'start.angle': angle('Start angle from upright'),
  'start.rate': { label: 'Start rate', dimension: 'rate' },
  gravity: plain('Gravity g', 'm/s²'),
  'run.duration': plain('Simulated time', 's'),
  'run.rtol': plain('Relative tolerance'),
  'run.atol': plain('Absolute tolerance'),
  'run.outputPoints': plain('Output points'),
  'run.strobePhase': angle('Strobe phase'),
  'run.transientFraction': plain('Transient share ignored'),

  'summary.outcome': { label: 'Outcome', dimension: 'plain', kind: 'outcome' },
  'summary.status': {
    label: 'Integration',
    dimension: 'plain',
    kind: 'words',
    words: {
      completed: 'completed',
      stopped: 'stopped',
      cancelled: 'cancelled',
      'non-finite': 'stopped: the state blew up',
      'step-limit': 'stopped: step limit reached',
    },
  },
  'summary.finalTheta': angle('Final angle'),
  'summary.finalRate': { label: 'Final rate', dimension: 'rate' },
  'summary.maxDeviation': angle('Largest slow deviation from upright'),
  'summary.meanAngle': angle('Mean slow angle'),
  'summary.slowFrequencyHz': frequency('Slow frequency'),
  'summary.peakPivotAccelerationG': plain('Peak pivot acceleration', 'g'),
  'summary.peakPivotForce': plain('Peak pivot force', 'N'),
  'summary.rhsEvaluations': plain('Equation evaluations'),
  'summary.uprightHolds': { label: 'Upright holds', dimension: 'plain', kind: 'yes-no' },
  'summary.uprightMaxMultiplier': plain('Largest |μ| of the upright'),
  'summary.amplitudeLower': length('Lower amplitude limit'),
  'summary.amplitudeUpper': length('Upper amplitude limit'),
  'summary.frequencyLower': frequency('Lower frequency limit'),
  'summary.frequencyUpper': frequency('Upper frequency limit'),
  'summary.marginPercent': { label: 'Margin', dimension: 'plain', kind: 'percent' },
  'summary.periodicMotions': plain('Periodic motions found'),
  'summary.field': { label: 'Swept field', dimension: 'plain', kind: 'words' },
  'summary.points': plain('Points'),
  'summary.thresholds': plain('Thresholds'),
  'summary.point.#.outcome': { label: 'Point # outcome', dimension: 'plain', kind: 'outcome' },
  'summary.point.#.maxMultiplier': plain('Point # largest |μ|'),
  'summary.threshold.#.kind': {
    label: 'Threshold # kind',
    dimension: 'plain',
    kind: 'words',
    words: { outcome: 'outcome changes', multiplier: 'largest |μ| crosses 1' },
  },
  // Its unit is the swept field's: see `summaryRows`.
  'summary.threshold.#.value': plain('Threshold # value'),
  'summary.cells': plain('Cells'),
  'summary.holdingCells': plain('Cells where the upright holds'),
  'summary.leastMultiplier': plain('Least |μ| on the chart'),
  'summary.caseMaxMultiplier': plain('Largest |μ| at the case'),
  'summary.count.holds-upright': plain('Cells that hold upright'),
  'summary.count.settles-tilted': plain('Cells that settle tilted'),
  'summary.count.falls': plain('Cells that fall'),
  'summary.count.tumbles': plain('Cells that tumble'),
  'summary.count.irregular': plain('Irregular cells'),
  'summary.count.invalid': plain('Cells not computed'),
  'summary.cost': { label: 'Cost minimised', dimension: 'plain', kind: 'words', words: LEANEST_COST_WORDS },
  'summary.targetMarginPercent': { label: 'Wanted amplitude margin', dimension: 'plain', kind: 'percent' },
  'summary.feasibleCells': plain('Chart cells that keep the margin'),
  'summary.found': { label: 'Leanest drive found', dimension: 'plain', kind: 'yes-no' },
  'summary.optimumFrequency': frequency('Leanest drive frequency'),
  'summary.optimumAmplitude': length('Leanest drive amplitude'),
  'summary.optimumPeakAcceleration': plain('Leanest drive peak acceleration', 'm/s²'),
  'summary.optimumStroke': length('Leanest drive stroke'),
  'summary.optimumForce': plain('Leanest drive force', 'N'),
  'summary.optimumPower': plain('Leanest drive power proxy', 'W'),
  'summary.binding': { label: 'Limited by', dimension: 'plain', kind: 'words' },
  'summary.amplitudeMarginPercent': { label: 'Amplitude margin at the leanest drive', dimension: 'plain', kind: 'percent' },
  'summary.frequencyMarginPercent': { label: 'Frequency margin at the leanest drive', dimension: 'plain', kind: 'percent' },
  'summary.parts': { label: 'Sampled', dimension: 'plain', kind: 'words' },
  'summary.probability': { label: 'Probability of holding', dimension: 'plain', kind: 'probability' },
  'summary.intervalLower': { label: 'Probability of holding, 95 % interval from', dimension: 'plain', kind: 'probability' },
  'summary.intervalUpper': { label: 'Probability of holding, 95 % interval to', dimension: 'plain', kind: 'probability' },
  'summary.samplesUsed': plain('Samples run'),
  'summary.samplesHeld': plain('Samples that hold'),
  'summary.samplesInvalid': plain('Samples outside the case limits'),
  'summary.stoppedEarly': { label: 'Stopped at the wanted interval width', dimension: 'plain', kind: 'yes-no' },
  'summary.seed': plain('Sampling seed'),
  'summary.mostInfluential': { label: 'Spread that matters most', dimension: 'plain', kind: 'words' },
  tolerances: plain('Tolerances'),
  'tolerances.#.field': { label: 'Tolerance # on', dimension: 'plain', kind: 'words' },
  'tolerances.#.distribution': { label: 'Tolerance # spread', dimension: 'plain', kind: 'words', words: { normal: 'normal (σ)', uniform: 'uniform (±)' } },
  // in the toleranced field's unit: History reads it through that field (params-diff.ts)
  'tolerances.#.sigma': plain('Tolerance # σ'),
  'tolerances.#.halfWidth': plain('Tolerance # ±'),
  noise: plain('Drive noise'),
  'noise.kind': { label: 'Drive noise', dimension: 'plain', kind: 'words', words: { 'phase-jitter': 'phase jitter', amplitude: 'amplitude noise' } },
  'noise.rms': angle('Drive phase jitter, RMS'),
  'noise.density': plain('Drive amplitude noise density', 'm²/Hz'),
  'noise.bandwidth': frequency('Drive noise bandwidth'),
  'noise.seed': plain('Drive noise seed'),
};

/** `drive.waveform.terms.2.phase` -> the `#` key and the 1-based index 3. */
function tableKey(path: string): { key: string; index: number | null } {
  const match = /\.(\d+)(?=\.|$)/.exec(path);
  if (!match) return { key: path, index: null };
  return { key: path.replace(/\.\d+(?=\.|$)/, '.#'), index: Number(match[1]) + 1 };
}

/** The table entry of a case path or `summary.` key, its `#` filled with the 1-based index; null when unknown. */
export function fieldInfo(path: string): FieldInfo | null {
  const { key, index } = tableKey(path);
  const info = FIELD_TABLE[key];
  if (!info) return null;
  if (index === null) return info;
  const fill = (text: string | undefined) => text?.replace('#', String(index));
  return { ...info, label: fill(info.label) ?? info.label, short: fill(info.short) };
}

/** A field's label, or a sentence-cased last key when the table does not know it (a newer stored case). */
export function fieldLabel(path: string): string {
  const info = fieldInfo(path);
  if (info) return info.label;
  const last = path.split('.').pop() ?? path;
  const words = last.replace(/([a-z])([A-Z])/g, '$1 $2').toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/** The unit a field shows under the chosen display units ("mm", "kg", "" for plain numbers). */
export function fieldUnit(path: string, units: DisplayUnits = DEFAULT_UNITS): string {
  const info = fieldInfo(path);
  if (!info) return '';
  if (info.dimension === 'plain') return info.kind === 'percent' ? '%' : (info.unit ?? '');
  return unitLabelOf(info.dimension, units);
}

/** A field's value as it reads, with its unit: "6.78 mm", "+3.2 %", "holds upright", "yes". */
export function formatFieldValue(path: string, value: unknown, units: DisplayUnits = DEFAULT_UNITS, digits?: number): string {
  if (value === null || value === undefined) return '—';
  const info = fieldInfo(path);
  if (info?.kind === 'outcome') return outcomeWords(String(value));
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (info?.kind === 'words' && typeof value === 'string') {
    return info.words?.[value] ?? (path === 'summary.field' || /^tolerances\.\d+\.field$/.test(path) ? fieldLabel(value) : value);
  }
  if (typeof value !== 'number') return String(value);
  if (info?.kind === 'percent') return formatPercent(value, digits);
  if (info?.kind === 'probability') return `${formatNumber(100 * value, digits ?? 3)} %`;
  if (!info || info.dimension === 'plain') return withUnit(formatNumber(value, digits), info?.unit ?? '');
  return formatIn(value, info.dimension, units, digits);
}

/** One labelled number of a stored run's summary. */
export interface SummaryRow {
  readonly key: string;
  readonly label: string;
  readonly value: string;
}

/**
 * A stored run's summary as labelled values in display units. A sweep's threshold values take the unit of the
 * swept field (named in the summary's `field`).
 */
export function summaryRows(summary: Readonly<Record<string, unknown>>, units: DisplayUnits = DEFAULT_UNITS): SummaryRow[] {
  const swept = typeof summary['field'] === 'string' ? summary['field'] : null;
  return Object.entries(summary).map(([key, value]) => {
    const path = /^threshold\.\d+\.value$/.test(key) && swept !== null ? swept : `summary.${key}`;
    return { key, label: fieldLabel(`summary.${key}`), value: formatFieldValue(path, value, units) };
  });
}
