import { DatePipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  linkedSignal,
  signal,
} from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { NonNullableFormBuilder, ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatPaginator, type PageEvent } from '@angular/material/paginator';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatTableModule } from '@angular/material/table';
import {
  auditActionLabels,
  auditActions,
  type AuditAction,
  type AuditEventView,
  type Page,
} from '@emberline/shared';
import { debounceTime, map } from 'rxjs';
import { problemMessage } from '../core/problem';
import { AdminApi, type AuditQuery } from './admin-api';

import { TypedCellDef } from '../core/typed-cell-def';

interface AuditFilters {
  action: AuditAction | '';
  actor: string;
  entityId: string;
  from: string;
  to: string;
}

/** The audit log: who did what to which record, from where, and whether it was allowed. */
@Component({
  selector: 'em-admin-audit',
  imports: [
    DatePipe,
    ReactiveFormsModule,
    MatTableModule,
    TypedCellDef,
    MatPaginator,
    MatProgressBar,
    MatFormField,
    MatLabel,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
  ],
  templateUrl: './admin-audit.html',
  styleUrl: './admin-audit.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AdminAudit {
  private readonly api = inject(AdminApi);

  protected readonly actions = auditActions;
  protected readonly actionLabels = auditActionLabels;
  protected readonly columns = ['at', 'actor', 'action', 'record', 'ip', 'outcome'];
  protected readonly filters = inject(NonNullableFormBuilder).group({
    action: ['' as AuditAction | ''],
    actor: [''],
    entityId: [''],
    from: [''],
    to: [''],
  });
  private readonly appliedFilters = toSignal(
    this.filters.valueChanges.pipe(
      debounceTime(300),
      map(() => this.filters.getRawValue()),
    ),
    { initialValue: this.filters.getRawValue() },
  );
  protected readonly pageSize = signal(50);
  protected readonly pageIndex = linkedSignal<unknown, number>({
    source: () => [this.appliedFilters(), this.pageSize()],
    computation: () => 0,
  });
  private readonly query = computed<AuditQuery>(() => ({
    page: this.pageIndex(),
    size: this.pageSize(),
    ...toQueryFilters(this.appliedFilters()),
  }));
  protected readonly events = this.api.audit(this.query);
  private readonly lastPage = linkedSignal<
    Page<AuditEventView> | undefined,
    Page<AuditEventView> | undefined
  >({
    source: () => (this.events.hasValue() ? this.events.value() : undefined),
    computation: (page, previous) => page ?? previous?.value,
  });
  protected readonly rows = computed(() => this.lastPage()?.items ?? []);
  protected readonly total = computed(() => this.lastPage()?.total ?? 0);
  protected readonly errorText = computed(() =>
    this.events.error() ? problemMessage(this.events.error()) : '',
  );

  protected changePage(event: PageEvent): void {
    if (event.pageSize !== this.pageSize()) {
      this.pageSize.set(event.pageSize);
      return;
    }
    this.pageIndex.set(event.pageIndex);
  }

  protected clearFilters(): void {
    this.filters.reset();
  }

  protected recordText(event: AuditEventView): string {
    if (!event.entityType && !event.entityId) return '—';
    return [event.entityType, event.entityId].filter(Boolean).join(' ');
  }
}

/** The filters as the API takes them: empty ones left out, local times as ISO instants. */
function toQueryFilters(filters: AuditFilters): Omit<AuditQuery, 'page' | 'size'> {
  return {
    action: filters.action || undefined,
    actor: filters.actor.trim() || undefined,
    entityId: filters.entityId.trim() || undefined,
    from: isoInstant(filters.from),
    to: isoInstant(filters.to),
  };
}

function isoInstant(localDateTime: string): string | undefined {
  if (!localDateTime) return undefined;
  const instant = new Date(localDateTime);
  return Number.isNaN(instant.getTime()) ? undefined : instant.toISOString();
}
