import { HttpClient, HttpResponse } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
import { downloadBlob } from '../../ui/csv';

/** The case report of a revision (lab members; the interceptor adds the token). */
export function revisionReportUrl(caseId: string, revision: number): string {
  return `/api/cases/${encodeURIComponent(caseId)}/revisions/${revision}/report.pdf`;
}

/** The case report behind a case link (no sign-in, so a plain link can download it). */
export function linkReportUrl(token: string): string {
  return `/api/links/${encodeURIComponent(token)}/report.pdf`;
}

/** The file name the server gave (Content-Disposition), or a plain one. */
export function reportFileName(disposition: string | null, revision: number): string {
  const match = /filename\*?=(?:UTF-8'')?"?([^";]+)"?/i.exec(disposition ?? '');
  return match?.[1] ? decodeURIComponent(match[1]) : `case-r${revision}-report.pdf`;
}

/**
 * Downloads a revision's case report. The route needs the bearer token, which a plain link cannot carry, so the PDF
 * comes through HttpClient and is handed to the browser as a file.
 */
@Injectable({ providedIn: 'root' })
export class CaseReportDownload {
  private readonly http = inject(HttpClient);

  download(caseId: string, revision: number): Observable<string> {
    return this.http.get(revisionReportUrl(caseId, revision), { observe: 'response', responseType: 'blob' }).pipe(
      map((res: HttpResponse<Blob>) => {
        const fileName = reportFileName(res.headers.get('Content-Disposition'), revision);
        downloadBlob(fileName, res.body ?? new Blob([], { type: 'application/pdf' }));
        return fileName;
      }),
    );
  }
}
