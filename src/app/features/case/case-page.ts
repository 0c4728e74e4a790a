import { ChangeDetectionStrategy, Component, ErrorHandler, computed, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTabsModule } from '@angular/material/tabs';
import { MatTooltipModule } from '@angular/material/tooltip';
import { TextFieldModule } from '@angular/cdk/text-field';
import { ActivatedRoute, Router, RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';
import { EMPTY, Observable, catchError, filter, of, switchMap, tap } from 'rxjs';

import { Session } from '../../core/session';
import { downloadText } from '../../ui/csv';
import { caseFileJson, caseFileName, readCaseFile } from './case-file';
import { CASE_TABS } from './case-tabs';
import { CaseRepositoryError } from './case-repository-error';
import { CaseServerJobs } from './case-server-jobs';
import { CaseWorkspace, messageOf } from './case-workspace';
import { RevisionNoteData, RevisionNoteDialog, revisionNoteDrafts } from './revision-note-dialog';

/** The case page: toolbar (title, revision, Save, case file in and out) over the tab bar of the case's tabs. */
@Component({
  selector: 'qp-case-page',
  imports: [
    FormsModule,
    MatButtonModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatTabsModule,
    MatTooltipModule,
    TextFieldModule,
    RouterLink,
    RouterLinkActive,
    RouterOutlet,
  ],
  providers: [CaseWorkspace, CaseServerJobs],
  templateUrl: './case-page.html',
  styleUrl: './case-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CasePage {
  private readonly route = inject(ActivatedRoute);
  private readonly router = inject(Router);
  private readonly snackBar = inject(MatSnackBar);
  private readonly errorHandler = inject(ErrorHandler);
  private readonly dialog = inject(MatDialog);
  protected readonly workspace = inject(CaseWorkspace);
  private readonly session = inject(Session);

  protected readonly tabs = CASE_TABS;
  /** A new case for someone whose role cannot save one: no form to fill in vain. */
  protected readonly cannotCreate = computed(() => this.workspace.isNew() && !this.session.canWriteCases());
  protected readonly labName = computed(() => this.session.currentLab()?.name ?? 'this lab');
  protected readonly role = computed(() => this.session.currentMembership()?.role ?? null);
  protected readonly problem = signal<string | null>(null);
  /** The last Save was refused because a newer revision exists: the banner offers to open it. */
  protected readonly staleSave = signal(false);
  protected readonly opened = this.workspace.opened;
  protected readonly revisionLabel = computed(() => {
    const opened = this.opened();
    if (!opened) return 'not saved yet';
    const latest = opened.latestRevision > opened.revision ? ` (latest r${opened.latestRevision})` : '';
    return `r${opened.revision}${latest}`;
  });
  protected readonly canSave = computed(
    () => !this.workspace.saving() && !this.workspace.readOnly() && this.workspace.valid() && !this.workspace.loading(),
  );
  protected readonly edited = computed(() => !this.workspace.isNew() && (this.workspace.dirty() || this.workspace.titleEdited()));
  protected readonly unsavedRuns = computed(() => this.workspace.runs().length);
  protected readonly saveHint = computed(() => {
    if (this.workspace.readOnly()) return 'Your role cannot save this case';
    if (!this.workspace.valid()) return 'Some Rig fields need attention';
    if (this.workspace.isNew()) return 'Create the case with its first revision';
    if (this.workspace.dirty()) return 'Save these inputs as a new revision';
    if (this.workspace.titleEdited()) return 'Save the new title (no new revision)';
    return this.unsavedRuns() > 0 ? 'Store the new runs with this revision' : 'Nothing new to save';
  });

  constructor() {
    // Only the case and revision matter here: tab links drop the query (the preset applies once, on arrival).
    this.route.paramMap
      .pipe(
        switchMap((params) => {
          this.dismissProblem();
          const caseId = params.get('caseId');
          if (!caseId) {
            this.workspace.startNew(this.route.snapshot.queryParamMap.get('preset'));
            return EMPTY;
          }
          const rev = params.get('rev');
          return this.workspace.open(caseId, rev === null ? undefined : Number(rev)).pipe(
            tap((opened) => {
              if (rev === null) void this.router.navigate(['/cases', opened.caseId, 'r', opened.revision], { replaceUrl: true });
            }),
            catchError(() => EMPTY),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe();
  }

  /** Save: a new revision first asks for its note (optional); storing runs or a title alone does not. */
  protected save(): void {
    this.dismissProblem();
    const opened = this.opened();
    const caseKey = opened?.caseId ?? 'new';
    const newRevision = opened === null || this.workspace.dirty();
    const note$: Observable<string | undefined> = newRevision
      ? this.dialog
          .open<RevisionNoteDialog, RevisionNoteData, string>(RevisionNoteDialog, {
            data: { caseKey, nextRevision: opened ? opened.latestRevision + 1 : 1, suggested: this.workspace.saveNote() },
          })
          .afterClosed()
      : of('');
    note$
      .pipe(
        filter((note): note is string => note !== undefined),
        switchMap((note) => this.workspace.save(note)),
      )
      .subscribe({
        next: ({ saved, runsStored, newRevision, renamed }) => {
          if (newRevision) revisionNoteDrafts.clear(caseKey);
          const runs = runsStored === 1 ? '1 run' : `${runsStored} runs`;
          const what = newRevision
            ? `Saved as r${saved.revision}`
            : renamed && !runsStored
              ? 'Title saved'
              : `Stored with r${saved.revision}`;
          this.snackBar.open(`${what}${runsStored ? ` with ${runs}` : ''}.`, 'OK', { duration: 5000 });
          const tab = this.currentTab();
          void this.router.navigate(['/cases', saved.caseId, 'r', saved.revision, tab]);
        },
        error: (error: unknown) => {
          this.problem.set(messageOf(error));
          this.staleSave.set(error instanceof CaseRepositoryError && error.code === 'stale_revision');
        },
      });
  }

  /** Enter in the title saves nothing and adds no line break: the title is one line that wraps. */
  protected keepOneLine(event: Event): void {
    event.preventDefault();
  }

  protected downloadCase(): void {
    const title = this.workspace.title();
    downloadText(caseFileName(title, 'json'), caseFileJson(title, this.workspace.draft()), 'application/json');
  }

  protected async uploadCase(input: HTMLInputElement): Promise<void> {
    const file = input.files?.[0];
    input.value = '';
    if (!file) return;
    try {
      const result = readCaseFile(await file.text(), this.workspace.units());
      if (!result.ok) {
        this.dismissProblem();
        this.problem.set(`${file.name}: ${result.message}`);
        return;
      }
      this.dismissProblem();
      this.workspace.applyParams(result.params);
      if (this.workspace.isNew()) this.workspace.title.set(result.title);
      this.snackBar.open(`Loaded "${result.title}" from ${file.name}. Save to keep it as a revision.`, 'OK', { duration: 5000 });
    } catch (error: unknown) {
      this.errorHandler.handleError(error);
    }
  }

  protected dismissProblem(): void {
    this.problem.set(null);
    this.staleSave.set(false);
  }

  /** After a refused stale save: reads the case's latest revision (the edits made here are let go). */
  protected openLatest(): void {
    const opened = this.opened();
    if (opened) void this.router.navigate(['/cases', opened.caseId]);
  }

  private currentTab(): string {
    const child = this.route.firstChild?.snapshot.url[0]?.path;
    return child && this.tabs.some((t) => t.path === child) ? child : this.tabs[0].path;
  }
}
