/**
 * Case reports: a revision as a PDF, for lab members and through a case link. Reads the revision as the other
 * routes do, builds the document from it (server/report/case-report.ts) and renders it here, without a browser.
 */
import { Lab } from '../db/models';
import { caseReportDocument } from '../report/case-report';
import { renderPdf } from '../report/render-pdf';
import { readLink } from './case-link-service';
import type { RevisionDetail } from '../../shared/api';
import type { CaseParams } from '../../shared/case';
import { revisionDetail } from './case-service';

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

async function render(caseTitle: string, labName: string, revision: RevisionDetail): Promise<CaseReport> {
  // Stored parameters passed the case schema when they were saved (validParams).
  const stored = { ...revision, params: revision.params as CaseParams };
  const doc = caseReportDocument({ caseTitle, labName, revision: stored, results: new Map(), generatedAt: new Date() });
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
