import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import {
  NonNullableFormBuilder,
  ReactiveFormsModule,
  Validators,
  type FormGroupDirective,
} from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import { createBoardSchema } from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { zodValidator } from '../core/zod-validator';
import { AdminApi } from './admin-api';
import { TypedCellDef } from '../core/typed-cell-def';
import { BoardQuorumEditor } from './board-quorum-editor';

/** Every board, and a form to create one. Members are added from the users' page. */
@Component({
  selector: 'em-admin-boards',
  imports: [
    ReactiveFormsModule,
    MatTableModule,
    TypedCellDef,
    MatFormField,
    MatLabel,
    MatError,
    MatInput,
    MatButton,
    MatProgressBar,
    FieldError,
    BoardQuorumEditor,
  ],
  template: `
    <div class="area">
      <section class="em-panel table-panel" aria-labelledby="all-boards-title">
        <h2 id="all-boards-title">Boards</h2>
        @if (boards.isLoading()) {
          <mat-progress-bar mode="indeterminate" aria-label="Loading boards" />
        }
        @if (loadError()) {
          <p class="em-error-text" role="alert">
            The boards could not be loaded: {{ loadError() }}
          </p>
          <button mat-stroked-button type="button" (click)="boards.reload()">Try again</button>
        } @else if (boards.hasValue()) {
          <div class="em-table-scroll" tabindex="0" role="region" aria-label="Boards table">
            <table mat-table [dataSource]="boards.value()" aria-labelledby="all-boards-title">
              <ng-container matColumnDef="name">
                <th mat-header-cell *matHeaderCellDef>Name</th>
                <td mat-cell *emCellDef="let board of boards.value()">{{ board.name }}</td>
              </ng-container>
              <ng-container matColumnDef="description">
                <th mat-header-cell *matHeaderCellDef>Description</th>
                <td mat-cell *emCellDef="let board of boards.value()">{{ board.description }}</td>
              </ng-container>
              <ng-container matColumnDef="memberCount">
                <th mat-header-cell *matHeaderCellDef>Members</th>
                <td mat-cell *emCellDef="let board of boards.value()">{{ board.memberCount }}</td>
              </ng-container>
              <ng-container matColumnDef="quorum">
                <th mat-header-cell *matHeaderCellDef>Quorum</th>
                <td mat-cell *emCellDef="let board of boards.value()">
                  <em-board-quorum-editor [board]="board" />
                </td>
              </ng-container>
              <tr mat-header-row *matHeaderRowDef="columns"></tr>
              <tr mat-row *matRowDef="let row; columns: columns"></tr>
              <tr class="mat-mdc-row" *matNoDataRow>
                <td class="mat-mdc-cell" [attr.colspan]="columns.length">No boards yet.</td>
              </tr>
            </table>
          </div>
        }
      </section>

      <section class="em-panel" aria-labelledby="new-board-title">
        <h2 id="new-board-title">New board</h2>
        <form [formGroup]="form" #formDirective="ngForm" (ngSubmit)="create(formDirective)">
          <mat-form-field>
            <mat-label>Name</mat-label>
            <input matInput id="new-board-name" formControlName="name" autocomplete="off" />
            @if (form.controls.name.invalid) {
              <mat-error>{{ form.controls.name.errors | fieldError }}</mat-error>
            }
          </mat-form-field>
          <mat-form-field>
            <mat-label>Description</mat-label>
            <textarea
              matInput
              id="new-board-description"
              formControlName="description"
              rows="3"
            ></textarea>
            @if (form.controls.description.invalid) {
              <mat-error>{{ form.controls.description.errors | fieldError }}</mat-error>
            }
          </mat-form-field>
          @if (errorText()) {
            <p class="em-error-text" role="alert">{{ errorText() }}</p>
          }
          <div class="em-actions">
            <button mat-flat-button type="submit" [disabled]="isSaving()">Create board</button>
            <span class="em-note" role="status">{{ savedText() }}</span>
          </div>
        </form>
      </section>
    </div>
  `,
  styles: `
    .area {
      display: grid;
      grid-template-columns: minmax(0, 2fr) minmax(280px, 1fr);
      gap: 16px;
      align-items: start;
    }

    @media (max-width: 900px) {
      .area {
        grid-template-columns: minmax(0, 1fr);
      }
    }

    table {
      width: 100%;
    }

    form {
      display: flex;
      flex-direction: column;
      gap: 4px;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AdminBoards {
  private readonly api = inject(AdminApi);

  protected readonly boards = this.api.boards();
  protected readonly columns = ['name', 'description', 'memberCount', 'quorum'];
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly savedText = signal('');
  protected readonly loadError = computed(() =>
    this.boards.error() ? problemMessage(this.boards.error()) : '',
  );
  protected readonly form = inject(NonNullableFormBuilder).group({
    name: ['', [Validators.required, zodValidator(createBoardSchema.shape.name)]],
    description: ['', zodValidator(createBoardSchema.shape.description)],
  });

  protected create(formDirective: FormGroupDirective): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.isSaving.set(true);
    this.errorText.set('');
    this.savedText.set('');
    this.api.createBoard(this.form.getRawValue()).subscribe({
      next: (board) => {
        this.isSaving.set(false);
        formDirective.resetForm();
        this.savedText.set(`Board ${board.name} created.`);
        this.boards.reload();
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        const unmatched = applyFieldErrors(this.form, error);
        this.errorText.set(
          ['The board was not created.', problemMessage(error), ...unmatched].join(' '),
        );
      },
    });
  }
}
