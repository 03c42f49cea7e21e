import { DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  linkedSignal,
  signal,
} from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { FormControl, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormField, MatLabel, MatPrefix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatPaginator, type PageEvent } from '@angular/material/paginator';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatSort, MatSortHeader, type Sort } from '@angular/material/sort';
import { MatTableModule } from '@angular/material/table';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import {
  caseSortFields,
  caseStatusLabels,
  caseStatuses,
  primaryDiagnosisLabels,
  type CaseDetail,
  type CaseListQuery,
  type CaseStatus,
  type CaseSummary,
  type Page,
} from '@emberline/shared';
import { debounceTime, distinctUntilChanged, map } from 'rxjs';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { CaseApi } from './case-api';
import { CaseStatusBadge } from './case-status-badge';
import { NewCaseDialog } from './new-case-dialog';
import { TypedCellDef } from '../core/typed-cell-def';

const DEFAULT_SORT: Sort = { active: 'caseCode', direction: 'asc' };
const DEFAULT_PAGE_SIZE = 20;
/** How long typing must pause before the filter asks the server. */
export const FILTER_DEBOUNCE_MS = 300;

/** The case register: every case the user may see, paged, sorted and filtered by the server. */
@Component({
  selector: 'em-case-register',
  imports: [
    DatePipe,
    ReactiveFormsModule,
    RouterLink,
    MatTableModule,
    TypedCellDef,
    MatSort,
    MatSortHeader,
    MatPaginator,
    MatProgressBar,
    MatFormField,
    MatLabel,
    MatPrefix,
    MatInput,
    MatSelect,
    MatOption,
    MatIcon,
    MatButton,
    CaseStatusBadge,
  ],
  templateUrl: './case-register.html',
  styleUrl: './case-register.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CaseRegister {
  private readonly api = inject(CaseApi);
  private readonly session = inject(AuthSession);
  private readonly dialog = inject(MatDialog);
  private readonly router = inject(Router);
  private readonly route = inject(ActivatedRoute);
  private readonly initial = this.route.snapshot.queryParamMap;

  protected readonly columns = [
    'caseCode',
    'board',
    'presenter',
    'primaryDiagnosis',
    'status',
    'nextMeetingAt',
  ];
  protected readonly statuses = caseStatuses;
  protected readonly statusLabels = caseStatusLabels;
  protected readonly diagnosisLabels = primaryDiagnosisLabels;
  protected readonly boards = computed(() => this.session.user()?.boards ?? []);
  protected readonly mayCreate = computed(() =>
    this.session.roles().includes('presenting-physician'),
  );

  protected readonly filter = new FormControl(this.initial.get('q') ?? '', { nonNullable: true });
  private readonly search = toSignal(
    this.filter.valueChanges.pipe(
      map((text) => text.trim()),
      debounceTime(FILTER_DEBOUNCE_MS),
      distinctUntilChanged(),
    ),
    { initialValue: (this.initial.get('q') ?? '').trim() },
  );
  protected readonly status = signal<CaseStatus | ''>(initialStatus(this.initial.get('status')));
  protected readonly boardId = signal(this.initial.get('boardId') ?? '');
  protected readonly sort = signal<Sort>(initialSort(this.initial.get('sort')));
  protected readonly pageSize = signal(
    initialNumber(this.initial.get('size'), DEFAULT_PAGE_SIZE, 1, 100),
  );
  /** Back to the first page whenever the filter, sort or page size changes. */
  protected readonly pageIndex = linkedSignal<unknown, number>({
    source: () => [this.search(), this.status(), this.boardId(), this.sort(), this.pageSize()],
    computation: (_source, previous) =>
      previous === undefined ? initialNumber(this.initial.get('page'), 0, 0, 100_000) : 0,
  });

  private readonly query = computed<CaseListQuery>(() => ({
    page: this.pageIndex(),
    size: this.pageSize(),
    sort: `${this.sort().active}:${this.sort().direction || 'asc'}`,
    q: this.search() || undefined,
    status: this.status() || undefined,
    boardId: this.boardId() || undefined,
  }));

  protected readonly cases = this.api.register(this.query);
  /** The last page that arrived, kept on screen while the next one loads. */
  private readonly lastPage = linkedSignal<
    Page<CaseSummary> | undefined,
    Page<CaseSummary> | undefined
  >({
    source: () => (this.cases.hasValue() ? this.cases.value() : undefined),
    computation: (page, previous) => page ?? previous?.value,
  });
  protected readonly rows = computed(() => this.lastPage()?.items ?? []);
  protected readonly total = computed(() => this.lastPage()?.total ?? 0);
  protected readonly errorText = computed(() =>
    this.cases.error() ? problemMessage(this.cases.error()) : '',
  );

  constructor() {
    effect(() => this.keepQueryInAddress(this.query()));
  }

  protected changeSort(sort: Sort): void {
    this.sort.set(sort.direction ? sort : DEFAULT_SORT);
  }

  protected changePage(event: PageEvent): void {
    if (event.pageSize !== this.pageSize()) {
      this.pageSize.set(event.pageSize);
      return;
    }
    this.pageIndex.set(event.pageIndex);
  }

  protected clearFilter(): void {
    this.filter.setValue('');
  }

  protected openNewCase(): void {
    this.dialog
      .open<NewCaseDialog, undefined, CaseDetail>(NewCaseDialog, {
        width: '640px',
        maxWidth: '95vw',
        autoFocus: 'first-tabbable',
      })
      .afterClosed()
      .subscribe((created) => {
        if (created) void this.router.navigate(['/cases', created.id]);
      });
  }

  /** The address holds the register's state, so "back" from a case returns to the same page. */
  private keepQueryInAddress(query: CaseListQuery): void {
    const isDefaultSort = query.sort === `${DEFAULT_SORT.active}:${DEFAULT_SORT.direction}`;
    void this.router.navigate([], {
      relativeTo: this.route,
      replaceUrl: true,
      queryParams: {
        q: query.q ?? null,
        status: query.status ?? null,
        boardId: query.boardId ?? null,
        sort: isDefaultSort ? null : query.sort,
        page: query.page || null,
        size: query.size === DEFAULT_PAGE_SIZE ? null : query.size,
      },
    });
  }
}

function initialStatus(value: string | null): CaseStatus | '' {
  return (caseStatuses as readonly string[]).includes(value ?? '') ? (value as CaseStatus) : '';
}

function initialSort(value: string | null): Sort {
  const [field, direction] = (value ?? '').split(':');
  if (!field || !(caseSortFields as readonly string[]).includes(field)) return DEFAULT_SORT;
  return { active: field, direction: direction === 'desc' ? 'desc' : 'asc' };
}

function initialNumber(
  value: string | null,
  fallback: number,
  minimum: number,
  maximum: number,
): number {
  const number = Number(value);
  return value !== null && Number.isInteger(number) && number >= minimum && number <= maximum
    ? number
    : fallback;
}
