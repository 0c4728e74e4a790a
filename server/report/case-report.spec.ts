import { beforeAll, describe, expect, it } from 'vitest';
import { caseDigest, templateCase, type CaseParams } from '../../shared/case';
import { CAUTION_DEFERRAL, CAUTION_NOTES } from '../../shared/case/caution';
import { formatFrequency, formatLength, formatPercent } from '../../shared/case/display';
import { defaultChartGrid } from '../../shared/engine/chart';
import { computeRun, makeRunRecord, type RunResult, type RunSettings } from '../../shared/engine/run-record';
import { ENGINE_VERSION } from '../../shared/engine/version';
import { pdfText } from '../../tests/support/pdf-text';
import { MAX_TRACE_POINTS, caseReportDocument, type PdfContent, type ReportInput, type ReportRun } from './case-report';
import { renderPdf } from './render-pdf';
import { thinIndices } from './svg-plot';

const params: CaseParams = templateCase();
params.run.duration = 8;
params.tolerances = [
  { field: 'drive.amplitude', distribution: 'normal', sigma: 5e-4 },
  { field: 'drive.frequency', distribution: 'uniform', halfWidth: 2 },
];
const settings: RunSettings[] = [
  { kind: 'motion' },
  { kind: 'margins', relTolerance: 1e-6 },
  { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.002, to: 0.02, steps: 7 } },
  { kind: 'chart', grid: defaultChartGrid(params, 24) },
  { kind: 'holdprob', samples: 16, sampler: 'latin-hypercube', seed: 5, targetWidth: 0, parts: 'tolerances', relTolerance: 1e-3 },
];
const runs: ReportRun[] = [];
const results = new Map<string, RunResult>();

function input(withResults: boolean): ReportInput {
  return {
    caseTitle: 'Teaching rod on a sine drive',
    labName: 'Report lab',
    revision: {
      number: 2,
      paramsDigest: caseDigest(params),
      note: 'Stroke 10 mm',
      author: { name: 'Ann Analyst' },
      createdAt: '2026-12-01T10:00:00.000Z',
      recheckState: 'confirmed',
      recheckRequest: { reviewer: { name: 'Rita Reviewer' } },
      rechecks: [{ reviewer: { name: 'Rita Reviewer' }, state: 'confirmed', createdAt: '2026-12-01T12:00:00.000Z' }],
      params,
      runs,
    },
    results: withResults ? results : new Map(),
    generatedAt: new Date('2026-12-02T09:00:00.000Z'),
  };
}

/** Every `svg` string in a content tree. */
function svgs(content: PdfContent): string[] {
  if (typeof content === 'string') return [];
  if (Array.isArray(content)) return content.flatMap(svgs);
  return Object.values(content).flatMap((v) => (typeof v === 'string' ? [] : typeof v === 'object' && v !== null ? svgs(v as PdfContent) : []))
    .concat(typeof content['svg'] === 'string' ? [content['svg']] : []);
}

/** The text of the report with every run's result, rendered once: rendering takes seconds on a busy machine. */
let fullText = '';

const summaryOf = (kind: string) => runs.find((r) => r.kind === kind)?.summary ?? {};

beforeAll(async () => {
  settings.forEach((s, i) => {
    const result = computeRun(params, s);
    const record = makeRunRecord(params, s, result);
    const id = `run-${i}`;
    results.set(id, result);
    runs.push({
      id,
      kind: record.kind,
      settings: record.settings as unknown as Record<string, unknown>,
      summary: record.summary,
      resultDigest: record.resultDigest,
      engineVersion: record.engineVersion,
      author: { name: 'Ann Analyst' },
      createdAt: '2026-12-01T10:05:00.000Z',
    });
  });
  fullText = pdfText(await renderPdf(caseReportDocument(input(true))));
}, 120_000);

describe('case report', { timeout: 60_000 }, () => {
  it('holds the title, people, digests, margin, limits in mm and Hz, thresholds and the caution', () => {
    const text = fullText;
    const margins = summaryOf('margins');
    const sweep = summaryOf('sweep');
    expect(text).toContain('Teaching rod on a sine drive');
    expect(text).toContain('Case report · Report lab · r2');
    expect(text).toContain('Confirmed by Rita Reviewer');
    expect(text).toContain('Ann Analyst');
    expect(text).toContain(caseDigest(params));
    for (const run of runs) expect(text).toContain(run.resultDigest);
    expect(text).toContain(`engine ${ENGINE_VERSION}`);
    expect(text).toContain(`Margin of the upright ${formatPercent(margins['marginPercent'] as number)}`);
    expect(text).toContain(`Lower amplitude limit ${formatLength(margins['amplitudeLower'] as number, 6)}`);
    expect(text).toContain(`Lower frequency limit ${formatFrequency(margins['frequencyLower'] as number, 6)}`);
    expect(text).toMatch(/Lower amplitude limit [\d.]+ mm/);
    expect(text).toMatch(/Lower frequency limit [\d.]+ Hz/);
    expect(Number(sweep['thresholds'])).toBeGreaterThan(0);
    expect(text).toContain(formatLength(sweep['threshold.0.value'] as number, 5));
    for (const line of [...CAUTION_NOTES, CAUTION_DEFERRAL]) expect(text).toContain(line);
  });

  it('states the tolerances in the rig and the hold probability with its interval and ranking', () => {
    const hold = summaryOf('holdprob');
    expect(fullText).toContain('Tolerance on Drive amplitude normal, σ 0.5 mm');
    expect(fullText).toContain('Tolerance on Drive frequency uniform, ± 2 Hz');
    expect(fullText).toContain(`Probability of holding ${Number((100 * (hold['probability'] as number)).toPrecision(3))} %`);
    expect(fullText).toMatch(/95 % interval \(Wilson\) [\d.]+ % to [\d.]+ %/);
    expect(fullText).toContain('Samples run / held 16 /');
    expect(fullText).toMatch(/Drive amplitude \(normal, σ 0\.5 mm\) 0\.\d+/);
  });

  it('shows nothing internal: no schema keys, no summary keys', () => {
    for (const key of ['drive.amplitude', 'drive.frequency', 'marginPercent', 'amplitudeLower', 'holds-upright', 'viscousRatio', 'schemaVersion', 'threshold.0', 'halfWidth', 'sigma', 'samplesUsed', 'latin-hypercube']) {
      expect(fullText, key).not.toContain(key);
    }
  });

  it('draws the stored plots as vector graphics: schematic, gauge, motion trace, phase portrait, sweep and chart', () => {
    const drawn = svgs(caseReportDocument(input(true)).content);
    expect(drawn).toHaveLength(6);
    const trace = drawn.find((s) => s.includes('slow motion (period mean)'));
    expect(trace).toBeDefined();
    // The 8 s motion keeps 4000 output points; the plot keeps at most MAX_TRACE_POINTS of them per series.
    const vertices = (trace ?? '').match(/[ML][\d.]+ [\d.]+/g) ?? [];
    expect(vertices.length).toBeLessThanOrEqual(2 * (MAX_TRACE_POINTS + 2));
    expect(vertices.length).toBeGreaterThan(100);
    expect(drawn.some((s) => s.includes('this case'))).toBe(true);
  });

  it('reports a revision whose runs have no stored result from their summaries, sweep plot included', async () => {
    const doc = caseReportDocument(input(false));
    const text = pdfText(await renderPdf(doc));
    const margins = summaryOf('margins');
    expect(text).toContain(`Lower amplitude limit ${formatLength(margins['amplitudeLower'] as number, 6)}`);
    expect(text).toContain('summary only');
    const drawn = svgs(doc.content);
    // schematic, gauge and the sweep (rebuilt from its settings); no motion or chart plot without their results
    expect(drawn).toHaveLength(3);
    expect(drawn.some((s) => s.includes('largest |μ| of the upright'))).toBe(true);
  });

  it('says for each run whether the server reproduced it', async () => {
    const [first, second, ...rest] = runs;
    if (!first || !second) throw new Error('runs missing');
    const verified: ReportRun[] = [{ ...first, verification: { state: 'verified' } }, { ...second, verification: { state: 'unreproduced' } }, ...rest];
    const base = input(true);
    const text = pdfText(await renderPdf(caseReportDocument({ ...base, revision: { ...base.revision, runs: verified } })));
    expect(text).toContain('Motion verified by the server');
    expect(text).toContain('Floquet margins not reproduced by the server');
  });

  it('says so when a revision has no stored runs', async () => {
    const text = pdfText(await renderPdf(caseReportDocument({ ...input(false), revision: { ...input(false).revision, runs: [], recheckState: 'draft', rechecks: [] } })));
    expect(text).toContain('No Floquet margins are stored with this revision');
    expect(text).toContain('No motion run is stored with this revision');
    expect(text).toContain('Recheck Draft');
  });
});

describe('thinIndices', () => {
  it('keeps the ends and every bucket extreme of a long series within the point budget', () => {
    const y = Array.from({ length: 10_000 }, (_, i) => Math.sin(i / 50) + (i === 4321 ? 5 : 0));
    const kept = thinIndices(y, 400);
    expect(kept.length).toBeLessThanOrEqual(402);
    expect(kept[0]).toBe(0);
    expect(kept[kept.length - 1]).toBe(9999);
    expect(kept).toContain(4321);
    expect([...kept].sort((a, b) => a - b)).toEqual(kept);
  });

  it('keeps a short series whole', () => {
    expect(thinIndices([3, 1, 2], 10)).toEqual([0, 1, 2]);
  });
});
