import { DestroyRef, Injectable, computed, inject, signal, type WritableSignal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import {
  EMPTY, Observable, Subscription, catchError, exhaustMap, finalize, forkJoin, map, merge, mergeMap, of, switchMap, take, takeWhile, tap,
  throwError, timer,
} from 'rxjs';

import type { VerificationView } from '../../../../shared/api/cases';
import { caseDigest } from '../../../../shared/case/canonical';
import { RUN_KIND_LABELS } from '../../../../shared/case/display';
import type { CaseParams } from '../../../../shared/case/case-schema';
import { demoRigCase, templateCase } from '../../../../shared/case/templates';
import { parseCase, type CaseIssue } from '../../../../shared/case/validate';
import type { Grid2, StabilityChart } from '../../../../shared/engine/chart';
import type { FloquetAnalysis } from '../../../../shared/engine/floquet';
import type { HoldProbResult, HoldSample } from '../../../../shared/engine/holdprob';
import type { LeanestResult } from '../../../../shared/engine/leanest';
import type { HoldProbSettings, LeanestSettings } from '../../../../shared/engine/run-kinds';
import type { MotionResult } from '../../../../shared/engine/motion';
import { makeRunRecord, type RunKind, type RunRecord, type RunResult, type RunSettings } from '../../../../shared/engine/run-record';
import type { CellMap, MapCell, SweepPoint, SweepResult, SweepSpec } from '../../../../shared/engine/sweep';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { describeError } from '../../core/error-message';
import { Session } from '../../core/session';
import { CASE_REPOSITORY, type OpenedCase, type StoredRun } from './case-repository';
import { CaseRepositoryError } from './case-repository-error';
import { PoolJob, type RowsDone } from './pool-job';
import { RigForm } from './rig/rig-form';
import { DEFAULT_UNITS, type DisplayUnits } from '../../core/units/display-units';

/** Where a shown result came from when it was read from the opened revision instead of computed on this page. */
export interface StoredOrigin {
  readonly runId: string;
  readonly kind: RunKind;
  readonly revision: number;
  /** When the run was stored (ISO instant). */
  readonly computedAt: string;
  /** Who stored it; null for a former member. */
  readonly authorName: string | null;
  /** The server's own rerun of the run. */
  readonly verification: VerificationView;
}

/** A result together with the case it was computed for. */
export interface Computed<T> {
  readonly value: T;
  readonly params: CaseParams;
  readonly paramsDigest: string;
  readonly settings: RunSettings;
  /** Present when the result is a stored run of the opened revision (no computation on this page). */
  readonly stored?: StoredOrigin;
}

/** How often an opened revision is read again while the server still reruns some of its stored runs, and how many times. */
export const STORED_PENDING_RECHECK_MS = 3000;
export const STORED_PENDING_RECHECKS = 200;

/** Run kinds a case tab shows (every kind: the Map tab shows the chart, the outcome map and the basin map). */
export const SHOWN_STORED_KINDS: readonly RunKind[] = ['motion', 'margins', 'sweep', 'chart', 'map', 'basin', 'leanest', 'holdprob'];

/**
 * For each kind a tab shows, the stored run whose result to show: the latest the server has settled (verified or
 * unreproduced; only those have a stored result). `pending` lists kinds whose only runs are still being rerun.
 */
export function storedRunsToShow(runs: readonly StoredRun[]): { show: StoredRun[]; pending: RunKind[] } {
  const show: StoredRun[] = [];
  const pending: RunKind[] = [];
  for (const kind of SHOWN_STORED_KINDS) {
    const mine = runs.filter((r) => r.kind === kind).sort((a, b) => a.createdAt.localeCompare(b.createdAt));
    const settled = mine.filter((r) => r.verification.state !== 'pending').at(-1);
    if (settled) show.push(settled);
    else if (mine.length > 0) pending.push(kind);
  }
  return { show, pending };
}

/** The cells of a running outcome map finished so far: row-major, null where not yet computed. */
export interface MapSoFar {
  readonly grid: Grid2;
  readonly cells: ReadonlyArray<MapCell | null>;
  /** How many cells are finished. */
  readonly done: number;
}

/** A save that went through: the revision now shown and how many runs were stored with it. */
export interface SaveOutcome {
  readonly saved: OpenedCase;
  readonly runsStored: number;
  readonly newRevision: boolean;
  /** The title was saved (an existing case renamed). */
  readonly renamed: boolean;
}

/**
 * State of one case page, shared by its tabs: the opened revision, the Rig form and its validated draft, the
 * results of each tab with the case they belong to, the runs computed this session (saved with the next Save), and
 * the worker jobs (which keep running while the user switches tabs).
 */
@Injectable()
export class CaseWorkspace {
  private readonly repository = inject(CASE_REPOSITORY);
  private readonly pool = inject(ENGINE_POOL);
  private readonly session = inject(Session);
  private readonly destroyRef = inject(DestroyRef);

  private readonly openedState = signal<OpenedCase | null>(null);
  private readonly loadingState = signal(false);
  private readonly loadErrorState = signal<string | null>(null);
  private readonly draftState = signal<CaseParams>(templateCase());
  private readonly issuesState = signal<readonly CaseIssue[]>([]);
  private readonly unitsState = signal<DisplayUnits>(DEFAULT_UNITS);
  private readonly runsState = signal<readonly RunRecord[]>([]);
  private readonly savingState = signal(false);
  private readonly motionState = signal<Computed<MotionResult> | null>(null);
  private readonly marginsState = signal<Computed<FloquetAnalysis> | null>(null);
  private readonly sweepState = signal<Computed<SweepResult> | null>(null);
  private readonly chartState = signal<Computed<StabilityChart> | null>(null);
  private readonly outcomeMapState = signal<Computed<CellMap> | null>(null);
  private readonly outcomeMapPartialState = signal<MapSoFar | null>(null);
  private readonly basinState = signal<Computed<CellMap> | null>(null);
  private readonly leanestState = signal<Computed<LeanestResult> | null>(null);
  private readonly holdprobState = signal<Computed<HoldProbResult> | null>(null);
  private readonly formTickState = signal(0);
  private readonly saveNoteState = signal('');
  private readonly sweepPartialState = signal<readonly SweepPoint[]>([]);
  private readonly sweepStepsState = signal(0);
  private readonly focusRequestState = signal<string | null>(null);
  private readonly storedNotesState = signal<Partial<Record<RunKind, string>>>({});
  private storedLoad: Subscription | null = null;

  readonly form = new RigForm(templateCase(), DEFAULT_UNITS);
  readonly title = signal('New case');

  readonly opened = this.openedState.asReadonly();
  readonly loading = this.loadingState.asReadonly();
  readonly loadError = this.loadErrorState.asReadonly();
  /** The last valid case the form held (SI). Computations use it, and only while the form is valid. */
  readonly draft = this.draftState.asReadonly();
  /** Issues of the form's current content; empty when the draft matches the form. */
  readonly issues = this.issuesState.asReadonly();
  readonly valid = computed(() => this.issuesState().length === 0);
  readonly draftDigest = computed(() => caseDigest(this.draftState()));
  readonly units = this.unitsState.asReadonly();
  /** Counts changes of the form (edits, presets, unit switches) for views that read control values. */
  readonly formTick = this.formTickState.asReadonly();
  /** Runs computed this session and not yet saved. */
  readonly runs = this.runsState.asReadonly();
  /** Note the next save carries unless it is given one (e.g. which bench trace fitted values came from). */
  readonly saveNote = this.saveNoteState.asReadonly();
  readonly saving = this.savingState.asReadonly();
  readonly isNew = computed(() => this.openedState() === null);
  readonly readOnly = computed(() => this.openedState()?.readOnly ?? false);
  /** The draft differs from the opened revision (always true for a new case). */
  readonly dirty = computed(() => {
    const opened = this.openedState();
    return opened === null || opened.paramsDigest !== this.draftDigest();
  });
  /** The title field differs from the stored title (a rename is saved with the next Save, without a new revision). */
  readonly titleEdited = computed(() => {
    const opened = this.openedState();
    const title = this.title().trim();
    return opened !== null && title !== '' && title !== opened.title;
  });
  readonly storedRuns = computed<readonly StoredRun[]>(() => this.openedState()?.runs ?? []);

  readonly motion = this.motionState.asReadonly();
  readonly margins = this.marginsState.asReadonly();
  readonly sweep = this.sweepState.asReadonly();
  /** Points of the running sweep finished so far, in sweep order. */
  readonly sweepPartial = this.sweepPartialState.asReadonly();
  /** How many points the running (or last) sweep has. */
  readonly sweepSteps = this.sweepStepsState.asReadonly();
  readonly chart = this.chartState.asReadonly();
  /** The outcome map (run kind `map`): outcome over a grid of two case fields. */
  readonly outcomeMap = this.outcomeMapState.asReadonly();
  /** The running outcome map's cells finished so far (null where not yet computed), with its grid. */
  readonly outcomeMapPartial = this.outcomeMapPartialState.asReadonly();
  readonly basin = this.basinState.asReadonly();
  readonly leanest = this.leanestState.asReadonly();
  readonly holdprob = this.holdprobState.asReadonly();
  /**
   * Per run kind, why the opened revision's stored result is not (yet) shown: loading, still being rerun by the
   * server, failed to load, or not shown because it may not belong to the values on screen. Tabs show it while they
   * have no result.
   */
  readonly storedNotes = this.storedNotesState.asReadonly();
  /** A form path the Rig tab should focus when it shows (set by a refused run's link). */
  readonly focusRequest = this.focusRequestState.asReadonly();

  readonly motionJob = new PoolJob<MotionResult>();
  readonly marginsJob = new PoolJob<FloquetAnalysis>();
  readonly sweepJob = new PoolJob<SweepResult, SweepPoint[]>();
  readonly chartJob = new PoolJob<StabilityChart, RowsDone<Float64Array>>();
  readonly outcomeMapJob = new PoolJob<CellMap, RowsDone<MapCell[]>>();
  readonly basinJob = new PoolJob<CellMap, RowsDone<MapCell[]>>();
  readonly leanestJob = new PoolJob<LeanestResult, RowsDone<Float64Array>>();
  readonly holdprobJob = new PoolJob<HoldProbResult, { from: number; samples: HoldSample[] }>();

  constructor() {
    this.form.group.valueChanges.pipe(takeUntilDestroyed(this.destroyRef)).subscribe(() => this.readForm());
    this.destroyRef.onDestroy(() => {
      for (const job of this.jobs()) job.cancel();
      this.storedLoad?.unsubscribe();
    });
  }

  /** Starts a new, unsaved case from the template or a demo rig. */
  startNew(presetId?: string | null): void {
    this.reset();
    this.openedState.set(null);
    this.loadErrorState.set(null);
    const preset = presetId ? demoRigCase(presetId) : undefined;
    this.title.set('New case');
    this.applyParams(preset ?? templateCase());
  }

  /** Opens a stored revision (the latest when `revision` is absent); keeps state when it is already open. */
  open(caseId: string, revision?: number): Observable<OpenedCase> {
    // Asking for the latest always reads it again: someone may have saved since this page opened the case.
    const current = this.openedState();
    if (current && current.caseId === caseId && revision !== undefined && current.revision === revision) {
      return of(current);
    }
    this.reset();
    this.loadingState.set(true);
    this.loadErrorState.set(null);
    return this.repository.open(caseId, revision).pipe(
      tap((opened) => {
        this.openedState.set(opened);
        this.title.set(opened.title);
        this.applyParams(opened.params);
        this.showStoredResults(opened);
      }),
      catchError((error: unknown) => {
        this.loadErrorState.set(messageOf(error));
        return throwError(() => error);
      }),
      finalize(() => this.loadingState.set(false)),
    );
  }

  /**
   * Shows the revision's stored runs in their tabs, read from the server (its own rerun's full result): no worker
   * job starts. Only when the revision's parameters, as this page reads them, have the digest the runs were stored
   * for: a result is never shown beside values it was not computed from. A result arriving after the user has
   * computed that kind here is dropped: a fresh run replaces the stored view, never the other way round.
   */
  private showStoredResults(opened: OpenedCase): void {
    const { show, pending } = storedRunsToShow(opened.runs);
    const notes: Partial<Record<RunKind, string>> = {};
    const where = (kind: RunKind) => `${RUN_KIND_LABELS[kind] ?? kind} stored with r${opened.revision}`;
    if (caseDigest(opened.params) !== opened.paramsDigest) {
      for (const run of show) {
        notes[run.kind] = `${where(run.kind)}: not shown, because this version of the app reads the revision's parameters differently from when the run was stored. Run it again to see results for the values on screen.`;
      }
      this.storedNotesState.set(notes);
      return;
    }
    for (const kind of pending) notes[kind] = `${where(kind)}: the server is still checking it; it shows here once the check is done.`;
    for (const run of show) notes[run.kind] = `${where(run.kind)}: loading…`;
    this.storedNotesState.set(notes);
    const load = (run: StoredRun) =>
      this.repository.runResult(opened.caseId, opened.revision, run.id).pipe(
        tap((result) => {
          this.setNote(run.kind, null);
          this.showStored(result, run, opened);
        }),
        catchError((error: unknown) => {
          this.setNote(run.kind, `${where(run.kind)}: could not be loaded. ${messageOf(error)}`);
          return EMPTY;
        }),
      );
    // Kinds whose runs the server is still rerunning: read the revision again until it has settled them.
    const requested = new Set<string>();
    const settledLater$ =
      pending.length === 0
        ? EMPTY
        : timer(STORED_PENDING_RECHECK_MS, STORED_PENDING_RECHECK_MS).pipe(
            take(STORED_PENDING_RECHECKS),
            exhaustMap(() => this.repository.open(opened.caseId, opened.revision).pipe(catchError(() => EMPTY))),
            map((again) => storedRunsToShow(again.runs)),
            takeWhile((now) => now.pending.some((kind) => pending.includes(kind)), true),
            mergeMap((now) => now.show.filter((run) => pending.includes(run.kind) && !requested.has(run.id))),
            mergeMap((run) => {
              requested.add(run.id);
              return load(run);
            }),
          );
    this.storedLoad = merge(...show.map(load), settledLater$).subscribe();
  }

  private setNote(kind: RunKind, note: string | null): void {
    this.storedNotesState.update((notes) => {
      const next = { ...notes };
      if (note === null) delete next[kind];
      else next[kind] = note;
      return next;
    });
  }

  /**
   * Shows a run a server job stored with the opened revision in its tab, in place of what the tab showed: the user
   * asked for it. Reads the revision's runs again, so the new run is among the stored runs as well.
   */
  showJobRun(runId: string): Observable<RunKind | null> {
    const opened = this.openedState();
    if (!opened) return of(null);
    return this.repository.open(opened.caseId, opened.revision).pipe(
      switchMap((again) => {
        const current = this.openedState();
        if (!current || current.caseId !== again.caseId || current.revision !== again.revision) return of(null);
        const view: OpenedCase = { ...current, runs: again.runs };
        this.openedState.set(view);
        const run = again.runs.find((r) => r.id === runId);
        if (!run || caseDigest(view.params) !== view.paramsDigest) return of(null);
        return this.repository.runResult(view.caseId, view.revision, run.id).pipe(
          map((result) => {
            this.setNote(run.kind, null);
            this.showStored(result, run, view, true);
            return run.kind;
          }),
        );
      }),
    );
  }

  private showStored(result: RunResult, run: StoredRun, opened: OpenedCase, replace = false): void {
    if (result.kind !== run.kind) return;
    const stored: StoredOrigin = {
      runId: run.id,
      kind: run.kind,
      revision: opened.revision,
      computedAt: run.createdAt,
      authorName: run.author?.name ?? null,
      verification: run.verification,
    };
    const base = { params: opened.params, paramsDigest: opened.paramsDigest, settings: run.settings, stored };
    // Each kind's view is set only while empty (unless replacing): a result computed here in the meantime stays.
    const empty = (state: () => unknown) => replace || !state();
    switch (result.kind) {
      case 'motion':
        if (empty(this.motionState)) this.motionState.set({ ...base, value: result.value });
        break;
      case 'margins':
        if (empty(this.marginsState)) this.marginsState.set({ ...base, value: result.value });
        break;
      case 'sweep':
        if (empty(this.sweepState)) this.sweepState.set({ ...base, value: result.value });
        break;
      case 'chart':
        if (empty(this.chartState)) this.chartState.set({ ...base, value: result.value });
        break;
      case 'map':
        if (empty(this.outcomeMapState)) this.outcomeMapState.set({ ...base, value: result.value });
        break;
      case 'basin':
        if (empty(this.basinState)) this.basinState.set({ ...base, value: result.value });
        break;
      case 'leanest':
        if (empty(this.leanestState)) this.leanestState.set({ ...base, value: result.value });
        break;
      case 'holdprob':
        if (empty(this.holdprobState)) this.holdprobState.set({ ...base, value: result.value });
        break;
    }
  }

  /** Replaces the whole case (preset, uploaded file, opened revision): fills the form and the draft. */
  applyParams(params: CaseParams): void {
    this.saveNoteState.set('');
    this.form.setParams(params);
    this.draftState.set(params);
    this.issuesState.set([]);
    this.form.parse();
    if (this.readOnly()) this.form.group.disable({ emitEvent: false });
    else this.form.group.enable({ emitEvent: false });
    this.formTickState.update((n) => n + 1);
  }

  /** Replaces the case with `params` and has the next save note why. */
  applyParamsWithNote(params: CaseParams, note: string): void {
    this.applyParams(params);
    this.saveNoteState.set(note);
  }

  setUnits(units: DisplayUnits): void {
    this.form.setUnits(units);
    this.unitsState.set(units);
    this.formTickState.update((n) => n + 1);
  }

  /** Asks the Rig tab to focus the control of a form path. */
  requestFocus(formPath: string | null): void {
    this.focusRequestState.set(formPath);
  }

  /**
   * Runs start only while the form is valid: the draft is the last valid case, so with an invalid form a run
   * would use values other than those shown. The run strips say why and link to the field.
   */
  private canRun(): boolean {
    return this.valid();
  }

  runMotion(): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    const settings: RunSettings = { kind: 'motion' };
    this.dropStale(this.motionState);
    this.motionJob.start(this.pool.motion(params), (value) => {
      this.motionState.set(this.computed(value, params, settings));
      this.record(params, settings, { kind: 'motion', value });
    });
  }

  runMargins(relTolerance = 1e-6): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    const settings: RunSettings = { kind: 'margins', relTolerance };
    this.dropStale(this.marginsState);
    this.marginsJob.start(this.pool.margins(params, relTolerance), (value) => {
      this.marginsState.set(this.computed(value, params, settings));
      this.record(params, settings, { kind: 'margins', value });
    });
  }

  runSweep(spec: SweepSpec): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    const settings: RunSettings = { kind: 'sweep', spec };
    this.dropStale(this.sweepState);
    this.sweepPartialState.set([]);
    this.sweepStepsState.set(spec.steps);
    this.sweepJob.start(
      this.pool.sweep(params, spec),
      (value) => {
        this.sweepState.set(this.computed(value, params, settings));
        this.record(params, settings, { kind: 'sweep', value });
      },
      (points) => this.sweepPartialState.update((done) => [...done, ...points].sort((a, b) => a.index - b.index)),
    );
  }

  runChart(grid: Grid2): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    const settings: RunSettings = { kind: 'chart', grid };
    this.dropStale(this.chartState);
    this.chartJob.start(this.pool.chart(params, grid), (value) => {
      this.chartState.set(this.computed(value, params, settings));
      this.record(params, settings, { kind: 'chart', value });
    });
  }

  /** Runs an outcome map; its rows show in `outcomeMapPartial` as they finish. */
  runOutcomeMap(grid: Grid2): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    const settings: RunSettings = { kind: 'map', grid };
    this.dropStale(this.outcomeMapState);
    const nx = grid.x.count;
    this.outcomeMapPartialState.set({ grid, cells: new Array<MapCell | null>(nx * grid.y.count).fill(null), done: 0 });
    this.outcomeMapJob.start(
      this.pool.outcomeMap(params, grid),
      (value) => {
        this.outcomeMapPartialState.set(null);
        this.outcomeMapState.set(this.computed(value, params, settings));
        this.record(params, settings, { kind: 'map', value });
      },
      (rows) =>
        this.outcomeMapPartialState.update((sofar) => {
          if (!sofar || sofar.grid !== grid) return sofar;
          const cells = sofar.cells.slice();
          cells.splice(rows.rowFrom * nx, rows.values.length, ...rows.values);
          return { grid, cells, done: sofar.done + rows.values.length };
        }),
    );
  }

  runBasin(grid: Grid2): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    const settings: RunSettings = { kind: 'basin', grid };
    this.dropStale(this.basinState);
    this.basinJob.start(this.pool.basin(params, grid), (value) => {
      this.basinState.set(this.computed(value, params, settings));
      this.record(params, settings, { kind: 'basin', value });
    });
  }

  runLeanest(settings: LeanestSettings): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    this.dropStale(this.leanestState);
    this.leanestJob.start(this.pool.leanest(params, settings), (value) => {
      this.leanestState.set(this.computed(value, params, settings));
      this.record(params, settings, { kind: 'leanest', value });
    });
  }

  runHoldProb(settings: HoldProbSettings): void {
    if (!this.canRun()) return;
    const params = this.draftState();
    this.dropStale(this.holdprobState);
    this.holdprobJob.start(this.pool.holdprob(params, settings), (value) => {
      this.holdprobState.set(this.computed(value, params, settings));
      this.record(params, settings, { kind: 'holdprob', value });
    });
  }

  /**
   * Sets the case's tolerances (SI, as the schema stores them; empty: none), the rest of the case as it is. Refused,
   * with the reason in words, when the form is invalid, the role cannot edit, or a tolerance breaks the case's rules.
   */
  setTolerances(tolerances: NonNullable<CaseParams['tolerances']>): string | null {
    return this.setUncertainty({ ...this.draftState(), tolerances: tolerances.length ? tolerances : undefined });
  }

  /** Sets the case's drive noise (SI; null: none), like `setTolerances`. */
  setNoise(noise: CaseParams['noise'] | null): string | null {
    return this.setUncertainty({ ...this.draftState(), noise: noise ?? undefined });
  }

  private setUncertainty(next: CaseParams): string | null {
    if (!this.valid()) return 'Fix the Rig fields first: the form is invalid.';
    if (this.readOnly()) return 'Your role in this lab cannot change this case.';
    const checked = parseCase(next);
    if (!checked.ok) return checked.issues[0]?.message ?? 'invalid';
    this.form.setExtras({ tolerances: checked.value.tolerances, noise: checked.value.noise });
    this.readForm();
    return null;
  }

  /**
   * Sets the drive frequency (Hz) and amplitude (m) in the Rig form, the rest of the case as it is; results of the
   * earlier drive then show as belonging to earlier inputs. Refused, with the reason in words, when the form is
   * invalid or the new drive breaks a case limit (e.g. too few drive periods in the run).
   */
  applyDrive(frequency: number, amplitude: number, note: string): string | null {
    if (!this.valid()) return 'Fix the Rig fields first: the form is invalid.';
    if (this.readOnly()) return 'Your role in this lab cannot change this case.';
    const current = this.draftState();
    const next: CaseParams = { ...current, drive: { ...current.drive, frequency, amplitude } };
    const checked = parseCase(next);
    if (!checked.ok) return `That drive breaks a limit of the case: ${checked.issues[0]?.message ?? 'invalid'}.`;
    this.applyParamsWithNote(checked.value, note);
    return null;
  }

  /**
   * Run asks for results of the inputs on screen: a shown result of other inputs (stored or computed) goes at once,
   * so it is never read as the answer while the new one is computed. A current result stays until replaced.
   */
  private dropStale<T>(state: WritableSignal<Computed<T> | null>): void {
    if (this.isStale(state())) state.set(null);
  }

  /** True when a result was computed for other inputs than the current draft. */
  isStale(result: Computed<unknown> | null): boolean {
    return result !== null && result.paramsDigest !== this.draftDigest();
  }

  /**
   * Saves: a new case, or a changed title and then a new revision when the draft changed, then every session run
   * computed for the saved parameters. Errors carry a message meant for the user (see `messageOf`).
   */
  save(note = ''): Observable<SaveOutcome> {
    if (!this.valid()) {
      return throwError(() => new CaseRepositoryError('invalid', 'Not saved: some Rig fields need attention first.'));
    }
    const opened = this.openedState();
    const params = this.draftState();
    const newRevision = opened === null || this.dirty();
    // The rename goes first: it cannot be stale, so a refused revision leaves nothing half-saved but the title.
    const renamed = opened !== null && this.titleEdited();
    const renamed$: Observable<OpenedCase | null> =
      renamed && opened !== null
        ? this.repository.rename(opened.caseId, this.title()).pipe(
            map((label) => {
              const view: OpenedCase = { ...opened, title: label.title, tags: label.tags };
              this.openedState.set(view);
              this.title.set(label.title);
              return view;
            }),
          )
        : of(opened);
    const revisionNote = note || this.saveNoteState();
    const base$ = renamed$.pipe(switchMap((current) => this.saveParams(current, params, newRevision, revisionNote)));
    this.savingState.set(true);
    return base$.pipe(
      switchMap((saved) => {
        const pending = this.runsState().filter((r) => r.caseDigest === saved.paramsDigest);
        const stored$ = pending.length
          ? forkJoin(pending.map((run) => this.repository.saveRun(saved.caseId, saved.revision, run)))
          : of([] as StoredRun[]);
        return stored$.pipe(
          map((stored) => {
            this.runsState.update((runs) => runs.filter((r) => !pending.includes(r)));
            if (newRevision) this.saveNoteState.set('');
            const view: OpenedCase = { ...saved, runs: [...saved.runs, ...stored] };
            this.openedState.set(view);
            return { saved: view, runsStored: stored.length, newRevision, renamed };
          }),
        );
      }),
      finalize(() => this.savingState.set(false)),
    );
  }

  private saveParams(opened: OpenedCase | null, params: CaseParams, newRevision: boolean, note: string): Observable<OpenedCase> {
    if (opened === null) {
      return this.repository.create({
        labId: this.session.currentLab()?.id ?? null,
        title: this.title().trim() || 'Untitled case',
        tags: [],
        params,
        note,
      });
    }
    return newRevision ? this.repository.saveRevision(opened.caseId, opened.revision, params, note) : of(opened);
  }

  private readForm(): void {
    const result = this.form.parse();
    if (result.ok) {
      this.draftState.set(result.value);
      this.issuesState.set([]);
    } else {
      this.issuesState.set(result.issues);
    }
    this.formTickState.update((n) => n + 1);
  }

  private computed<T>(value: T, params: CaseParams, settings: RunSettings): Computed<T> {
    return { value, params, paramsDigest: caseDigest(params), settings };
  }

  private record(params: CaseParams, settings: RunSettings, result: RunResult): void {
    const run = makeRunRecord(params, settings, result);
    this.runsState.update((runs) => [...runs, run]);
  }

  private jobs(): Array<{ cancel(): void }> {
    return [
      this.motionJob, this.marginsJob, this.sweepJob, this.chartJob, this.outcomeMapJob, this.basinJob, this.leanestJob, this.holdprobJob,
    ];
  }

  private reset(): void {
    for (const job of this.jobs()) job.cancel();
    this.storedLoad?.unsubscribe();
    this.storedLoad = null;
    this.storedNotesState.set({});
    this.motionState.set(null);
    this.marginsState.set(null);
    this.sweepState.set(null);
    this.chartState.set(null);
    this.outcomeMapState.set(null);
    this.outcomeMapPartialState.set(null);
    this.basinState.set(null);
    this.leanestState.set(null);
    this.holdprobState.set(null);
    this.runsState.set([]);
  }
}

/** Words for a failed load or save: repository refusals as they are, 409s called out, the rest via describeError. */
export function messageOf(error: unknown): string {
  if (error instanceof CaseRepositoryError) return error.message;
  return describeError(error);
}

