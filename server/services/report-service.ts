/**
 * Case reports: a revision as a PDF, for lab members and through a case link. Reads the revision as the other
 * routes do, builds the document from it (server/report/case-report.ts) and renders it here, without a browser.
 */
import type { RunResult } from '../../shared/engine/run-record';
import { Lab, RunVerification } from '../db/models';
import { caseReportDocument } from '../report/case-report';
import { renderPdf } from '../report/render-pdf';
import { readLink } from './case-link-service';
import type { RevisionDetail } from '../../shared/api';
import type { CaseParams } from '../../shared/case';
import { revisionDetail } from './case-service';
import { decompressResult } from './result-store';

export interface CaseReport {
  fileName: string;
  pdf: Buffer;
}

/** "bench-crank-rig-r2-report.pdf": readable, and safe in a Content-Disposition header. */
export function reportFileName(title: string, revision: number): string {
  const slug = title
    .normalize('NFKD')
    .replace(/[^\w\s-]/g, '')
    .trim()
    .toLowerCase()
    .replace(/[\s_-]+/g, '-')
    .slice(0, 60)
    .replace(/-+$/, '');
  return `${slug || 'case'}-r${revision}-report.pdf`;
}

/** The server's stored results of the revision's runs (runs still pending or unreproduced have none). */
async function storedResults(revision: RevisionDetail): Promise<Map<string, RunResult>> {
  const rows = await RunVerification.findAll({ where: { runId: revision.runs.map((r) => r.id), state: 'verified' } });
  return new Map(rows.flatMap((row) => (row.encoding && row.compressed ? [[row.runId, decompressResult({ encoding: row.encoding, compressed: row.compressed })] as const] : [])));
}

async function render(caseTitle: string, labName: string, revision: RevisionDetail): Promise<CaseReport> {
  // Stored parameters passed the case schema when they were saved (validParams).
  const stored = { ...revision, params: revision.params as CaseParams };
  const doc = caseReportDocument({ caseTitle, labName, revision: stored, results: await storedResults(revision), generatedAt: new Date() });
  return { fileName: reportFileName(caseTitle, revision.number), pdf: await renderPdf(doc) };
}

export async function revisionReport(caseId: string, labId: string, number: number): Promise<CaseReport> {
  const revision = await revisionDetail(caseId, number, { withComments: false });
  const lab = await Lab.findByPk(labId, { attributes: ['name'] });
  return render(revision.caseTitle, lab?.name ?? '', revision);
}

/** The report behind a case link: 404 for an unknown token, 410 once expired or revoked (as the link itself). */
export async function linkReport(token: string): Promise<CaseReport> {
  const view = await readLink(token);
  return render(view.caseTitle, view.labName, view.revision);
}
