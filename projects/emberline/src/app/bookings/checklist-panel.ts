import { DatePipe } from '@angular/common';
import { RouterLink } from '@angular/router';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatCheckbox, type MatCheckboxChange } from '@angular/material/checkbox';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import {
  clinicalCaution,
  manualChecklistItems,
  type BookingView,
  type ChecklistItemState,
  type ChecklistItemView,
} from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { BookingApi } from './booking-api';
import { ReasonDialog, type ReasonDialogData } from './reason-dialog';

/** Shown beside the checklist: it supports the team's own checks and replaces none of them. */
export const checklistCaution =
  'This checklist supports, and never replaces, the pre-procedure checks of the treating team ' +
  'and the local protocol. ' +
  clinicalCaution;

export const checklistStateLabels: Record<ChecklistItemState, string> = {
  open: 'Open',
  met: 'Met',
  'not-met': 'Not met',
  overridden: 'Overridden',
};

/**
 * The pre-procedure checklist of a booking: manual items ticked by the coordinator, automatic
 * items with what the record shows and the threshold with its source. A failed item may be
 * overridden with a reason, which is kept. "Confirm booking" is offered once every item is met
 * or overridden; the server checks again, and its refusal (409) is shown here in its words.
 */
@Component({
  selector: 'em-checklist-panel',
  imports: [DatePipe, MatCheckbox, MatButton, MatIcon, ClinicalCaution, RouterLink],
  templateUrl: './checklist-panel.html',
  styleUrl: './checklist-panel.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ChecklistPanel {
  private readonly api = inject(BookingApi);
  private readonly dialog = inject(MatDialog);

  readonly booking = input.required<BookingView>();
  /** The booking changed on the server: read the logistics again. */
  readonly changed = output();

  protected readonly caution = checklistCaution;
  protected readonly stateLabels = checklistStateLabels;
  protected readonly busyKey = signal<string | null>(null);
  protected readonly errorText = signal('');
  protected readonly isConfirming = signal(false);

  protected readonly checklist = computed(() => this.booking().checklist);
  /** Ticks and overrides: the coordinator and the booking's operator, while it is booked. */
  protected readonly canCheck = computed(
    () => this.booking().permissions.canCheck && this.booking().state === 'booked',
  );
  protected readonly mayConfirm = computed(
    () =>
      this.booking().permissions.canConfirm &&
      this.booking().state === 'booked' &&
      !!this.checklist()?.isComplete,
  );

  protected isManual(item: ChecklistItemView): boolean {
    return manualChecklistItems.includes(item.key);
  }

  protected tick(item: ChecklistItemView, change: MatCheckboxChange): void {
    this.errorText.set('');
    this.busyKey.set(item.key);
    this.api.tick(this.booking().id, item.key, change.checked).subscribe({
      next: () => {
        this.busyKey.set(null);
        this.changed.emit();
      },
      error: (error: unknown) => {
        this.busyKey.set(null);
        // The box goes back to what the server holds.
        change.source.checked = !change.checked;
        this.errorText.set(problemMessage(error));
      },
    });
  }

  protected openOverride(item: ChecklistItemView): void {
    const bookingId = this.booking().id;
    const data: ReasonDialogData = {
      title: `Override "${item.label}"?`,
      message:
        'The item is counted as cleared although the record does not meet it. The reason is ' +
        'kept with your name in the booking history.',
      reasonLabel: 'Reason for the override',
      confirmLabel: 'Override',
      send: (reason) => this.api.override(bookingId, item.key, reason),
    };
    this.dialog
      .open<ReasonDialog, ReasonDialogData, boolean>(ReasonDialog, { data, width: '520px' })
      .afterClosed()
      .subscribe((isDone) => {
        if (isDone) this.changed.emit();
      });
  }

  protected confirm(): void {
    this.errorText.set('');
    this.isConfirming.set(true);
    this.api.confirm(this.booking().id).subscribe({
      next: () => {
        this.isConfirming.set(false);
        this.changed.emit();
      },
      error: (error: unknown) => {
        this.isConfirming.set(false);
        this.errorText.set(problemMessage(error));
      },
    });
  }
}
