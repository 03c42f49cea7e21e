import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  viewChild,
  type ElementRef,
} from '@angular/core';
import { MatButtonToggle, MatButtonToggleGroup } from '@angular/material/button-toggle';
import { ViewerSession } from '../viewer-session';
import { isPlaced, nextStep } from './annotation-draft';
import { AnnotationLayer } from './annotation-layer';

/**
 * The annotate mode's controls, in the viewer's title row (where the width is free, so that the
 * views keep their height): what a click places (point, line, note), the next step in words, a
 * note's text field once its point is placed, and a refusal in words. Empty in any other mode.
 */
@Component({
  selector: 'em-annotation-controls',
  imports: [MatButtonToggleGroup, MatButtonToggle],
  template: `
    @if (isAnnotating()) {
      <div class="controls" role="group" aria-label="Annotate">
        <mat-button-toggle-group
          aria-label="What a click on a slice view places"
          [value]="draft().kind"
          (change)="layer.chooseKind($event.value)"
        >
          <mat-button-toggle value="point">Point</mat-button-toggle>
          <mat-button-toggle value="line">Line</mat-button-toggle>
          <mat-button-toggle value="note">Note</mat-button-toggle>
        </mat-button-toggle-group>
        @if (needsText()) {
          <form class="note" (submit)="saveNote($event)">
            <input
              #noteText
              name="note"
              maxlength="1000"
              autocomplete="off"
              aria-label="Text of the note"
              placeholder="Text of the note"
              (keydown.escape)="layer.cancelDraft()"
            />
            <button type="submit" class="action" [disabled]="layer.isSaving()">Save note</button>
            <button type="button" class="link" (click)="layer.cancelDraft()">Cancel</button>
          </form>
        } @else {
          <span class="step" aria-live="polite">{{ step() }}</span>
          @if (draft().pointsLps.length && !layer.isSaving()) {
            <button type="button" class="link" (click)="layer.cancelDraft()">Start again</button>
          }
        }
        @if (layer.problem()) {
          <span class="em-error-text problem" role="alert">{{ layer.problem() }}</span>
        }
      </div>
    }
  `,
  styles: `
    :host {
      display: block;
      min-width: 0;
      --mat-button-toggle-height: 28px;
      --mat-button-toggle-label-text-size: 13px;
    }

    .controls {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      gap: 4px 12px;
      min-height: 28px;
      font: var(--mat-sys-body-medium);
    }

    .note {
      display: inline-flex;
      align-items: center;
      gap: 8px;

      input {
        width: min(360px, 32cqi);
        height: 28px;
        box-sizing: border-box;
        padding: 2px 8px;
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

    .action {
      height: 28px;
      padding: 0 12px;
      border: none;
      border-radius: 14px;
      background: var(--mat-sys-primary);
      color: var(--mat-sys-on-primary);
      font: var(--mat-sys-label-large);
      cursor: pointer;

      &:disabled {
        opacity: 0.5;
        cursor: default;
      }

      &:focus-visible {
        outline: 2px solid var(--mat-sys-primary);
        outline-offset: 2px;
      }
    }

    .link {
      padding: 0 2px;
      border: none;
      background: none;
      color: var(--mat-sys-primary);
      font: var(--mat-sys-label-large);
      text-decoration: underline;
      cursor: pointer;

      &:focus-visible {
        outline: 2px solid var(--mat-sys-primary);
      }
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AnnotationControls {
  protected readonly layer = inject(AnnotationLayer);
  private readonly session = inject(ViewerSession);
  private readonly noteText = viewChild<ElementRef<HTMLInputElement>>('noteText');

  protected readonly draft = this.layer.draft;
  protected readonly isAnnotating = computed(
    () => this.session.mode() === 'annotate' && this.layer.canAnnotate(),
  );
  protected readonly needsText = computed(
    () => this.draft().kind === 'note' && isPlaced(this.draft()),
  );
  protected readonly step = computed(() => nextStep(this.draft()));

  constructor() {
    // The note's field takes the keys as soon as its point is placed.
    effect(() => this.noteText()?.nativeElement.focus());
  }

  protected saveNote(event: Event): void {
    event.preventDefault();
    this.layer.save(this.noteText()?.nativeElement.value ?? '');
  }
}
