import { Injectable } from '@angular/core';
import { Observable, defer, of, throwError } from 'rxjs';

import { caseDigest } from '../../../../shared/case/canonical';
import type { CaseParams } from '../../../../shared/case/case-schema';
import { parseCase } from '../../../../shared/case/validate';
import { decodeRunResult, encodeRunResult } from '../../../../shared/engine/result-codec';
import type { RunRecord, RunResult } from '../../../../shared/engine/run-record';
import type { CaseLabel, CaseRepository, NewCase, OpenedCase, StoredRun } from './case-repository';
import { CaseRepositoryError } from './case-repository-error';

interface LocalRevision {
  number: number;
  params: CaseParams;
  paramsDigest: string;
  note: string;
  createdAt: string;
  runs: StoredRun[];
}

interface LocalCase {
  id: string;
  title: string;
  tags: string[];
  labId: string | null;
  revisions: LocalRevision[];
}

type LocalLibrary = Record<string, LocalCase>;

function newId(prefix: string): string {
  const random = globalThis.crypto?.randomUUID?.() ?? `${Date.now().toString(36)}${Math.random().toString(36).slice(2)}`;
  return `${prefix}-${random}`;
}

/**
 * Test double of the case repository for specs of the workspace and tabs: cases in memory under the same rules as
 * the API (revisions and runs append-only, a save from a stale revision is refused, a run must belong to its
 * revision's parameters). The app itself always uses ApiCaseRepository; the case page's own spec talks to it
 * through HttpTestingController.
 */
@Injectable({ providedIn: 'root' })
export class FakeCaseRepository implements CaseRepository {
  /** Copied on every read and write, so callers never share objects with the store (as with a server). */
  private stored = '{}';
  /** Full results by run id, in the server's text encoding; a run without one is still `pending`. */
  private readonly results = new Map<string, string>();

  open(caseId: string, revision?: number): Observable<OpenedCase> {
    return defer(() => {
      const stored = this.read()[caseId];
      if (!stored) return throwError(() => new CaseRepositoryError('not_found', 'That case does not exist.'));
      const number = revision ?? stored.revisions.length;
      const rev = stored.revisions.find((r) => r.number === number);
      if (!rev) return throwError(() => new CaseRepositoryError('not_found', `Case "${stored.title}" has no revision r${number}.`));
      return of(this.view(stored, rev));
    });
  }

  create(input: NewCase): Observable<OpenedCase> {
    return defer(() => {
      const params = this.validParams(input.params);
      const library = this.read();
      const stored: LocalCase = {
        id: newId('case'),
        title: input.title.trim() || 'Untitled case',
        tags: [...input.tags],
        labId: input.labId,
        revisions: [this.revision(1, params, input.note)],
      };
      library[stored.id] = stored;
      this.write(library);
      return of(this.view(stored, stored.revisions[0]));
    });
  }

  saveRevision(caseId: string, baseRevision: number, params: CaseParams, note: string): Observable<OpenedCase> {
    return defer(() => {
      const library = this.read();
      const stored = library[caseId];
      if (!stored) return throwError(() => new CaseRepositoryError('not_found', 'That case does not exist.'));
      const latest = stored.revisions.length;
      if (baseRevision !== latest) {
        return throwError(
          () =>
            new CaseRepositoryError(
              'stale_revision',
              `Not saved: you edited r${baseRevision}, but r${latest} was saved since. Open r${latest}, reapply your changes, and save again.`,
            ),
        );
      }
      const rev = this.revision(latest + 1, this.validParams(params), note);
      stored.revisions.push(rev);
      this.write(library);
      return of(this.view(stored, rev));
    });
  }

  saveRun(caseId: string, revision: number, run: RunRecord): Observable<StoredRun> {
    return defer(() => {
      const library = this.read();
      const rev = library[caseId]?.revisions.find((r) => r.number === revision);
      if (!rev) return throwError(() => new CaseRepositoryError('not_found', `Revision r${revision} does not exist.`));
      if (caseDigest(run.params) !== rev.paramsDigest) {
        return throwError(
          () => new CaseRepositoryError('invalid', `This run was computed for other parameters than r${revision}.`),
        );
      }
      const stored: StoredRun = {
        id: newId('run'),
        kind: run.kind,
        settings: run.settings,
        summary: run.summary,
        resultDigest: run.resultDigest,
        engineVersion: run.engineVersion,
        createdAt: new Date().toISOString(),
        verification: { state: 'pending', verifiedAt: null, engineVersion: null, failure: null, claimed: null, differences: [], resultBytes: null },
      };
      rev.runs.push(stored);
      this.write(library);
      return of(stored);
    });
  }

  /** What the server's rerun does: keeps the run's full result and settles it as `state`. */
  settleRun(caseId: string, revision: number, runId: string, result: RunResult, state: 'verified' | 'unreproduced' = 'verified'): void {
    const library = this.read();
    const run = library[caseId]?.revisions.find((r) => r.number === revision)?.runs.find((r) => r.id === runId);
    if (!run) throw new Error(`no run ${runId} in r${revision}`);
    (run as { verification: StoredRun['verification'] }).verification = {
      ...run.verification,
      state,
      verifiedAt: new Date().toISOString(),
      engineVersion: run.engineVersion,
    };
    this.results.set(runId, encodeRunResult(result));
    this.write(library);
  }

  runResult(caseId: string, revision: number, runId: string): Observable<RunResult> {
    return defer(() => {
      const rev = this.read()[caseId]?.revisions.find((r) => r.number === revision);
      if (!rev?.runs.some((r) => r.id === runId)) return throwError(() => new CaseRepositoryError('not_found', `r${revision} has no such run.`));
      const text = this.results.get(runId);
      if (text === undefined) return throwError(() => new CaseRepositoryError('storage', 'The server is still rerunning this run.'));
      return of(decodeRunResult(text));
    });
  }

  rename(caseId: string, title: string, tags?: readonly string[]): Observable<CaseLabel> {
    return defer(() => {
      const library = this.read();
      const stored = library[caseId];
      if (!stored) return throwError(() => new CaseRepositoryError('not_found', 'That case does not exist.'));
      const trimmed = title.trim();
      if (!trimmed) return throwError(() => new CaseRepositoryError('invalid', 'A case needs a title.', 'title'));
      stored.title = trimmed;
      if (tags) stored.tags = [...tags];
      this.write(library);
      return of({ title: stored.title, tags: [...stored.tags] });
    });
  }

  private validParams(params: CaseParams): CaseParams {
    const parsed = parseCase(params);
    if (!parsed.ok) {
      const first = parsed.issues[0];
      throw new CaseRepositoryError('invalid', `${first.field || 'case'}: ${first.message}`, first.field);
    }
    return parsed.value;
  }

  private revision(number: number, params: CaseParams, note: string): LocalRevision {
    return { number, params, paramsDigest: caseDigest(params), note, createdAt: new Date().toISOString(), runs: [] };
  }

  private view(stored: LocalCase, rev: LocalRevision): OpenedCase {
    return {
      caseId: stored.id,
      title: stored.title,
      tags: stored.tags,
      labId: stored.labId ?? undefined,
      revision: rev.number,
      latestRevision: stored.revisions.length,
      params: structuredClone(rev.params),
      paramsDigest: rev.paramsDigest,
      readOnly: false,
      runs: [...rev.runs],
    };
  }

  private read(): LocalLibrary {
    return JSON.parse(this.stored) as LocalLibrary;
  }

  private write(library: LocalLibrary): void {
    this.stored = JSON.stringify(library);
  }
}
