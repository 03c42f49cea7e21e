import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogClose,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  anaesthesiaKinds,
  anaesthesiaLabels,
  createBookingSchema,
  followUpModalities,
  followUpModalityLabels,
  type AnaesthesiaKind,
  type BookingView,
  type CreateBooking,
  type CreateFollowUp,
  type FollowUpModality,
  type UpdateBooking,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { FieldError } from '../core/field-error';
import { zodValidator } from '../core/zod-validator';
import { textRequired } from '../decisions/text-required';
import { localDateTimeWithOffset } from '../meetings/local-date-time';
import { BookingApi } from './booking-api';
import { refusalText } from './refusal-text';

export type BookingDialogMode = 'procedure' | 'rebook' | 'follow-up';

export interface BookingDialogData {
  mode: BookingDialogMode;
  caseId: string;
  caseCode: string;
  /** The board's proceduralists (procedure and rebooking). */
  operators: readonly { id: string; displayName: string }[];
  /** The booking being changed (rebooking). */
  current?: BookingView | null;
  /** The follow-up's proposed day (`YYYY-MM-DD`), offered as the start. */
  proposedDate?: string | null;
}

const titles: Record<BookingDialogMode, string> = {
  procedure: 'Book the procedure',
  rebook: 'Rebook the procedure',
  'follow-up': 'Book the follow-up imaging',
};

const fields = createBookingSchema.shape;

/**
 * Books a case's procedure or follow-up imaging, or changes the procedure's booking with a reason.
 * The start is typed in the browser's local time and sent as ISO 8601 with the offset of that
 * moment. A refusal (a field the server rejects, a clash of room or operator as 409) shows in the
 * dialog, and everything typed stays. Closes with true once the server accepted.
 */
@Component({
  selector: 'em-booking-dialog',
  imports: [
    ReactiveFormsModule,
    MatDialogTitle,
    MatDialogContent,
    MatDialogActions,
    MatDialogClose,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
    FieldError,
  ],
  templateUrl: './booking-dialog.html',
  styleUrl: './booking-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BookingDialog {
  private readonly api = inject(BookingApi);
  private readonly dialogRef = inject<MatDialogRef<BookingDialog, boolean>>(MatDialogRef);
  protected readonly data = inject<BookingDialogData>(MAT_DIALOG_DATA);

  protected readonly title = titles[this.data.mode];
  protected readonly isFollowUp = this.data.mode === 'follow-up';
  protected readonly isRebooking = this.data.mode === 'rebook';
  protected readonly anaesthesiaKinds = anaesthesiaKinds;
  protected readonly anaesthesiaLabels = anaesthesiaLabels;
  protected readonly modalities = followUpModalities;
  protected readonly modalityLabels = followUpModalityLabels;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');

  protected readonly form = inject(NonNullableFormBuilder).group({
    startsAt: [initialStart(this.data), Validators.required],
    durationMin: [
      this.data.current?.durationMin ?? (this.isFollowUp ? 30 : 120),
      [Validators.required, zodValidator(fields.durationMin)],
    ],
    room: [this.data.current?.room ?? '', [textRequired, zodValidator(fields.room)]],
    operatorId: [this.data.current?.operator?.id ?? '', Validators.required],
    anaesthesia: [
      (this.data.current?.anaesthesia ?? '') as AnaesthesiaKind | '',
      Validators.required,
    ],
    modality: ['ct' as FollowUpModality, Validators.required],
    notes: [this.data.current?.notes ?? '', zodValidator(createBookingSchema.shape.notes)],
    reason: ['', textRequired],
  });

  constructor() {
    const controls = this.form.controls;
    if (this.isFollowUp) {
      controls.operatorId.disable();
      controls.anaesthesia.disable();
    } else {
      controls.modality.disable();
    }
    if (!this.isRebooking) controls.reason.disable();
  }

  protected save(): void {
    this.errorText.set('');
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const startsAt = localDateTimeWithOffset(this.form.controls.startsAt.value);
    if (!startsAt) {
      this.form.controls.startsAt.setErrors({ rule: 'Give the date and time' });
      this.form.controls.startsAt.markAsTouched();
      return;
    }
    const request = this.request(startsAt);
    if (!request) {
      this.errorText.set('Change at least one field of the booking.');
      return;
    }
    this.isSaving.set(true);
    request.subscribe({
      next: () => this.dialogRef.close(true),
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.errorText.set(refusalText(this.form, error));
      },
    });
  }

  /** The request of the mode; null for a rebooking that changes nothing. */
  private request(startsAt: string): Observable<unknown> | null {
    const value = this.form.getRawValue();
    const notes = value.notes.trim();
    const common = {
      startsAt,
      durationMin: Number(value.durationMin),
      room: value.room.trim(),
    };
    if (this.data.mode === 'follow-up') {
      const body: CreateFollowUp = { ...common, modality: value.modality };
      if (notes) body.notes = notes;
      return this.api.bookFollowUp(this.data.caseId, body);
    }
    if (this.data.mode === 'procedure') {
      const body: CreateBooking = {
        ...common,
        operatorId: value.operatorId,
        anaesthesia: value.anaesthesia as AnaesthesiaKind,
      };
      if (notes) body.notes = notes;
      return this.api.book(this.data.caseId, body);
    }
    const changes = changedFields(this.data.current ?? null, {
      ...common,
      operatorId: value.operatorId,
      anaesthesia: value.anaesthesia as AnaesthesiaKind,
      notes,
    });
    if (!Object.keys(changes).length) return null;
    const body: UpdateBooking = { ...changes, reason: value.reason.trim() };
    return this.api.rebook(this.data.caseId, body);
  }
}

/** The fields of a rebooking that differ from the booking as it stands. */
export function changedFields(
  current: BookingView | null,
  next: Required<Omit<UpdateBooking, 'reason'>>,
): Omit<UpdateBooking, 'reason'> {
  const changes: Omit<UpdateBooking, 'reason'> = {};
  if (!current || Date.parse(current.startsAt) !== Date.parse(next.startsAt)) {
    changes.startsAt = next.startsAt;
  }
  if (current?.durationMin !== next.durationMin) changes.durationMin = next.durationMin;
  if (current?.room !== next.room) changes.room = next.room;
  if (current?.operator?.id !== next.operatorId) changes.operatorId = next.operatorId;
  if (current?.anaesthesia !== next.anaesthesia) changes.anaesthesia = next.anaesthesia;
  if ((current?.notes ?? '') !== next.notes) changes.notes = next.notes;
  return changes;
}

/** The value for `<input type="datetime-local">` of an instant, in the browser's local time. */
export function localInputValue(iso: string): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return '';
  const pad = (value: number) => String(value).padStart(2, '0');
  return (
    `${String(date.getFullYear())}-${pad(date.getMonth() + 1)}-${pad(date.getDate())}` +
    `T${pad(date.getHours())}:${pad(date.getMinutes())}`
  );
}

function initialStart(data: BookingDialogData): string {
  if (data.current) return localInputValue(data.current.startsAt);
  // The follow-up's proposed day, at nine in the morning.
  if (data.proposedDate && /^\d{4}-\d{2}-\d{2}/.test(data.proposedDate)) {
    return `${data.proposedDate.slice(0, 10)}T09:00`;
  }
  return '';
}
