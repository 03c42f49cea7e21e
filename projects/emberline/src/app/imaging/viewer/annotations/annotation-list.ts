import { DecimalPipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  input,
  signal,
  viewChild,
  type ElementRef,
} from '@angular/core';
import { MatDialog } from '@angular/material/dialog';
import { vector3, type AnnotationKind, type AnnotationView } from '@emberline/shared';
import { firstValueFrom } from 'rxjs';
import { ConfirmDialog, type ConfirmDialogData } from '../../../core/confirm-dialog';
import { ViewerSession } from '../viewer-session';
import { AnnotationLayer } from './annotation-layer';

const kindLabels: Record<AnnotationKind, string> = {
  point: 'Point',
  line: 'Line',
  note: 'Note',
};

/**
 * The annotations of the series on screen: each with its author, a way to bring it under the
 * crosshair (so that every view shows it), and, where the server allows it (`canEdit`: one's
 * own, or anyone's for the chair of the meeting in session), its text changed or the
 * annotation deleted; refusals in words. In the side column of the case file; under the views,
 * compact and scrolling within a few lines, where the viewer has no side column (the room).
 */
@Component({
  selector: 'em-annotation-list',
  imports: [DecimalPipe],
  template: `
    <div class="head">
      <h3 id="annotation-list-title">Annotations on this series</h3>
      <span class="em-muted" aria-live="polite">{{ countText() }}</span>
      @if (annotations().length) {
        <button type="button" class="link" (click)="toggleShown()">
          {{ layer.isShown() ? 'Hide on the views' : 'Show on the views' }}
        </button>
      }
    </div>
    @if (layer.loadProblem()) {
      <p class="em-error-text problem" role="alert">
        {{ layer.loadProblem() }}
        <button type="button" class="link" (click)="layer.reload()">Try again</button>
      </p>
    }
    @if (layer.listProblem()) {
      <p class="em-error-text problem" role="alert">{{ layer.listProblem() }}</p>
    }
    @if (annotations().length) {
      <ul class="list" aria-labelledby="annotation-list-title">
        @for (annotation of annotations(); track annotation.id) {
          <li [attr.data-annotation-item]="annotation.id">
            <span class="kind">{{ kindLabels[annotation.kind] }}</span>
            @if (editingId() === annotation.id) {
              <form class="edit" (submit)="saveText($event, annotation)">
                <input
                  #editText
                  name="text"
                  maxlength="1000"
                  autocomplete="off"
                  [attr.aria-label]="'Text of the ' + kindLabels[annotation.kind].toLowerCase()"
                  [value]="annotation.text ?? ''"
                  (keydown.escape)="editingId.set(null)"
                />
                <button type="submit" class="link" [disabled]="isBusy()">Save</button>
                <button type="button" class="link" (click)="editingId.set(null)">Cancel</button>
              </form>
            } @else {
              @if (annotation.text) {
                <span class="text">{{ annotation.text }}</span>
              }
              @if (annotation.kind === 'line') {
                <span>{{ lengthMm(annotation) | number: '1.1-1' }} mm</span>
              }
            }
            <span class="em-muted">· {{ annotation.author.displayName }}</span>
            <span class="actions">
              <button
                type="button"
                class="link"
                [attr.aria-label]="
                  'Show the ' + kindLabels[annotation.kind].toLowerCase() + ' in the views'
                "
                (click)="goTo(annotation)"
              >
                Show
              </button>
              @if (annotation.canEdit && editingId() !== annotation.id) {
                <button type="button" class="link" (click)="editingId.set(annotation.id)">
                  {{ annotation.text ? 'Edit text' : 'Add text' }}
                </button>
                <button
                  type="button"
                  class="link"
                  [disabled]="isBusy()"
                  (click)="remove(annotation)"
                >
                  Delete
                </button>
              }
            </span>
          </li>
        }
      </ul>
    }
  `,
  styles: `
    :host {
      display: block;
      min-width: 0;
      font: var(--mat-sys-body-medium);
    }

    :host(.compact) {
      flex: none;
      /* Under the views: a few lines at most, so that the views keep their height. */
      max-height: 84px;
      overflow-y: auto;

      .list {
        flex-direction: row;
        flex-wrap: wrap;
        gap: 2px 20px;
      }
    }

    .head {
      display: flex;
      flex-wrap: wrap;
      align-items: baseline;
      gap: 4px 12px;
    }

    h3 {
      margin: 0;
      font: var(--mat-sys-title-small);
    }

    :host(.compact) h3 {
      font: var(--mat-sys-label-large);
    }

    .problem {
      margin: 4px 0;
    }

    .list {
      display: flex;
      flex-direction: column;
      gap: 6px;
      margin: 6px 0 0;
      padding: 0;
      list-style: none;

      li {
        display: flex;
        flex-wrap: wrap;
        align-items: baseline;
        gap: 2px 6px;
        min-width: 0;
      }
    }

    .kind {
      font: var(--mat-sys-label-medium);
      color: var(--mat-sys-on-surface-variant);
    }

    .text {
      overflow-wrap: anywhere;
    }

    .actions {
      display: inline-flex;
      gap: 4px;
    }

    .edit {
      display: inline-flex;
      flex-wrap: wrap;
      align-items: center;
      gap: 4px;

      input {
        min-width: 180px;
        padding: 2px 6px;
        border: 1px solid var(--mat-sys-outline);
        border-radius: 4px;
        font: var(--mat-sys-body-medium);
        background: var(--mat-sys-surface);
        color: var(--mat-sys-on-surface);

        &:focus-visible {
          outline: 2px solid var(--mat-sys-primary);
          outline-offset: -1px;
        }
      }
    }

    .link {
      padding: 0 2px;
      border: none;
      background: none;
      color: var(--mat-sys-primary);
      font: var(--mat-sys-label-medium);
      text-decoration: underline;
      cursor: pointer;

      &:disabled {
        color: var(--mat-sys-on-surface-variant);
        cursor: default;
      }

      &:focus-visible {
        outline: 2px solid var(--mat-sys-primary);
      }
    }
  `,
  host: { '[class.compact]': 'compact()' },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AnnotationList {
  protected readonly layer = inject(AnnotationLayer);
  private readonly session = inject(ViewerSession);
  private readonly dialog = inject(MatDialog);
  private readonly editText = viewChild<ElementRef<HTMLInputElement>>('editText');

  /** Under the views (no side column): one wrapping block of a few lines. */
  readonly compact = input(false);

  protected readonly kindLabels = kindLabels;
  protected readonly annotations = this.layer.annotations;
  protected readonly countText = computed(() => {
    if (this.layer.isLoading() && !this.annotations().length) return 'reading…';
    const count = this.annotations().length;
    return count ? `${count}` : 'none yet';
  });
  protected readonly editingId = signal<string | null>(null);
  protected readonly isBusy = signal(false);

  constructor() {
    // The text field takes the keys as soon as it opens.
    effect(() => this.editText()?.nativeElement.focus());
  }

  protected toggleShown(): void {
    this.layer.isShown.update((shown) => !shown);
  }

  protected lengthMm(annotation: AnnotationView): number {
    const [a, b] = annotation.points;
    return a && b ? vector3.distance(a, b) : 0;
  }

  /** Brings the annotation's (first) point under the crosshair: every slice view shows it. */
  protected goTo(annotation: AnnotationView): void {
    const first = annotation.points[0];
    if (first) this.session.cursorLps.set([first[0], first[1], first[2]]);
  }

  protected async saveText(event: Event, annotation: AnnotationView): Promise<void> {
    event.preventDefault();
    this.isBusy.set(true);
    const isSaved = await this.layer.retext(annotation, this.editText()?.nativeElement.value ?? '');
    this.isBusy.set(false);
    if (isSaved) this.editingId.set(null);
  }

  protected async remove(annotation: AnnotationView): Promise<void> {
    const what = kindLabels[annotation.kind].toLowerCase();
    const data: ConfirmDialogData = {
      title: `Delete this ${what}?`,
      message: annotation.text
        ? `“${annotation.text}” goes for everyone who sees this case.`
        : `The ${what} goes for everyone who sees this case.`,
      confirmLabel: 'Delete',
    };
    const confirmed: unknown = await firstValueFrom(
      this.dialog.open(ConfirmDialog, { data }).afterClosed(),
    );
    if (confirmed !== true) return;
    this.isBusy.set(true);
    await this.layer.remove(annotation);
    this.isBusy.set(false);
  }
}
