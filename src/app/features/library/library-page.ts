import { BreakpointObserver } from '@angular/cdk/layout';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, ErrorHandler, computed, effect, inject, signal } from '@angular/core';
import { rxResource, toObservable, toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatChipsModule } from '@angular/material/chips';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatMenuModule } from '@angular/material/menu';
import { MatPaginatorModule, PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSlideToggleModule } from '@angular/material/slide-toggle';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatSortModule, Sort } from '@angular/material/sort';
import { MatTableModule } from '@angular/material/table';
import { ActivatedRoute, ParamMap, Params, Router, RouterLink } from '@angular/router';
import { debounceTime, distinctUntilChanged, map, of } from 'rxjs';

import { describeError } from '../../core/error-message';
import { Session } from '../../core/session';
import { LabMembers } from '../labs/lab-members';
import { RecheckChip } from '../recheck/recheck-chip';
import { CreateCaseDialog, CreateCaseData } from './create-case-dialog';
import { CaseApi, CaseQuery, CaseSort } from './case-api';
import { CaseSummary, RECHECK_STATES, RecheckState } from './library-types';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

/** Pause after the last keystroke before the search goes to the server. */
export const SEARCH_DEBOUNCE_MS = 300;
export const PAGE_SIZES = [10, 20, 50];

const RECHECK_LABELS: Record<RecheckState, string> = {
  draft: 'Draft',
  'awaiting-recheck': 'Awaiting recheck',
  confirmed: 'Confirmed',
  disputed: 'Disputed',
};

/** mat-sort's (column, direction) as the server's sort parameter; no direction means the default order. */
export function sortParam(sort: Sort): CaseSort {
  if (sort.direction === '' || (sort.active !== 'title' && sort.active !== 'updated')) return '-updated';
  return sort.direction === 'asc' ? sort.active : `-${sort.active}`;
}

@Component({
  selector: 'qp-library-page',
  imports: [
    ScrollRegion,
    DatePipe,
    RouterLink,
    MatButtonModule,
    MatChipsModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatMenuModule,
    MatPaginatorModule,
    MatProgressBarModule,
    MatSelectModule,
    MatSlideToggleModule,
    MatSortModule,
    MatTableModule,
    RecheckChip,
  ],
  templateUrl: './library-page.html',
  styleUrl: './library-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LibraryPage {
  private readonly api = inject(CaseApi);
  private readonly session = inject(Session);
  private readonly labMembers = inject(LabMembers);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly router = inject(Router);
  private readonly errorHandler = inject(ErrorHandler);

  protected readonly lab = this.session.currentLab;
  protected readonly canEdit = this.session.canWriteCases;
  protected readonly recheckStates = RECHECK_STATES.map((value) => ({ value, label: RECHECK_LABELS[value] }));
  protected readonly pageSizes = PAGE_SIZES;
  /** Phones keep the columns that decide what to open; tags, author and date need the width of a larger screen. */
  private readonly narrow = toSignal(
    inject(BreakpointObserver)
      .observe('(max-width: 599.98px)')
      .pipe(map((state) => state.matches)),
    { initialValue: false },
  );
  protected readonly columns = computed(() => [
    'title',
    ...(this.narrow() ? [] : ['tags']),
    'revision',
    'recheck',
    ...(this.narrow() ? [] : ['author', 'updated']),
    ...(this.canEdit() ? ['actions'] : []),
  ]);

  /** The table's state starts from the address, so a filtered, sorted page can be bookmarked or shared. */
  private readonly route = inject(ActivatedRoute);
  private readonly initial = queryFromUrl(this.route.snapshot.queryParamMap);
  protected readonly searchText = signal(this.initial.search);
  private readonly search = toSignal(
    toObservable(this.searchText).pipe(debounceTime(SEARCH_DEBOUNCE_MS), distinctUntilChanged()),
    { initialValue: this.initial.search },
  );
  protected readonly tag = signal(this.initial.tag);
  protected readonly author = signal(this.initial.author);
  protected readonly recheck = signal<RecheckState | ''>(this.initial.recheck);
  protected readonly archived = signal(this.initial.archived);
  protected readonly sort = signal<Sort>(sortOf(this.initial.sort));
  protected readonly page = signal(this.initial.page);
  protected readonly pageSize = signal(this.initial.pageSize);

  protected readonly query = computed<CaseQuery>(() => ({
    search: this.search(),
    tag: this.tag(),
    author: this.author(),
    recheck: this.recheck(),
    archived: this.archived(),
    sort: sortParam(this.sort()),
    page: this.page(),
    pageSize: this.pageSize(),
  }));
  protected readonly cases = rxResource({
    params: () => {
      const labId = this.lab()?.id;
      return labId ? { labId, query: this.query() } : undefined;
    },
    stream: ({ params }) => this.api.listCases(params.labId, params.query),
  });
  protected readonly members = rxResource({
    params: () => this.lab()?.id,
    stream: ({ params }) => (params ? this.labMembers.list(params) : of([])),
  });
  protected readonly authors = computed(() =>
    [...(this.members.value() ?? [])].sort((a, b) => a.user.name.localeCompare(b.user.name)),
  );
  /** Keeps the last page on screen while the next one loads, so the table does not flicker. */
  protected readonly rows = computed(() => (this.cases.hasValue() ? this.cases.value().items : []));
  protected readonly total = computed(() => (this.cases.hasValue() ? this.cases.value().total : 0));
  protected readonly loadError = computed(() => {
    const error = this.cases.error();
    return error ? describeError(error.cause ?? error) : null;
  });
  protected readonly filtered = computed(
    () => this.search().trim() !== '' || this.tag() !== '' || this.author() !== '' || this.recheck() !== '',
  );

  constructor() {
    effect(() => {
      const query = this.query();
      void this.router.navigate([], { relativeTo: this.route, queryParams: urlOfQuery(query), replaceUrl: true });
    });
  }

  protected setSearch(value: string): void {
    this.searchText.set(value);
    this.page.set(1);
  }

  protected setTag(value: string): void {
    this.tag.set(value.trim());
    this.page.set(1);
  }

  protected setAuthor(value: string): void {
    this.author.set(value);
    this.page.set(1);
  }

  protected setRecheck(value: RecheckState | ''): void {
    this.recheck.set(value);
    this.page.set(1);
  }

  protected setArchived(value: boolean): void {
    this.archived.set(value);
    this.page.set(1);
  }

  protected sortBy(sort: Sort): void {
    this.sort.set(sort);
    this.page.set(1);
  }

  protected changePage(event: PageEvent): void {
    this.page.set(event.pageIndex + 1);
    this.pageSize.set(event.pageSize);
  }

  protected clearFilters(): void {
    this.searchText.set('');
    this.tag.set('');
    this.author.set('');
    this.recheck.set('');
    this.page.set(1);
  }

  protected caseLink(row: CaseSummary): string[] {
    return ['/cases', row.id, 'r', String(row.latestRevision)];
  }

  protected createCase(): void {
    const lab = this.lab();
    if (!lab) return;
    this.dialog
      .open<CreateCaseDialog, CreateCaseData>(CreateCaseDialog, { data: { labId: lab.id, labName: lab.name } })
      .afterClosed()
      .subscribe((created: unknown) => {
        if (isCreated(created)) void this.router.navigate(['/cases', created.id, 'r', String(created.latestRevision)]);
      });
  }

  protected duplicate(row: CaseSummary): void {
    this.api.duplicateCase(row.id, `${row.title} (copy)`).subscribe({
      next: (copy) => {
        this.cases.reload();
        this.snackBar
          .open(`Duplicated as "${copy.title}".`, 'Open', { duration: 6000 })
          .onAction()
          .subscribe(() => void this.router.navigate(['/cases', copy.id, 'r', String(copy.latestRevision)]));
      },
      error: (error: unknown) => this.errorHandler.handleError(error),
    });
  }

  protected setArchivedFor(row: CaseSummary, archived: boolean): void {
    this.api.updateCase(row.id, { archived }).subscribe({
      next: () => {
        this.cases.reload();
        const ref = this.snackBar.open(
          archived ? `Archived "${row.title}".` : `Restored "${row.title}".`,
          archived ? 'Undo' : undefined,
          { duration: 6000 },
        );
        if (archived) ref.onAction().subscribe(() => this.setArchivedFor(row, false));
      },
      error: (error: unknown) => this.errorHandler.handleError(error),
    });
  }
}

const DEFAULT_SORT: CaseSort = '-updated';
const SORTS: readonly CaseSort[] = ['-updated', 'updated', 'title', '-title'];

/** The address's query parameters as a table query; anything unknown falls back to the defaults. */
export function queryFromUrl(params: ParamMap): CaseQuery {
  const recheck = params.get('recheck') ?? '';
  const sort = params.get('sort') ?? DEFAULT_SORT;
  const page = Number(params.get('page') ?? 1);
  const size = Number(params.get('size') ?? PAGE_SIZES[1]);
  return {
    search: params.get('q') ?? '',
    tag: params.get('tag') ?? '',
    author: params.get('author') ?? '',
    recheck: (RECHECK_STATES as readonly string[]).includes(recheck) ? (recheck as RecheckState) : '',
    archived: params.get('archived') === 'true',
    sort: (SORTS as readonly string[]).includes(sort) ? (sort as CaseSort) : DEFAULT_SORT,
    page: Number.isInteger(page) && page >= 1 ? page : 1,
    pageSize: PAGE_SIZES.includes(size) ? size : PAGE_SIZES[1],
  };
}

/** Only what differs from the defaults goes into the address. */
function urlOfQuery(query: CaseQuery): Params {
  return {
    q: query.search.trim() || null,
    tag: query.tag || null,
    author: query.author || null,
    recheck: query.recheck || null,
    archived: query.archived ? 'true' : null,
    sort: query.sort === DEFAULT_SORT ? null : query.sort,
    page: query.page === 1 ? null : query.page,
    size: query.pageSize === PAGE_SIZES[1] ? null : query.pageSize,
  };
}

function sortOf(sort: CaseSort): Sort {
  const active = sort.replace('-', '');
  return { active, direction: sort.startsWith('-') ? 'desc' : 'asc' };
}

function isCreated(value: unknown): value is { id: string; latestRevision: number } {
  return (
    typeof value === 'object' &&
    value !== null &&
    'id' in value &&
    typeof value.id === 'string' &&
    'latestRevision' in value &&
    typeof value.latestRevision === 'number'
  );
}
