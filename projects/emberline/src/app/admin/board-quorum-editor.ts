import {
  ChangeDetectionStrategy,
  Component,
  inject,
  input,
  linkedSignal,
  signal,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatOption, MatSelect } from '@angular/material/select';
import { specialties, specialtyLabels, type BoardView, type Specialty } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { AdminApi } from './admin-api';

/** Edits the specialties a board needs present for quorum, saved on its own. */
@Component({
  selector: 'em-board-quorum-editor',
  imports: [MatFormField, MatLabel, MatSelect, MatOption, MatButton],
  template: `
    <div class="editor">
      <mat-form-field subscriptSizing="dynamic">
        <mat-label>Required for quorum</mat-label>
        <mat-select
          multiple
          [attr.id]="'quorum-' + board().id"
          [value]="chosen()"
          (valueChange)="choose($event)"
        >
          @for (specialty of specialties; track specialty) {
            <mat-option [value]="specialty">{{ labels[specialty] }}</mat-option>
          }
        </mat-select>
      </mat-form-field>
      <button
        mat-stroked-button
        type="button"
        [disabled]="isSaving() || !isChanged()"
        [attr.aria-label]="'Save the quorum of ' + board().name"
        (click)="save()"
      >
        Save
      </button>
    </div>
    <span class="em-note" role="status">{{ savedText() }}</span>
    @if (errorText()) {
      <p class="em-error-text" role="alert">{{ errorText() }}</p>
    }
  `,
  styles: `
    .editor {
      display: flex;
      align-items: center;
      gap: 8px;
    }

    mat-form-field {
      min-width: 220px;
    }

    p {
      margin: 4px 0 0;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BoardQuorumEditor {
  private readonly api = inject(AdminApi);

  readonly board = input.required<BoardView>();

  protected readonly specialties = specialties;
  protected readonly labels = specialtyLabels;
  /** What the server holds; replaced by its answer after a save. */
  private readonly saved = linkedSignal<Specialty[]>(() => this.board().requiredSpecialties);
  protected readonly chosen = linkedSignal<Specialty[]>(() => this.saved());
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly savedText = signal('');

  protected isChanged(): boolean {
    const saved = new Set(this.saved());
    const chosen = this.chosen();
    return chosen.length !== saved.size || chosen.some((specialty) => !saved.has(specialty));
  }

  protected choose(value: Specialty[]): void {
    this.chosen.set(value);
    this.savedText.set('');
  }

  protected save(): void {
    // In the list's order, so the same choice always reads the same way.
    const chosen = specialties.filter((specialty) => this.chosen().includes(specialty));
    this.isSaving.set(true);
    this.errorText.set('');
    this.savedText.set('');
    this.api.setQuorum(this.board().id, chosen).subscribe({
      next: ({ requiredSpecialties }) => {
        this.isSaving.set(false);
        this.saved.set(requiredSpecialties);
        this.chosen.set(requiredSpecialties);
        this.savedText.set('Saved.');
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.errorText.set(`The quorum was not saved: ${problemMessage(error)}`);
      },
    });
  }
}
