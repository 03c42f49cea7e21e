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
  createMeetingSchema,
  specialtyLabels,
  type BoardMemberView,
  type MeetingView,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { problemMessage } from '../core/problem';
import { zodValidator } from '../core/zod-validator';
import { localDateTimeWithOffset } from './local-date-time';
import { MeetingApi } from './meeting-api';

export interface MeetingScheduleData {
  boardId: string;
  boardName: string;
  /** The board's members: the chair is one of them. */
  members: readonly BoardMemberView[];
}

/** Schedules a meeting of one board; closes with the new meeting. */
@Component({
  selector: 'em-meeting-schedule-dialog',
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
  template: `
    <h2 mat-dialog-title>Schedule a meeting of {{ data.boardName }}</h2>
    <form [formGroup]="form" (ngSubmit)="schedule()">
      <mat-dialog-content>
        <mat-form-field>
          <mat-label>Starts at</mat-label>
          <input matInput id="meeting-starts-at" type="datetime-local" formControlName="startsAt" />
          <mat-hint>Your local time</mat-hint>
          @if (form.controls.startsAt.invalid) {
            <mat-error>Give the date and time the meeting starts</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Duration (minutes)</mat-label>
          <input
            matInput
            id="meeting-duration"
            type="number"
            min="15"
            max="480"
            step="5"
            formControlName="durationMin"
          />
          @if (form.controls.durationMin.invalid) {
            <mat-error>{{ form.controls.durationMin.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Chair</mat-label>
          <mat-select id="meeting-chair" formControlName="chairId">
            @for (member of data.members; track member.userId) {
              <mat-option [value]="member.userId"
                >{{ member.displayName }} ({{ specialtyLabels[member.specialty] }})</mat-option
              >
            }
          </mat-select>
          @if (form.controls.chairId.invalid) {
            <mat-error>Choose the member who chairs the meeting</mat-error>
          }
        </mat-form-field>
        <mat-form-field>
          <mat-label>Place or video link</mat-label>
          <input matInput id="meeting-place" formControlName="place" autocomplete="off" />
          @if (form.controls.place.invalid) {
            <mat-error>{{ form.controls.place.errors | fieldError }}</mat-error>
          }
        </mat-form-field>
        @if (errorText()) {
          <p class="em-error-text" role="alert">{{ errorText() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" mat-dialog-close>Cancel</button>
        <button mat-flat-button type="submit" [disabled]="isSaving()">Schedule</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    mat-dialog-content {
      display: flex;
      flex-direction: column;
      gap: 4px;
      min-width: min(420px, 80vw);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MeetingScheduleDialog {
  private readonly api = inject(MeetingApi);
  private readonly dialogRef =
    inject<MatDialogRef<MeetingScheduleDialog, MeetingView>>(MatDialogRef);
  protected readonly data = inject<MeetingScheduleData>(MAT_DIALOG_DATA);

  protected readonly specialtyLabels = specialtyLabels;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly form = inject(NonNullableFormBuilder).group({
    startsAt: ['', Validators.required],
    durationMin: [90, [Validators.required, zodValidator(createMeetingSchema.shape.durationMin)]],
    chairId: ['', Validators.required],
    place: ['', zodValidator(createMeetingSchema.shape.place)],
  });

  protected schedule(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { startsAt, durationMin, chairId, place } = this.form.getRawValue();
    const startsAtIso = localDateTimeWithOffset(startsAt);
    if (!startsAtIso) {
      this.form.controls.startsAt.setErrors({ required: true });
      return;
    }
    this.isSaving.set(true);
    this.errorText.set('');
    const trimmedPlace = place.trim();
    this.api
      .schedule(this.data.boardId, {
        startsAt: startsAtIso,
        durationMin: Number(durationMin),
        chairId,
        ...(trimmedPlace ? { place: trimmedPlace } : {}),
      })
      .subscribe({
        next: (meeting) => this.dialogRef.close(meeting),
        error: (error: unknown) => {
          this.isSaving.set(false);
          this.errorText.set(problemMessage(error));
        },
      });
  }
}
