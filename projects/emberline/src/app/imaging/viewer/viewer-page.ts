import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  input,
  output,
  signal,
  untracked,
} from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { Router, RouterLink } from '@angular/router';
import {
  planStatusLabels,
  type ApplicatorProfileView,
  type ImageSeriesView,
  type PlanView,
  type ViewState,
} from '@emberline/shared';
import { EMPTY, catchError, filter, forkJoin, switchMap, tap } from 'rxjs';
import { CaseFileState } from '../../cases/case-file-state';
import { AuthSession } from '../../core/auth-session';
import { problemMessage } from '../../core/problem';
import { PlanApi } from '../../plans/plan-api';
import { compressionNote } from '../compression-note';
import { AnnotationLayer } from './annotations/annotation-layer';
import { mayAnnotateCase } from './annotations/annotation-permissions';
import { AnnotationControls } from './annotations/annotation-controls';
import { AnnotationList } from './annotations/annotation-list';
import { ZoneOverlay } from './assessment/zone-overlay';
import { ZonePanel } from './assessment/zone-panel';
import { DraftingPanel } from './drafting/drafting-panel';
import { KeepViewButton } from './keep-view-button';
import { newDraft, settingsForProfile } from './drafting/drafting-state';
import { SliceView } from './slice-view';
import { StructureToggles } from './structure-toggles';
import { ViewerApi } from './viewer-api';
import { ViewerReadouts } from './viewer-readouts';
import { ViewerSession, type ViewerMode } from './viewer-session';

/** The part of a board session's shared view that a viewer shows (LPS mm, window, camera). */
export type SharedView = Pick<ViewState, 'slice' | 'window' | 'camera'>;
import { ViewerToolbar } from './viewer-toolbar';
import { VolumeView } from './volume-view';
import { hasWebGl2, noWebGl2Message } from './webgl-support';

/**
 * The case viewer of one series (README.md here): axial, coronal and sagittal slices and the 3D
 * view, the structures over them, the display window, the distance measurement, and the
 * drafting of needle plans with live clearance, the assessed zones and margins of the plan
 * shown, and the case's annotations on the series (shown in every view, made in annotate mode). Route `/cases/:id/imaging/:seriesId/viewer`,
 * `?plan=<id>` opens a plan.
 *
 * It fills the box its host gives it. Inside the case file it reads the case from
 * `CaseFileState`; elsewhere (the meeting room) the host passes `caseId`, `canEdit`,
 * `canAnnotate` and bumps `annotationsChanged` when it hears that annotations changed.
 */
@Component({
  selector: 'em-viewer-page',
  imports: [
    RouterLink,
    MatButton,
    MatIcon,
    MatProgressBar,
    ViewerToolbar,
    ViewerReadouts,
    SliceView,
    VolumeView,
    StructureToggles,
    DraftingPanel,
    ZonePanel,
    AnnotationControls,
    AnnotationList,
    KeepViewButton,
  ],
  providers: [ViewerSession, ZoneOverlay, AnnotationLayer],
  templateUrl: './viewer-page.html',
  styleUrl: './viewer-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ViewerPage {
  /** Present when the viewer is a section of the case file. */
  private readonly state = inject(CaseFileState, { optional: true });
  private readonly api = inject(ViewerApi);
  private readonly planApi = inject(PlanApi);
  private readonly router = inject(Router);
  protected readonly session = inject(ViewerSession);
  private readonly zones = inject(ZoneOverlay);
  private readonly annotations = inject(AnnotationLayer);
  private readonly auth = inject(AuthSession);

  /** Route parameter. */
  readonly seriesId = input.required<string>();
  /** Query parameter: the plan to open. */
  readonly plan = input<string | undefined>();
  /** The case, when embedded outside the case file (the case file's own otherwise). */
  readonly caseId = input<string | undefined>();
  /** Whether plans may be drafted, when embedded outside the case file. */
  readonly canEdit = input<boolean | undefined>();
  /**
   * Whether annotations may be made here. Outside the case file the host says (false unless
   * it does); in the case file a clinical member of the case's board may, until the decision.
   */
  readonly canAnnotate = input<boolean | undefined>();
  /**
   * Bumped by the host when the case's annotations changed elsewhere (the meeting room, on its
   * socket's `annotation:*` events): they are read again.
   */
  readonly annotationsChanged = input(0, {
    transform: (value: number | undefined) => value ?? 0,
  });
  /** Whether the side column (plans, structures) shows; a board session hides it. */
  readonly showSide = input(true, {
    // The case file's route binds inputs to its parameters and sets those it lacks to
    // undefined: only an explicit false hides the column.
    transform: (value: boolean | undefined) => value !== false,
  });
  /**
   * A view to follow (a board session's lead): slice positions, window and 3D camera are put
   * where it says whenever it changes.
   */
  readonly followed = input<SharedView | null>(null);
  /** The user moved the slices, the window or the camera (not when following put them there). */
  readonly moved = output<SharedView>();

  protected readonly hasWebGl = hasWebGl2();
  protected readonly noWebGlMessage = noWebGl2Message;
  protected readonly statusLabels = planStatusLabels;
  protected readonly isInCaseFile = this.state !== null;
  protected readonly caseIdShown = computed(() => this.caseId() ?? this.state?.caseId());
  protected readonly mayEdit = computed(
    () => this.canEdit() ?? this.state?.detail()?.permissions.canEdit ?? false,
  );
  protected readonly mayAnnotate = computed(() => {
    const given = this.canAnnotate();
    if (given !== undefined) return given;
    const detail = this.state?.detail();
    return detail ? mayAnnotateCase(detail, this.auth.user()) : false;
  });
  protected readonly annotationCount = computed(() => this.annotations.annotations().length);
  protected readonly series = signal<ImageSeriesView | null>(null);
  /** The lossy-compression note of the series on screen, or ''. */
  protected readonly lossyNote = computed(() => compressionNote(this.series()?.compression));
  protected readonly loadError = signal('');
  protected readonly isLoaded = signal(false);

  protected readonly plans = this.planApi.list(this.caseIdShown);
  protected readonly seriesPlans = computed<PlanView[]>(() =>
    (this.plans.hasValue() ? this.plans.value() : []).filter(
      (plan) => plan.seriesId === this.seriesId(),
    ),
  );
  private readonly profileResource = this.planApi.profiles();
  protected readonly profiles = computed<ApplicatorProfileView[]>(() =>
    this.profileResource.hasValue() ? this.profileResource.value().filter((p) => !p.isRetired) : [],
  );
  /** The saved plan on screen. */
  protected readonly shownPlan = signal<PlanView | null>(null);
  protected readonly planNotice = signal('');
  private openedPlanId: string | null = null;
  /** The last view put on screen from `followed`, so that it is not reported back as a move. */
  private lastFollowedKey = '';

  constructor() {
    effect(() => {
      const view = this.followed();
      if (!view || !this.isLoaded()) return;
      untracked(() => this.follow(view));
    });
    effect(() => {
      const shown = this.shownView();
      if (!this.isLoaded()) return;
      untracked(() => {
        if (!shown || JSON.stringify(shown) === this.lastFollowedKey) return;
        this.moved.emit(shown);
      });
    });
    if (this.hasWebGl) this.loadSeries();
    effect(() => this.openRequestedPlan());
    // The annotations of the series on screen, read again whenever the host says they changed.
    effect(() => {
      this.annotationsChanged();
      const caseId = this.caseIdShown();
      const seriesId = this.seriesId();
      if (!caseId || !this.isLoaded()) return;
      untracked(() => this.annotations.load(caseId, seriesId));
    });
    effect(() => {
      const may = this.mayAnnotate();
      untracked(() => {
        this.annotations.canAnnotate.set(may);
        if (!may && this.session.mode() === 'annotate') this.session.mode.set('navigate');
      });
    });
    // The zones of the plan on screen are read once it shows (and again after a save).
    effect(() => {
      const plan = this.shownPlan();
      untracked(() => this.zones.open(plan));
    });
  }

  private loadSeries(): void {
    toObservable(this.seriesId)
      .pipe(
        filter((id) => !!id),
        tap(() => {
          this.isLoaded.set(false);
          this.loadError.set('');
        }),
        switchMap((id) =>
          forkJoin({
            series: this.api.series(id),
            volume: this.api.volume(id),
            labelMap: this.api.labelMap(id),
            structures: this.api.structures(id),
          }).pipe(
            catchError((error: unknown) => {
              this.loadError.set(problemMessage(error));
              return EMPTY;
            }),
          ),
        ),
        takeUntilDestroyed(),
      )
      .subscribe(({ series, volume, labelMap, structures }) => {
        this.series.set(series);
        this.session.structures.set(structures);
        this.session.load(volume, labelMap, series.window);
        this.isLoaded.set(true);
      });
  }

  /** Opens `?plan=` once the series and the plans are there; never the same plan twice. */
  private openRequestedPlan(): void {
    const planId = this.plan();
    const isLoaded = this.isLoaded();
    const plans = this.plans.hasValue() ? this.plans.value() : null;
    const canEdit = this.mayEdit();
    if (!planId || !isLoaded || !plans || planId === this.openedPlanId) return;
    untracked(() => {
      this.openedPlanId = planId;
      const plan = plans.find((candidate) => candidate.id === planId);
      if (!plan) {
        this.planNotice.set('The plan asked for is not one of this case.');
      } else if (plan.seriesId !== this.seriesId()) {
        this.planNotice.set(`The plan ${plan.name} was drafted on another series of the case.`);
      } else {
        this.planNotice.set('');
        this.shownPlan.set(plan);
        this.session.openPlan(plan, canEdit);
      }
    });
  }

  /** What this viewer shows now, in the shared view's terms. */
  private readonly shownView = computed<SharedView | null>(() => {
    const cursor = this.session.cursorLps();
    const window = this.session.window();
    const camera = this.session.camera();
    if (!cursor) return null;
    return {
      slice: { axial: cursor[2], coronal: cursor[1], sagittal: cursor[0] },
      window: { width: window.width, level: window.centre },
      camera: camera?.pose ?? null,
    };
  });

  private follow(view: SharedView): void {
    if (view.slice) {
      this.session.cursorLps.set([view.slice.sagittal, view.slice.coronal, view.slice.axial]);
    }
    if (view.window)
      this.session.window.set({ centre: view.window.level, width: view.window.width });
    if (view.camera) this.session.camera.set({ pose: view.camera, isFollowed: true });
    const current = this.shownView();
    this.lastFollowedKey = current ? JSON.stringify(current) : '';
  }

  protected modeRequested(mode: ViewerMode): void {
    if (mode === 'draft' && !this.session.draft()) {
      this.startNewPlan();
      return;
    }
    this.session.mode.set(mode);
  }

  protected startNewPlan(): void {
    if (!this.mayEdit()) return;
    const first = this.profiles()[0];
    this.shownPlan.set(null);
    this.openedPlanId = null;
    void this.router.navigate([], { queryParams: { plan: null }, queryParamsHandling: 'merge' });
    this.session.startDrafting(newDraft(first ? settingsForProfile(first) : undefined), true);
  }

  protected saved(plan: PlanView): void {
    this.shownPlan.set(plan);
    this.openedPlanId = plan.id;
    this.plans.reload();
    void this.router.navigate([], {
      queryParams: { plan: plan.id },
      queryParamsHandling: 'merge',
      replaceUrl: true,
    });
  }

  protected closed(): void {
    this.session.stopDrafting();
    this.shownPlan.set(null);
    this.openedPlanId = null;
    void this.router.navigate([], { queryParams: { plan: null }, queryParamsHandling: 'merge' });
  }
}
