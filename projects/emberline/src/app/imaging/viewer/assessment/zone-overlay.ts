import { Injectable, computed, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import {
  zoneModels,
  type AssessmentDisplay,
  type AssessmentView,
  type DisplayMargins,
  type DisplayZone,
  type PlanView,
  type ZoneModel,
} from '@emberline/shared';
import { EMPTY, Subject, catchError, map, of, switchMap, tap, type Observable } from 'rxjs';
import { problemMessage } from '../../../core/problem';
import { AssessmentApi } from '../../../plans/assessment-api';
import { ViewerSession } from '../viewer-session';
import { marginScaleFor, type MarginScale } from './margin-colours';
import { ZoneDisplayApi } from './zone-display-api';

export type ZoneOverlayPhase = 'idle' | 'loading' | 'unassessed' | 'ready' | 'failed';

/** Where the margin target shown comes from. */
export type MarginTargetSource = 'verdict' | 'default-profile';

/** One tumour's margin figures, as the engine measured them against one zone model. */
export interface TumourMarginRow {
  structureId: string;
  name: string;
  /** mm; negative when part of the tumour lies outside the zone. */
  minimalMarginMm: number;
  /** Percent of the tumour surface under the target. */
  surfaceBelowTargetPercent: number;
  coveredPercent: number;
}

/**
 * The assessed ablation zones and local margins of the plan on screen (provided by the viewer
 * page beside `ViewerSession`): reads the plan's newest done assessment and its display body
 * (once per assessment), and holds which zones show and which zone model the margin colouring
 * is measured against. Display only: the figures are the engine's, from the assessment.
 */
@Injectable()
export class ZoneOverlay {
  private readonly assessmentApi = inject(AssessmentApi);
  private readonly api = inject(ZoneDisplayApi);
  private readonly session = inject(ViewerSession);
  private readonly requests = new Subject<PlanView | null>();
  /** Display bodies already read, by assessment id: a plan opened again costs no request. */
  private readonly displays = new Map<string, AssessmentDisplay>();

  readonly plan = signal<PlanView | null>(null);
  readonly phase = signal<ZoneOverlayPhase>('idle');
  readonly problem = signal('');
  /** The newest done assessment of the plan: what is drawn. */
  readonly assessment = signal<AssessmentView | null>(null);
  /** The plan's newest assessment when it is not the one drawn (queued, running or failed). */
  readonly newer = signal<AssessmentView | null>(null);
  readonly display = signal<AssessmentDisplay | null>(null);
  private readonly profileTargetMm = signal<number | null>(null);
  readonly targetProblem = signal('');

  readonly shownZones = signal<ReadonlySet<ZoneModel>>(new Set());
  readonly isMarginShown = signal(true);
  readonly marginModel = signal<ZoneModel>('table');

  readonly primaryModel = computed(() => this.assessment()?.result?.primaryZoneModel ?? null);
  /** The zones of the display, in the order of `zoneModels` (table first). */
  readonly zones = computed<DisplayZone[]>(() => {
    const zones = this.display()?.zones ?? [];
    return zoneModels.flatMap((model) => zones.filter((zone) => zone.model === model));
  });
  readonly visibleZones = computed(() => {
    const shown = this.shownZones();
    return this.zones().filter((zone) => shown.has(zone.model));
  });
  /** Zone models with margins in the display. */
  readonly marginModels = computed<ZoneModel[]>(() => {
    const margins = this.display()?.margins ?? [];
    return zoneModels.filter((model) => margins.some((entry) => entry.model === model));
  });

  /** The margin target: the verdict's own threshold when it names one, else the default profile's. */
  readonly target = computed<{ mm: number; source: MarginTargetSource } | null>(() => {
    const reason = this.assessment()?.result?.verdict.reasons.find(
      (candidate) => candidate.rule === 'margin-target',
    );
    if (reason) return { mm: reason.threshold, source: 'verdict' };
    const profileTarget = this.profileTargetMm();
    return profileTarget === null ? null : { mm: profileTarget, source: 'default-profile' };
  });
  readonly scale = computed<MarginScale | null>(() => {
    const target = this.target();
    return target ? marginScaleFor(target.mm) : null;
  });
  /** The margin samples to colour the tumours with: none when the colouring is off. */
  readonly shownMargins = computed<DisplayMargins[]>(() => {
    if (!this.isMarginShown() || !this.scale()) return [];
    const model = this.marginModel();
    return (this.display()?.margins ?? []).filter((entry) => entry.model === model);
  });
  readonly tumourRows = computed<TumourMarginRow[]>(() => {
    const model = this.marginModel();
    const zone = this.assessment()?.result?.zones.find((candidate) => candidate.model === model);
    const structures = this.session.structures();
    return (zone?.tumours ?? []).map((tumour, index) => ({
      structureId: tumour.structureId,
      name:
        structures.find((structure) => structure.id === tumour.structureId)?.name ??
        `Tumour ${index + 1}`,
      minimalMarginMm: tumour.minimalMarginMm,
      surfaceBelowTargetPercent: tumour.surfaceBelowTargetPercent,
      coveredPercent: tumour.coveredPercent,
    }));
  });
  /** Zone volumes by model, mL, from the assessment's figures. */
  readonly zoneVolumesMl = computed(() => {
    const volumes = new Map<ZoneModel, number>();
    for (const zone of this.assessment()?.result?.zones ?? [])
      volumes.set(zone.model, zone.volumeMl);
    return volumes;
  });

  constructor() {
    this.requests
      .pipe(
        switchMap((plan) => (plan ? this.read(plan) : EMPTY)),
        takeUntilDestroyed(),
      )
      .subscribe();
  }

  /** Shows the zones of a plan (or none). Opening the plan shown already reads it afresh. */
  open(plan: PlanView | null): void {
    this.plan.set(plan);
    this.assessment.set(null);
    this.newer.set(null);
    this.display.set(null);
    this.problem.set('');
    this.phase.set(plan ? 'loading' : 'idle');
    this.requests.next(plan);
  }

  reload(): void {
    this.open(this.plan());
  }

  setZoneShown(model: ZoneModel, isShown: boolean): void {
    this.shownZones.update((shown) => {
      const next = new Set(shown);
      if (isShown) next.add(model);
      else next.delete(model);
      return next;
    });
  }

  private read(plan: PlanView): Observable<unknown> {
    return this.assessmentApi.listForPlan(plan.id).pipe(
      switchMap((list) => {
        const drawn = list.find((view) => view.status === 'done' && view.result) ?? null;
        const newest = list[0] ?? null;
        this.newer.set(newest && newest.id !== drawn?.id ? newest : null);
        if (!drawn) {
          this.phase.set('unassessed');
          return EMPTY;
        }
        this.assessment.set(drawn);
        const known = this.displays.get(drawn.id);
        const display$ = known ? of(known) : this.api.display(drawn.id);
        return display$.pipe(
          tap((display) => {
            this.displays.set(drawn.id, display);
            this.showFirst(drawn, display);
          }),
          switchMap(() => this.readTargetIfNeeded(drawn)),
        );
      }),
      catchError((error: unknown) => {
        this.problem.set(problemMessage(error));
        this.phase.set('failed');
        return EMPTY;
      }),
    );
  }

  /** The primary model's zone and margins show first: the one the verdict's coverage uses. */
  private showFirst(assessment: AssessmentView, display: AssessmentDisplay): void {
    const primary = assessment.result?.primaryZoneModel ?? 'table';
    const models = display.zones.map((zone) => zone.model);
    const first = models.includes(primary) ? primary : models[0];
    this.shownZones.set(new Set(first ? [first] : []));
    const marginModels = display.margins.map((entry) => entry.model);
    this.marginModel.set(marginModels.includes(primary) ? primary : (marginModels[0] ?? primary));
    this.display.set(display);
    this.phase.set('ready');
  }

  private readTargetIfNeeded(assessment: AssessmentView): Observable<unknown> {
    const named = assessment.result?.verdict.reasons.some(
      (reason) => reason.rule === 'margin-target',
    );
    if (named || this.profileTargetMm() !== null) return EMPTY;
    this.targetProblem.set('');
    return this.api.defaultSafetyProfile().pipe(
      map((profile) => this.profileTargetMm.set(profile.marginTargetMm)),
      catchError((error: unknown) => {
        this.targetProblem.set(problemMessage(error));
        return EMPTY;
      }),
    );
  }
}
