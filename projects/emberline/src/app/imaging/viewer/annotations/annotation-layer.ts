import { Injectable, computed, effect, inject, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import {
  updateAnnotationSchema,
  type AnnotationKind,
  type AnnotationView,
  type Vec3,
} from '@emberline/shared';
import { EMPTY, Subject, catchError, firstValueFrom, switchMap } from 'rxjs';
import { problemMessage } from '../../../core/problem';
import { ViewerSession } from '../viewer-session';
import { AnnotationApi } from './annotation-api';
import {
  annotationRequest,
  isPlaced,
  newAnnotationDraft,
  placeAnnotationPoint,
  requestProblems,
  type AnnotationDraft,
} from './annotation-draft';
import type { DrawableAnnotation } from './annotation-geometry';

/** The id the draft being placed is drawn under (never a server id, which is a UUID). */
export const draftAnnotationId = 'draft';

/**
 * The annotations of the series on screen (provided by the viewer page beside `ViewerSession`):
 * reads them (GET /api/cases/:id/annotations), again whenever told (the meeting room when its
 * socket hears of a change; the viewer itself after its own changes), holds the annotate mode's
 * draft, and creates, retexts and deletes them. Refusals are kept in words for the strip under
 * the views.
 */
@Injectable()
export class AnnotationLayer {
  private readonly api = inject(AnnotationApi);
  private readonly session = inject(ViewerSession);
  private readonly requests = new Subject<{ caseId: string; seriesId: string }>();
  private shown: { caseId: string; seriesId: string } | null = null;

  /** The case's annotations as last read; only those of the shown series are used. */
  private readonly all = signal<readonly AnnotationView[]>([]);
  private readonly seriesId = signal<string | null>(null);
  readonly annotations = computed(() =>
    this.all().filter((annotation) => annotation.seriesId === this.seriesId()),
  );
  readonly isLoading = signal(false);
  readonly loadProblem = signal('');
  /** Whether the annotations are drawn on the views (the list stays). */
  readonly isShown = signal(true);

  /** Whether the user may annotate here (the host's say: the room, or the case file). */
  readonly canAnnotate = signal(false);
  readonly draft = signal<AnnotationDraft>(newAnnotationDraft('point'));
  /** A refusal of the draft or its saving, shown beside the annotate controls. */
  readonly problem = signal('');
  /** A refusal of a change to a saved annotation (text, deletion), shown with the list. */
  readonly listProblem = signal('');
  readonly isSaving = signal(false);

  /** What the views draw: the saved annotations and the draft's points placed so far. */
  readonly drawn = computed<DrawableAnnotation[]>(() => {
    const saved = this.isShown() ? this.annotations() : [];
    const draft = this.draft();
    const isPlacing = this.session.mode() === 'annotate' && draft.pointsLps.length > 0;
    return isPlacing
      ? [...saved, { id: draftAnnotationId, kind: draft.kind, points: draft.pointsLps, text: null }]
      : [...saved];
  });

  constructor() {
    this.requests
      .pipe(
        switchMap(({ caseId }) => {
          this.isLoading.set(true);
          return this.api.list(caseId).pipe(
            catchError((error: unknown) => {
              this.loadProblem.set(`The annotations could not be read. ${problemMessage(error)}`);
              this.isLoading.set(false);
              return EMPTY;
            }),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe((annotations) => {
        this.all.set(annotations);
        this.loadProblem.set('');
        this.isLoading.set(false);
      });
    // Leaving the mode (or losing the right to annotate) drops a half-placed annotation.
    effect(() => {
      const isAnnotating = this.session.mode() === 'annotate' && this.canAnnotate();
      if (!isAnnotating) {
        untracked(() => {
          const kind = this.draft().kind;
          if (this.draft().pointsLps.length) this.draft.set(newAnnotationDraft(kind));
        });
      }
    });
  }

  /** Reads the case's annotations (for the series shown); again on every call. */
  load(caseId: string, seriesId: string): void {
    if (this.shown?.seriesId !== seriesId) this.draft.set(newAnnotationDraft(this.draft().kind));
    this.shown = { caseId, seriesId };
    this.seriesId.set(seriesId);
    this.requests.next(this.shown);
  }

  reload(): void {
    if (this.shown) this.requests.next(this.shown);
  }

  chooseKind(kind: AnnotationKind): void {
    this.problem.set('');
    this.draft.set(newAnnotationDraft(kind));
  }

  /**
   * A click on a slice view in annotate mode (LPS from the view's pick). A point or a line is
   * saved once placed; a note waits for its text.
   */
  place(pointLps: Vec3): void {
    if (!this.canAnnotate() || this.isSaving()) return;
    const placed = placeAnnotationPoint(this.draft(), pointLps);
    this.problem.set(placed.refusal ?? '');
    this.draft.set(placed.draft);
    if (isPlaced(placed.draft) && placed.draft.kind !== 'note') this.save();
  }

  /** Posts the placed draft (with the note's text); refusals stay on screen, the draft too. */
  save(text?: string): void {
    const draft = this.draft();
    const target = this.shown;
    if (!target || !isPlaced(draft) || this.isSaving()) return;
    const body = annotationRequest(draft, target.seriesId, text);
    const problems = requestProblems(body);
    if (problems.length) {
      this.problem.set(problems.join(' '));
      return;
    }
    this.isSaving.set(true);
    this.problem.set('');
    this.api.create(target.caseId, body).subscribe({
      next: (created) => {
        this.isSaving.set(false);
        this.all.update((held) => [...held.filter((entry) => entry.id !== created.id), created]);
        this.draft.set(newAnnotationDraft(draft.kind));
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.problem.set(`The annotation was not saved. ${problemMessage(error)}`);
      },
    });
  }

  cancelDraft(): void {
    this.problem.set('');
    this.draft.set(newAnnotationDraft(this.draft().kind));
  }

  /**
   * Changes the text of an annotation (the author's, or the chair's); answers whether it did.
   * A refusal because it changed or went meanwhile reads the list again.
   */
  async retext(annotation: AnnotationView, text: string): Promise<boolean> {
    const trimmed = text.trim();
    if (annotation.kind === 'note' && !trimmed) {
      this.listProblem.set('A note needs its text.');
      return false;
    }
    const changes = updateAnnotationSchema.safeParse({ text: trimmed });
    if (!changes.success) {
      this.listProblem.set(changes.error.issues.map((issue) => issue.message).join(' '));
      return false;
    }
    this.listProblem.set('');
    try {
      this.replace(await firstValueFrom(this.api.update(annotation.id, changes.data)));
      return true;
    } catch (error: unknown) {
      this.listProblem.set(`The text was not changed. ${problemMessage(error)}`);
      this.reload();
      return false;
    }
  }

  async remove(annotation: AnnotationView): Promise<void> {
    this.listProblem.set('');
    try {
      await firstValueFrom(this.api.delete(annotation.id));
      this.all.update((held) => held.filter((entry) => entry.id !== annotation.id));
    } catch (error: unknown) {
      this.listProblem.set(`The annotation was not deleted. ${problemMessage(error)}`);
      this.reload();
    }
  }

  private replace(updated: AnnotationView): void {
    this.all.update((held) => held.map((entry) => (entry.id === updated.id ? updated : entry)));
  }
}
