/**
 * The case report: one revision on paper. A pure function from the revision (its parameters, people, recheck
 * state and stored runs) and the runs' decoded results to a pdfmake document definition; render-pdf.ts turns it
 * into bytes. Closed-form numbers (equivalent length, averaged theory, drive sizing) are computed from the
 * parameters here; everything else comes from the stored runs, so the report shows what the revision holds and
 * never reruns the engine. A run without a decoded result still gives its summary numbers (and a sweep its outcome
 * plot, from the stored settings).
 */
import type { CaseParams, Tolerance } from '../../shared/case/case-schema';
import { CAUTION_DEFERRAL, CAUTION_NOTES, CAUTION_TITLE } from '../../shared/case/caution';
import {
  OUTCOME_COLOURS, RECHECK_STATE_WORDS, SHOWN_UNITS, chainLinkWords, fieldDisplay, formatAngle, formatFrequency, formatLength, formatNumber, formatPercent,
  RUN_KIND_LABELS, formatShown, outcomeWords,
} from '../../shared/case/display';
import { averagedAnalysis } from '../../shared/engine/averaged';
import { bodyProperties } from '../../shared/engine/body';
import { MULTIPLIER_UNIT_TOLERANCE } from '../../shared/engine/floquet';
import type { RunResult, RunSettings } from '../../shared/engine/run-record';
import { driveSizing } from '../../shared/engine/sizing';
import { sweepValues, type SweepSpec } from '../../shared/engine/sweep';
import { ENGINE_VERSION } from '../../shared/engine/version';
import { marginGaugeSvg, marginLook, rigSchematicSvg } from './report-figures';
import { linePlot, pick, rasterPlot, strideIndices, thinIndices, type MarkerLine, type PlotSeries } from './svg-plot';

export interface ReportPerson {
  readonly name: string;
}

export interface ReportRun {
  readonly id: string;
  readonly kind: string;
  readonly settings: Record<string, unknown>;
  readonly summary: Record<string, unknown>;
  readonly resultDigest: string;
  readonly engineVersion: string;
  readonly author: ReportPerson | null;
  readonly createdAt: string;
  /** The server's own rerun of the run, where the server keeps one. */
  readonly verification?: { readonly state: string };
}

export interface ReportRevision {
  readonly number: number;
  readonly paramsDigest: string;
  readonly note: string;
  readonly author: ReportPerson | null;
  readonly createdAt: string;
  readonly recheckState: string;
  readonly recheckRequest: { readonly reviewer: ReportPerson | null } | null;
  readonly rechecks: ReadonlyArray<{ readonly reviewer: ReportPerson | null; readonly state: string; readonly createdAt: string }>;
  readonly params: CaseParams;
  readonly runs: readonly ReportRun[];
}

export interface ReportInput {
  readonly caseTitle: string;
  readonly labName: string;
  readonly revision: ReportRevision;
  /** Decoded stored results by run id; runs without one are reported from their summaries. */
  readonly results: ReadonlyMap<string, RunResult>;
  readonly generatedAt: Date;
}

/** A pdfmake content node (plain data; pdfmake checks it at render time). */
export type PdfContent = string | PdfNode | PdfContent[];
export interface PdfNode {
  readonly [key: string]: unknown;
}

export interface PdfDocument {
  readonly info: { title: string; author: string; subject: string; creator: string };
  readonly pageSize: 'A4';
  readonly pageMargins: [number, number, number, number];
  readonly content: PdfContent[];
  readonly footer: (page: number, pages: number) => PdfContent;
  readonly styles: Record<string, PdfNode>;
  readonly defaultStyle: PdfNode;
}

/** Most points a plotted trace keeps: enough for the eye at print size, few enough to keep the file small. */
export const MAX_TRACE_POINTS = 700;
/** A stability chart is drawn on at most this many cells per side (each shows the largest |μ| of its block). */
export const MAX_RASTER_CELLS = 60;

const PAGE_WIDTH = 515;

type Row = [label: string, value: string];

const num = (v: unknown): number | null => {
  if (typeof v === 'number') return v;
  if (v === 'Infinity' || v === '-Infinity') return Number(v);
  return null;
};

/** "2026-12-02 13:32 UTC": a date every reader reads the same way, whatever their locale. */
export function reportDate(iso: string | Date): string {
  const d = typeof iso === 'string' ? new Date(iso) : iso;
  return `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

const frequencyWithRpm = (hz: number | null) => (hz === null ? '—' : `${formatFrequency(hz)} (${formatNumber(hz * 60)} rev/min)`);

function table(rows: readonly Row[], widths: [string | number, string | number] = ['*', 'auto']): PdfNode {
  return {
    table: { widths, body: rows.map(([label, value]) => [{ text: label, style: 'label' }, { text: value, style: 'value' }]) },
    layout: 'lightHorizontalLines',
    margin: [0, 2, 0, 6],
  };
}

function section(title: string): PdfNode {
  return { text: title, style: 'section' };
}

function note(text: string): PdfNode {
  return { text, style: 'note' };
}

/** The last stored run of each kind: the one a reader of the revision means. */
function latestByKind(runs: readonly ReportRun[]): Map<string, ReportRun> {
  const out = new Map<string, ReportRun>();
  for (const run of runs) out.set(run.kind, run);
  return out;
}

function storedLine(run: ReportRun, hasResult: boolean): PdfNode {
  const by = run.author ? ` by ${run.author.name}` : '';
  return note(`Stored ${reportDate(run.createdAt)}${by}, engine ${run.engineVersion}${hasResult ? '' : '; its full result is not stored, so the numbers come from the run summary'}.`);
}

function rigRows(p: CaseParams): Row[] {
  const b = p.body;
  const d = p.drive;
  const rows: Row[] = [];
  if (b.kind === 'point-mass') {
    rows.push(['Body', 'Point mass on a light rod'], ['Length, pivot to mass', formatLength(b.length)], ['Mass', `${formatNumber(b.mass)} kg`]);
  } else if (b.kind === 'rod-bob') {
    rows.push(
      ['Body', 'Rod with a bob'],
      ['Rod length', formatLength(b.rodLength)],
      ['Rod mass', `${formatNumber(b.rodMass)} kg`],
      ['Bob mass', `${formatNumber(b.bobMass)} kg`],
      ['Bob radius', formatLength(b.bobRadius)],
      ['Pivot to bob centre', formatLength(b.bobDistance)],
    );
  } else if (b.kind === 'chain') {
    rows.push(['Body', `Chain of ${b.links.length} links, hinged end to end`]);
    b.links.forEach((link, i) => rows.push([`Link ${i + 1}`, chainLinkWords(link, i).replace(/^Link \d+: /, '')]));
  } else {
    rows.push(['Body', 'Measured free swing'], ['Free swing frequency (hanging)', formatFrequency(b.swingFrequency)], ['Mass', `${formatNumber(b.mass)} kg`]);
  }
  rows.push([b.kind === 'chain' ? 'Equivalent length L (slowest free swing)' : 'Equivalent length L', formatLength(bodyProperties(b, p.gravity).equivalentLength)]);
  const w = d.waveform;
  rows.push(['Waveform', w.kind === 'sine' ? 'Sine' : w.kind === 'crank-slider' ? 'Crank and connecting rod' : `Sum of ${w.terms.length} harmonics`]);
  rows.push(['Direction from vertical', formatAngle(d.direction)]);
  rows.push([w.kind === 'crank-slider' ? 'Crank radius' : 'Amplitude', formatLength(d.amplitude)]);
  rows.push(['Frequency', frequencyWithRpm(d.frequency)]);
  if (w.kind === 'crank-slider') rows.push(['Connecting rod', formatLength(w.connectingRod)]);
  if (w.kind === 'harmonics') {
    for (const t of w.terms) rows.push([`Harmonic, order ${t.order}`, `${formatNumber(t.relAmplitude)} × amplitude, phase ${formatAngle(t.phase)}`]);
  }
  if (d.ramp) rows.push(['Spin-up', `from ${formatFrequency(d.ramp.fromFrequency)} over ${formatNumber(d.ramp.duration)} s`]);
  rows.push(['Viscous damping ratio ζ', formatNumber(p.damping.viscousRatio)]);
  rows.push(['Quadratic (air)', `${formatNumber(p.damping.quadratic)} 1/rad`]);
  rows.push(['Pivot friction', `${formatNumber(p.damping.friction)} rad/s²`]);
  if (p.damping.friction > 0) rows.push(['Friction smoothing', `${formatNumber(p.damping.frictionSmoothing)} rad/s`]);
  rows.push(['Start angle from upright', formatAngle(p.start.angle)]);
  rows.push(['Start rate', formatShown(p.start.rate, SHOWN_UNITS.rate)]);
  rows.push(['Gravity g', `${formatNumber(p.gravity, 6)} m/s²`]);
  rows.push(['Simulated time', `${formatNumber(p.run.duration)} s`]);
  rows.push(['Output points', String(p.run.outputPoints)]);
  rows.push(['Transient share ignored', `${formatNumber(p.run.transientFraction * 100, 3)} %`]);
  rows.push(['Relative / absolute tolerance', `${formatNumber(p.run.rtol, 2)} / ${formatNumber(p.run.atol, 2)}`]);
  for (const t of p.tolerances ?? []) rows.push([`Tolerance on ${fieldDisplay(t.field).label}`, toleranceWords(t)]);
  const n = p.noise;
  if (n) {
    rows.push(['Drive noise', n.kind === 'phase-jitter'
      ? `phase jitter ${formatAngle(n.rms)} RMS up to ${formatFrequency(n.bandwidth)}, seed ${n.seed}`
      : `amplitude noise ${formatNumber(n.density)} m²/Hz (${formatLength(Math.sqrt(n.density * n.bandwidth))} RMS) up to ${formatFrequency(n.bandwidth)}, seed ${n.seed}`]);
  }
  return rows;
}

/** "normal, σ 0.5 mm" / "uniform, ± 2 Hz", in the field's shown unit. */
function toleranceWords(t: Tolerance): string {
  const { unit } = fieldDisplay(t.field);
  const si = t.distribution === 'normal' ? t.sigma : t.halfWidth;
  const value = formatShown(si, unit);
  return t.distribution === 'normal' ? `normal, σ ${value}` : `uniform, ± ${value}`;
}

const probabilityText = (p: unknown) => (typeof p === 'number' ? `${formatNumber(100 * p, 3)} %` : '—');

function holdProbabilityBlock(run: ReportRun | undefined, result: RunResult | undefined): PdfContent[] {
  if (!run) return [note('No hold probability is stored with this revision: set tolerances and run it on the Sign-off tab.')];
  const s = run.summary;
  const parts = typeof s['parts'] === 'string' ? s['parts'] : '—';
  const out: PdfContent[] = [
    storedLine(run, result?.kind === 'holdprob'),
    table([
      ['Probability of holding', probabilityText(s['probability'])],
      ['95 % interval (Wilson)', `${probabilityText(s['intervalLower'])} to ${probabilityText(s['intervalUpper'])}`],
      ['Samples run / held', `${String(s['samplesUsed'] ?? '—')} / ${String(s['samplesHeld'] ?? '—')}`],
      ['Sampled', parts],
      ['Seed', String(s['seed'] ?? '—')],
      ['Stopped at the wanted interval width', s['stoppedEarly'] === true ? 'yes' : 'no'],
    ]),
  ];
  if (result?.kind === 'holdprob' && result.value.ranking.length > 0) {
    const byField = new Map(result.value.tolerances.map((t) => [t.field, t]));
    out.push(note('Spread that matters most: Spearman\'s rank correlation of each toleranced value with the margin over the samples.'));
    out.push(table(result.value.ranking.map((r) => {
      const t = byField.get(r.field);
      return [
        `${fieldDisplay(r.field).label}${t ? ` (${toleranceWords(t)})` : ''}`,
        r.rankCorrelation === null ? 'did not vary' : formatNumber(r.rankCorrelation, 3),
      ] as Row;
    })));
  }
  out.push(note('The probability of the ideal model over the stated tolerances and noise; it does not cover a loose clamp or a worn pivot.'));
  return out;
}

function sizingRows(p: CaseParams): Row[] {
  const s = driveSizing(p);
  return [
    ['Peak pivot acceleration', `${formatNumber(s.peakAccelerationG, 3)} g`],
    ['Peak pivot velocity', `${formatNumber(s.peakVelocity)} m/s`],
    ['Stroke (peak to peak)', formatLength(s.stroke)],
    ['Peak pivot force on the body', `${formatNumber(s.pivotForcePeak)} N`],
    ['Mean square pivot velocity over gL', formatNumber(s.stiffnessRatio, 3)],
    [`Amplitude for a ratio of ${s.targetRatio} (at this frequency)`, s.amplitudeForTarget === null ? 'not reachable' : formatLength(s.amplitudeForTarget)],
    [`Speed for a ratio of ${s.targetRatio} (at this amplitude)`, frequencyWithRpm(s.frequencyForTarget)],
  ];
}

function averagedRows(p: CaseParams): Row[] {
  const a = averagedAnalysis(p);
  const rows: Row[] = [
    ['Drive to swing ratio ω/ω₀ (theory wants it far above 1)', formatNumber(a.frequencyRatio, 3)],
    ['Amplitude to length a/L (theory wants it far below 1)', formatNumber(a.amplitudeRatio, 3)],
    ['Upright (averaged)', a.uprightStable === null ? 'not an equilibrium (drive not vertical)' : a.uprightStable ? 'holds' : 'lost'],
    ['Slow frequency about the upright', a.uprightSlowFrequency === null ? '—' : formatFrequency(a.uprightSlowFrequency / (2 * Math.PI))],
    ['Lower amplitude limit (averaged)', formatLength(a.lowerAmplitude)],
    ['Lower frequency limit (averaged)', formatFrequency(a.lowerFrequency)],
  ];
  if (a.tiltFromDown !== null) rows.push(['Tilt from hanging (averaged)', formatAngle(a.tiltFromDown)]);
  for (const e of a.equilibria) {
    rows.push([`Equilibrium at ${formatAngle(e.angle)}`, e.stable ? `stable, slow ${formatFrequency(e.slowFrequencyHz)}` : 'unstable']);
  }
  return rows;
}

/** Signed smallest relative change to a limit, percent (the engine's DriveLimits.marginPercent rule). */
function marginOf(value: number, lower: number | null, upper: number | null): number | null {
  const m = [lower === null ? null : value / lower - 1, upper === null ? null : 1 - value / upper].filter((x): x is number => x !== null);
  return m.length ? 100 * Math.min(...m) : null;
}

function marginsBlock(p: CaseParams, run: ReportRun | undefined, result: RunResult | undefined): PdfContent[] {
  if (!run) return [note('No Floquet margins are stored with this revision: compute them on the Margins tab and store the run.')];
  const s = run.summary;
  const value = result?.kind === 'margins' ? result.value : null;
  const limit = (field: 'amplitude' | 'frequency') => {
    const l = value ? (field === 'amplitude' ? value.amplitudeLimits : value.frequencyLimits) : null;
    const lower = l ? l.lower : num(s[`${field}Lower`]);
    const upper = l ? l.upper : num(s[`${field}Upper`]);
    const at = field === 'amplitude' ? p.drive.amplitude : p.drive.frequency;
    return { lower, upper, at, margin: l ? l.marginPercent : marginOf(at, lower, upper), scanned: l?.scanned ?? null };
  };
  const amp = limit('amplitude');
  const freq = limit('frequency');
  const show = (field: 'amplitude' | 'frequency', v: number | null) => (field === 'amplitude' ? formatLength(v, 6) : formatFrequency(v, 6));
  const useFrequency = amp.margin === null || (freq.margin !== null && freq.margin < amp.margin);
  const g = useFrequency ? freq : amp;
  const field = useFrequency ? 'frequency' : 'amplitude';
  const lo = g.lower ?? g.scanned?.[0] ?? null;
  const hi = g.upper ?? g.scanned?.[1] ?? null;
  const position = lo !== null && hi !== null && hi > lo ? (100 * (g.at - lo)) / (hi - lo) : null;
  const margin = num(s['marginPercent']);
  const noneLabel = (end: 'lower' | 'upper') => {
    const scanEnd = g.scanned?.[end === 'lower' ? 0 : 1];
    return scanEnd === undefined ? 'none found' : `none ${end === 'lower' ? 'down' : 'up'} to ${show(field, scanEnd)}`;
  };
  const gauge = marginGaugeSvg({
    marginPercent: margin,
    positionPercent: position,
    lowerLabel: g.lower === null ? noneLabel('lower') : show(field, g.lower),
    upperLabel: g.upper === null ? noneLabel('upper') : show(field, g.upper),
  });
  const holds = s['uprightHolds'];
  const rows: Row[] = [
    ['Margin of the upright', `${formatPercent(margin)} (${marginLook(margin).words})`],
    ['Upright (Floquet, with damping)', holds === true ? 'holds' : holds === false ? 'lost' : '—'],
    ['Largest Floquet multiplier |μ| of the upright', formatNumber(num(s['uprightMaxMultiplier']), 6)],
    ['Lower amplitude limit', show('amplitude', amp.lower)],
    ['Upper amplitude limit', amp.upper === null ? 'none found in the scan' : show('amplitude', amp.upper)],
    ['Margin in amplitude', formatPercent(amp.margin)],
    ['Lower frequency limit', show('frequency', freq.lower)],
    ['Upper frequency limit', freq.upper === null ? 'none found in the scan' : show('frequency', freq.upper)],
    ['Margin in frequency', formatPercent(freq.margin)],
  ];
  if (value?.mathieu) {
    const m = value.mathieu;
    rows.push(['Mathieu A = −4g/(Lω²), q = 2a/L', `${formatNumber(m.A, 5)}, ${formatNumber(m.q, 5)}`]);
    rows.push(['Undamped band a₀(q) < A < b₁(q)', `${formatNumber(m.a0, 5)} … ${formatNumber(m.b1, 5)}`]);
  }
  const out: PdfContent[] = [
    storedLine(run, value !== null),
    {
      columns: [
        { width: 300, stack: [{ svg: gauge, width: 300 }, note(`Smallest change of drive ${field} that loses the upright. The marker shows where the case sits between the limits.`)] },
        { width: '*', text: '' },
      ],
    },
    table(rows),
  ];
  if (value && value.periodicMotions.length > 0) {
    out.push({
      table: {
        headerRows: 1,
        widths: ['auto', 'auto', 'auto', '*'],
        body: [
          ['Periodic motion', 'Mean angle', 'Largest |μ|', 'Stable'].map((t) => ({ text: t, style: 'label' })),
          ...value.periodicMotions.map((m) => [m.kind, formatAngle(m.meanAngle), formatNumber(m.maxMultiplier, 6), m.stable ? 'yes' : 'no'].map((t) => ({ text: t, style: 'value' }))),
        ],
      },
      layout: 'lightHorizontalLines',
      margin: [0, 2, 0, 6],
    });
  }
  return out;
}

function motionBlock(run: ReportRun | undefined, result: RunResult | undefined): PdfContent[] {
  if (!run) return [note('No motion run is stored with this revision.')];
  const s = run.summary;
  const outcome = s['outcome'];
  const slow = num(s['slowFrequencyHz']);
  const rows: Row[] = [
    ['Largest slow deviation from upright', formatAngle(num(s['maxDeviation']))],
    ['Mean slow angle', formatAngle(num(s['meanAngle']))],
    ['Slow frequency', slow === null ? 'not measured (too few swings)' : formatFrequency(slow)],
    ['Final angle', formatAngle(num(s['finalTheta']))],
    ['Peak pivot acceleration', `${formatNumber(num(s['peakPivotAccelerationG']), 3)} g`],
    ['Peak pivot force on the body', `${formatNumber(num(s['peakPivotForce']))} N`],
  ];
  const out: PdfContent[] = [
    storedLine(run, result?.kind === 'motion'),
    { text: [{ text: 'Outcome: ', style: 'label' }, { text: outcomeWords(outcome), bold: true, color: OUTCOME_COLOURS[String(outcome)] ?? '#1f2a30' }], margin: [0, 2, 0, 2] },
    table(rows),
  ];
  if (result?.kind !== 'motion') return out;
  const m = result.value;
  const deg = SHOWN_UNITS.angle.scale;
  const idx = thinIndices(m.series.theta, MAX_TRACE_POINTS);
  const slowIdx = thinIndices(m.slow.theta, MAX_TRACE_POINTS);
  out.push({
    svg: linePlot({
      width: PAGE_WIDTH,
      height: 200,
      xLabel: 'time t (s)',
      yLabel: 'angle from upright θ (°)',
      series: [
        { name: 'angle θ', x: pick(m.series.t, idx), y: pick(m.series.theta, idx, deg), colour: '#7a8fa6', width: 0.6 },
        { name: 'slow motion (period mean)', x: pick(m.slow.t, slowIdx), y: pick(m.slow.theta, slowIdx, deg), colour: '#0b6e69', width: 1.6 },
      ],
    }),
    width: PAGE_WIDTH,
    margin: [0, 4, 0, 4],
  });
  // The full trace is left out of the phase portrait: thinned, its fast drive wiggle would alias into noise.
  const strobe = strideIndices(m.strobe.theta.length, MAX_TRACE_POINTS / 2);
  out.push({
    svg: linePlot({
      width: PAGE_WIDTH,
      height: 220,
      xLabel: 'angle θ (°)',
      yLabel: 'rate dθ/dt (°/s)',
      series: [
        { name: 'slow motion', x: pick(m.slow.theta, slowIdx, deg), y: pick(m.slow.rate, slowIdx, deg), colour: '#0b6e69', width: 1.4 },
        { name: 'once per drive period', x: pick(m.strobe.theta, strobe, deg), y: pick(m.strobe.rate, strobe, deg), colour: '#b7791f', kind: 'points' },
      ],
    }),
    width: PAGE_WIDTH,
    margin: [0, 4, 0, 4],
  });
  return out;
}

interface SweepView {
  field: string;
  spec: SweepSpec | null;
  points: Array<{ value: number; outcome: unknown; maxMultiplier: number | null }>;
  thresholds: Array<{ kind: string; value: number; below: unknown; above: unknown }>;
}

function sweepView(run: ReportRun, result: RunResult | undefined): SweepView {
  if (result?.kind === 'sweep') {
    const r = result.value;
    return {
      field: r.field,
      spec: r.spec,
      points: r.points.map((p) => ({ value: p.value, outcome: p.outcome, maxMultiplier: p.maxMultiplier })),
      thresholds: r.thresholds.map((t) => ({ kind: t.kind, value: t.value, below: t.below, above: t.above })),
    };
  }
  const s = run.summary;
  const settings = run.settings as Partial<Extract<RunSettings, { kind: 'sweep' }>>;
  const spec = settings.spec ?? null;
  const count = num(s['points']) ?? 0;
  const values = spec && spec.steps === count ? sweepValues(spec) : null;
  const points: SweepView['points'] = [];
  for (let i = 0; i < count && values; i++) points.push({ value: values[i] as number, outcome: s[`point.${i}.outcome`], maxMultiplier: num(s[`point.${i}.maxMultiplier`]) });
  const thresholds: SweepView['thresholds'] = [];
  for (let i = 0; i < (num(s['thresholds']) ?? 0); i++) {
    const value = num(s[`threshold.${i}.value`]);
    if (value !== null) thresholds.push({ kind: String(s[`threshold.${i}.kind`]), value, below: undefined, above: undefined });
  }
  return { field: typeof s['field'] === 'string' ? s['field'] : (spec?.field ?? ''), spec, points, thresholds };
}

/** Largest |μ| above this is drawn at the top of the sweep plot. */
const MULTIPLIER_CLIP = 3;

function sweepBlock(run: ReportRun | undefined, result: RunResult | undefined): PdfContent[] {
  if (!run) return [note('No sweep is stored with this revision.')];
  const v = sweepView(run, result);
  const { label, unit } = fieldDisplay(v.field);
  const unitText = unit.unit || '1';
  const show = (x: number) => formatShown(x, unit, 5);
  const out: PdfContent[] = [storedLine(run, result?.kind === 'sweep')];
  const range = v.spec ? `${show(v.spec.from)} to ${show(v.spec.to)} in ${v.spec.steps} points${v.spec.scale === 'log' ? ' (log spacing)' : ''}` : `${v.points.length} points`;
  out.push(table([['Swept field', label], ['Range', range]]));
  if (v.thresholds.length === 0) {
    out.push(note('No threshold: every point has the same outcome and upright verdict.'));
  } else {
    out.push({
      table: {
        headerRows: 1,
        widths: ['auto', 'auto', '*'],
        body: [
          ['Threshold', `${label} (${unitText})`, 'Change'].map((t) => ({ text: t, style: 'label' })),
          ...v.thresholds.map((t) =>
            [
              t.kind === 'multiplier' ? 'upright |μ| crosses 1' : 'outcome changes',
              show(t.value),
              t.below === undefined ? '—' : `${outcomeWords(t.below)} below, ${outcomeWords(t.above)} above`,
            ].map((text) => ({ text, style: 'value' })),
          ),
        ],
      },
      layout: 'lightHorizontalLines',
      margin: [0, 2, 0, 6],
    });
  }
  if (v.points.length === 0) return out;
  const byOutcome = new Map<string, { x: number[]; y: number[] }>();
  for (const p of v.points) {
    const key = typeof p.outcome === 'string' ? p.outcome : 'invalid';
    const group = byOutcome.get(key) ?? { x: [], y: [] };
    group.x.push(p.value * unit.scale);
    group.y.push(p.maxMultiplier === null ? NaN : Math.min(MULTIPLIER_CLIP, p.maxMultiplier));
    byOutcome.set(key, group);
  }
  const series: PlotSeries[] = [...byOutcome].map(([outcome, g]) => ({
    name: outcomeWords(outcome === 'invalid' ? null : outcome),
    x: g.x,
    y: g.y,
    colour: OUTCOME_COLOURS[outcome] ?? '#6b7280',
    kind: 'points',
  }));
  const ordered = [...v.points].sort((a, b) => a.value - b.value);
  series.unshift({
    name: 'largest |μ| of the upright',
    x: ordered.map((p) => p.value * unit.scale),
    y: ordered.map((p) => (p.maxMultiplier === null ? NaN : Math.min(MULTIPLIER_CLIP, p.maxMultiplier))),
    colour: '#9aa5ad',
    width: 0.8,
  });
  const vLines: MarkerLine[] = v.thresholds.map((t) => ({ at: t.value * unit.scale, colour: '#1f2a30', label: show(t.value), dashed: true }));
  out.push({
    svg: linePlot({
      width: PAGE_WIDTH,
      height: 210,
      xLabel: `${label} (${unitText})`,
      yLabel: `largest |μ| of the upright (1, clipped at ${MULTIPLIER_CLIP})`,
      series,
      vLines,
      hLines: [{ at: 1, colour: '#c0392b', label: '|μ| = 1', dashed: true }],
      yRange: [0, MULTIPLIER_CLIP * 1.04],
    }),
    width: PAGE_WIDTH,
    margin: [0, 4, 0, 4],
  });
  out.push(note('Each point is coloured by the outcome of its motion run; dashed lines mark the thresholds.'));
  return out;
}

function chartColour(mu: number): string {
  if (!Number.isFinite(mu)) return '#d5d9dc';
  if (mu < 0.9) return '#1b7f5b';
  if (mu < 1 + MULTIPLIER_UNIT_TOLERANCE) return '#8fcbb2';
  return mu < 1.5 ? '#f1b9b0' : '#c0392b';
}

function chartBlock(run: ReportRun | undefined, result: RunResult | undefined): PdfContent[] {
  if (!run) return [note('No stability chart is stored with this revision.')];
  const s = run.summary;
  const out: PdfContent[] = [
    storedLine(run, result?.kind === 'chart'),
    table([
      ['Cells where the upright holds', `${formatNumber(num(s['holdingCells']))} of ${formatNumber(num(s['cells']))}`],
      ['Largest |μ| at the case', formatNumber(num(s['caseMaxMultiplier']), 6)],
    ]),
  ];
  if (result?.kind !== 'chart') return out;
  const c = result.value;
  const nx = c.xValues.length;
  const ny = c.yValues.length;
  const bx = Math.ceil(nx / MAX_RASTER_CELLS);
  const by = Math.ceil(ny / MAX_RASTER_CELLS);
  const cols = Math.ceil(nx / bx);
  const rows = Math.ceil(ny / by);
  // Each drawn cell shows the worst (largest) |μ| of its block, so a coarse chart never shows a hold that is not there.
  const worst = new Float64Array(rows * cols);
  for (let r = 0; r < ny; r++) {
    for (let q = 0; q < nx; q++) {
      const k = Math.floor(r / by) * cols + Math.floor(q / bx);
      const mu = c.maxMultiplier[r * nx + q] as number;
      worst[k] = Number.isNaN(mu) ? Infinity : Math.max(worst[k] as number, mu);
    }
  }
  const centres = (values: ArrayLike<number>, block: number, count: number, scale: number) =>
    Array.from({ length: count }, (_, i) => {
      const from = i * block;
      const to = Math.min(values.length, from + block) - 1;
      return (((values[from] as number) + (values[to] as number)) / 2) * scale;
    });
  const xd = fieldDisplay(c.grid.x.field);
  const yd = fieldDisplay(c.grid.y.field);
  out.push({
    svg: rasterPlot({
      width: PAGE_WIDTH,
      height: 280,
      xLabel: `${xd.label} (${xd.unit.unit || '1'})`,
      yLabel: `${yd.label} (${yd.unit.unit || '1'})`,
      x: centres(c.xValues, bx, cols, xd.unit.scale),
      y: centres(c.yValues, by, rows, yd.unit.scale),
      colourOf: (row, col) => chartColour(worst[row * cols + col] as number),
      mark: { x: c.caseMark.x * xd.unit.scale, y: c.caseMark.y * yd.unit.scale, label: 'this case' },
      legend: [
        { colour: '#1b7f5b', label: 'holds, |μ| < 0.9' },
        { colour: '#8fcbb2', label: 'holds, |μ| ≤ 1' },
        { colour: '#f1b9b0', label: 'lost, |μ| < 1.5' },
        { colour: '#c0392b', label: 'lost, |μ| ≥ 1.5' },
        { colour: '#d5d9dc', label: 'no periodic motion' },
      ],
    }),
    width: PAGE_WIDTH,
    margin: [0, 4, 0, 4],
  });
  if (bx > 1 || by > 1) out.push(note(`Drawn on ${cols} × ${rows} cells from the stored ${nx} × ${ny}; each cell shows the largest |μ| of its block.`));
  return out;
}

function recheckText(r: ReportRevision): string {
  const state = RECHECK_STATE_WORDS[r.recheckState] ?? r.recheckState;
  const last = r.rechecks[r.rechecks.length - 1];
  if ((r.recheckState === 'confirmed' || r.recheckState === 'disputed') && last) {
    return `${state} by ${last.reviewer?.name ?? 'a former member'} on ${reportDate(last.createdAt)}`;
  }
  if (r.recheckState === 'awaiting-recheck') return `${state} by ${r.recheckRequest?.reviewer?.name ?? 'a reviewer'}`;
  return state;
}

const VERIFICATION_WORDS: Readonly<Record<string, string>> = {
  verified: 'verified by the server',
  unreproduced: 'not reproduced by the server',
  pending: 'server rerun pending',
};

function runsTable(runs: readonly ReportRun[], results: ReadonlyMap<string, RunResult>): PdfContent {
  if (runs.length === 0) return note('No runs are stored with this revision.');
  return {
    table: {
      headerRows: 1,
      widths: ['auto', 'auto', 'auto', '*'],
      body: [
        ['Run', 'Stored', 'Engine', 'Result digest (SHA-256)'].map((t) => ({ text: t, style: 'label' })),
        ...runs.map((run) => [
          {
            text: [
              `${RUN_KIND_LABELS[run.kind] ?? run.kind}${results.has(run.id) ? '' : ' (summary only)'}`,
              ...(run.verification ? [`\n${VERIFICATION_WORDS[run.verification.state] ?? run.verification.state}`] : []),
            ].join(''),
            style: 'value',
          },
          { text: `${reportDate(run.createdAt)}${run.author ? `\n${run.author.name}` : ''}`, style: 'value' },
          { text: run.engineVersion, style: 'value' },
          { text: run.resultDigest, style: 'digest' },
        ]),
      ],
    },
    layout: 'lightHorizontalLines',
    margin: [0, 2, 0, 6],
  };
}

/** The report's document definition. */
export function caseReportDocument(input: ReportInput): PdfDocument {
  const r = input.revision;
  const p = r.params;
  const latest = latestByKind(r.runs);
  const resultOf = (kind: string) => {
    const run = latest.get(kind);
    return run ? input.results.get(run.id) : undefined;
  };
  const engines = [...new Set(r.runs.map((run) => run.engineVersion))];
  const meta: Row[] = [
    ['Lab', input.labName],
    ['Revision', `r${r.number}, saved ${reportDate(r.createdAt)}${r.author ? ` by ${r.author.name}` : ''}`],
    ['Revision note', r.note || '—'],
    ['Recheck', recheckText(r)],
    ['Parameters digest (SHA-256)', r.paramsDigest],
    ['Engine of the stored runs', engines.length ? engines.join(', ') : '—'],
    ['Report made', `${reportDate(input.generatedAt)}, engine ${ENGINE_VERSION}`],
  ];
  const content: PdfContent[] = [
    { text: input.caseTitle, style: 'title' },
    { text: `Case report · ${input.labName} · r${r.number}`, style: 'subtitle' },
    table(meta, [150, '*']),
    section('Rig'),
    { columns: [{ width: '*', stack: [table(rigRows(p))] }, { width: 210, stack: [{ svg: rigSchematicSvg(p), width: 210 }] }], columnGap: 12 },
    section('Drive sizing'),
    note('Estimates from the drive waveform and averaged theory; the exact limits come from the Floquet margins.'),
    table(sizingRows(p)),
    section('Averaged theory (Kapitza)'),
    table(averagedRows(p)),
    section('Floquet margins'),
    ...marginsBlock(p, latest.get('margins'), resultOf('margins')),
    section('Motion'),
    ...motionBlock(latest.get('motion'), resultOf('motion')),
    section('Sweep'),
    ...sweepBlock(latest.get('sweep'), resultOf('sweep')),
    section('Stability chart'),
    ...chartBlock(latest.get('chart'), resultOf('chart')),
    ...(r.params.tolerances?.length || latest.get('holdprob')
      ? [section('Hold probability'), ...holdProbabilityBlock(latest.get('holdprob'), resultOf('holdprob'))]
      : []),
    section('Stored runs and digests'),
    runsTable(r.runs, input.results),
    { stack: [{ text: CAUTION_TITLE, style: 'section' }, { ul: [...CAUTION_NOTES], style: 'caution' }, { text: CAUTION_DEFERRAL, style: 'caution', italics: true, margin: [0, 4, 0, 0] }], unbreakable: true },
  ];
  return {
    info: { title: `${input.caseTitle} r${r.number}`, author: r.author?.name ?? '', subject: 'Case report', creator: 'Quiverpoint' },
    pageSize: 'A4',
    pageMargins: [40, 40, 40, 48],
    content,
    footer: (page, pages) => ({
      columns: [
        { text: `${input.caseTitle} · r${r.number} · engine ${ENGINE_VERSION}`, style: 'footer' },
        { text: `page ${page} of ${pages}`, style: 'footer', alignment: 'right' },
      ],
      margin: [40, 16, 40, 0],
    }),
    styles: {
      title: { fontSize: 18, bold: true, color: '#0b6e69' },
      subtitle: { fontSize: 10, color: '#55606b', margin: [0, 2, 0, 8] },
      section: { fontSize: 12, bold: true, color: '#0b6e69', margin: [0, 12, 0, 4] },
      label: { fontSize: 8.5, color: '#55606b' },
      value: { fontSize: 8.5 },
      digest: { fontSize: 7, characterSpacing: 0.1 },
      note: { fontSize: 8, color: '#55606b', margin: [0, 1, 0, 3] },
      caution: { fontSize: 8.5 },
      footer: { fontSize: 7.5, color: '#55606b' },
    },
    defaultStyle: { font: 'Roboto', fontSize: 9, color: '#1f2a30' },
  };
}
