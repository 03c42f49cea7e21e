import { DestroyRef, Injectable, computed, effect, inject, signal, untracked } from '@angular/core';
import {
  lpsToVoxel,
  structureKindLabels,
  vector3,
  voxelToLps,
  type PlanView,
  type StructureKind,
  type KeyImagePane,
  type StructureView,
  type Vec3,
} from '@emberline/shared';
import { structureKindColours, unmappedStructureColour } from '../structure-kind-colours';
import type { DisplayWindow } from './display-window';
import type { CameraPose } from './surface-scene';
import {
  fieldPaddingMm,
  labelValuesByKind,
  pathFigures,
  type PathFigures,
} from './drafting/clearance-fields';
import * as drafting from './drafting/drafting-state';
import { LiveClearance } from './drafting/live-clearance';
import type { PaneCapture } from './pane-capture';
import { sliceAxesOf, type SliceViewName } from './slice-axes';
import { stepSlices } from './slice-viewport';
import type { LabelAppearance, PathShape, ViewerLabelMap, ViewerVolume } from './viewer-data';

/**
 * What a click on a slice view does: move the crosshair, measure a distance, place a plan's
 * target and entry, or place an annotation (`annotations/annotation-layer.ts` takes those
 * clicks).
 */
export type ViewerMode = 'navigate' | 'measure' | 'draft' | 'annotate';

/** Where the pointer is over a slice view: LPS, the nearest voxel and its value. */
export interface HoverReading {
  view: SliceViewName;
  pointLps: Vec3;
  voxel: Vec3;
  value: number | null;
}

export interface Measurement {
  view: SliceViewName;
  /** One or two points, LPS millimetres, on the view's plane. */
  pointsLps: Vec3[];
}

/** Performance marks the benchmark and the end-to-end test read. */
export const viewerOpenedMark = 'emberline:viewer-opened';
export const viewerFirstFrameMark = 'emberline:viewer-first-frame';
export const clearanceFieldsMeasure = 'emberline:clearance-fields';

/**
 * Everything the views of one viewer share (provided by the viewer page): the loaded series,
 * the crosshair, the display window, the structures' appearance, the mode, the distance
 * measurement and the plan being drafted with its live figures.
 */
@Injectable()
export class ViewerSession {
  readonly volume = signal<ViewerVolume | null>(null);
  readonly labelMap = signal<ViewerLabelMap | null>(null);
  readonly structures = signal<readonly StructureView[]>([]);
  readonly axes = computed(() => {
    const volume = this.volume();
    return volume ? sliceAxesOf(volume.geometry) : null;
  });

  readonly cursorLps = signal<Vec3 | null>(null);
  readonly cursorVoxel = computed(() => {
    const volume = this.volume();
    const cursor = this.cursorLps();
    return volume && cursor ? lpsToVoxel(volume.geometry, cursor) : null;
  });
  readonly cursorValue = computed(() => {
    const cursor = this.cursorLps();
    return cursor ? this.valueAt(cursor) : null;
  });
  readonly window = signal<DisplayWindow>({ centre: 50, width: 400 });
  /**
   * The 3D camera as last moved: by this user (`isFollowed` false), or put there from a board
   * session's lead (`isFollowed` true, which the 3D view applies).
   */
  readonly camera = signal<{ pose: CameraPose; isFollowed: boolean } | null>(null);
  readonly mode = signal<ViewerMode>('navigate');
  readonly hover = signal<HoverReading | null>(null);

  readonly hiddenLabels = signal<ReadonlySet<number>>(new Set());
  readonly opacity = signal(0.45);
  readonly appearance = computed<LabelAppearance>(() => {
    const colours = new Map<number, string>();
    const kinds = new Map<number, StructureKind | null>();
    for (const structure of this.structures()) {
      colours.set(
        structure.labelValue,
        structure.kind ? structureKindColours[structure.kind] : unmappedStructureColour,
      );
      kinds.set(structure.labelValue, structure.kind);
    }
    const hidden = this.hiddenLabels();
    const visible = new Set(
      (this.labelMap()?.labelValues ?? []).filter((value) => !hidden.has(value)),
    );
    return { colours, visible, opacity: this.opacity(), kinds };
  });

  readonly measurement = signal<Measurement | null>(null);
  readonly measurementMm = computed(() => {
    const points = this.measurement()?.pointsLps;
    return points?.length === 2 ? vector3.distance(points[0], points[1]) : null;
  });

  readonly draft = signal<drafting.DraftingState | null>(null);
  readonly isDraftEditable = signal(false);
  readonly paths = computed<PathShape[]>(() => {
    const draft = this.draft();
    if (!draft) return [];
    return draft.applicators.flatMap((applicator, index) =>
      applicator.entryLps && applicator.targetLps
        ? [
            {
              applicator: index,
              entryLps: applicator.entryLps,
              targetLps: applicator.targetLps,
              isSelected: index === draft.selected,
            },
          ]
        : [],
    );
  });
  /** Length, angle and clearances of the selected applicator's path, when placed. */
  readonly figures = signal<PathFigures | null>(null);
  readonly fieldKinds = computed(() =>
    labelValuesByKind(this.structures()).map((entry) => entry.kind),
  );
  readonly readyKinds = signal<ReadonlySet<StructureKind>>(new Set());
  readonly fieldsTotalMs = signal<number | null>(null);
  readonly clearanceProblem = signal('');
  readonly fieldPaddingMm = fieldPaddingMm;

  readonly hasFirstFrame = signal(false);
  private readonly renderedViews = new Set<string>();

  /** The pane last pressed or focused: the one "Keep this view" takes. */
  readonly activePane = signal<KeyImagePane>('axial');
  private readonly captures = new Map<KeyImagePane, () => Promise<PaneCapture>>();
  private clearance: LiveClearance | null = null;

  constructor() {
    performance.mark(viewerOpenedMark);
    inject(DestroyRef).onDestroy(() => this.clearance?.dispose());
    effect(() => this.measureSelected());
  }

  /** The loaded series: the crosshair starts at the grid's centre voxel. */
  load(volume: ViewerVolume, labelMap: ViewerLabelMap | null, window: DisplayWindow): void {
    this.volume.set(volume);
    this.labelMap.set(labelMap);
    this.window.set(window);
    const centre = volume.geometry.dimensions.map((extent) => Math.floor(extent / 2)) as Vec3;
    this.cursorLps.set(voxelToLps(volume.geometry, centre));
  }

  /** The voxel value nearest a point, or null off the grid. */
  valueAt(pointLps: Readonly<Vec3>): number | null {
    const volume = this.volume();
    if (!volume) return null;
    const [nx, ny, nz] = volume.geometry.dimensions;
    const [i, j, k] = lpsToVoxel(volume.geometry, pointLps).map(Math.round);
    if (i < 0 || j < 0 || k < 0 || i >= nx || j >= ny || k >= nz) return null;
    return volume.voxels[i + nx * (j + ny * k)];
  }

  setHover(view: SliceViewName, pointLps: Vec3 | null): void {
    const volume = this.volume();
    if (!volume || !pointLps) {
      this.hover.set(null);
      return;
    }
    const voxel = lpsToVoxel(volume.geometry, pointLps);
    this.hover.set({ view, pointLps, voxel, value: this.valueAt(pointLps) });
  }

  setCursor(pointLps: Vec3): void {
    this.cursorLps.set(pointLps);
  }

  /** Moves the crosshair by whole slices of a view (wheel, Page Up / Page Down). */
  stepSlices(view: SliceViewName, steps: number): void {
    const volume = this.volume();
    const axes = this.axes();
    const cursor = this.cursorLps();
    if (!volume || !axes || !cursor) return;
    this.cursorLps.set(stepSlices(volume.geometry, axes[view].voxelAxis, cursor, steps));
  }

  /**
   * A click (or Enter) at a point of a view, by mode: navigation moves the crosshair; the
   * measurement takes its points; drafting places the target, then the entry, and moves the
   * crosshair there so that every view shows it.
   */
  act(view: SliceViewName, pointLps: Vec3): void {
    const mode = this.mode();
    // Annotating leaves the crosshair where it is: the annotation layer takes the click.
    if (mode === 'annotate') return;
    if (mode === 'measure') {
      const current = this.measurement();
      const isAdding = current && current.view === view && current.pointsLps.length === 1;
      this.measurement.set({
        view,
        pointsLps: isAdding ? [...current.pointsLps, pointLps] : [pointLps],
      });
      return;
    }
    const draft = this.draft();
    if (
      mode === 'draft' &&
      draft &&
      this.isDraftEditable() &&
      drafting.draftStep(draft) !== 'adjust'
    ) {
      this.draft.set(drafting.placePoint(draft, pointLps));
    }
    this.cursorLps.set(pointLps);
  }

  canDrag(): boolean {
    return this.mode() === 'draft' && this.isDraftEditable() && this.draft() !== null;
  }

  beginHandleDrag(handle: drafting.DraftHandle): void {
    const draft = this.draft();
    if (draft && this.canDrag()) this.draft.set(drafting.beginDrag(draft, handle));
  }

  dragHandle(pointLps: Vec3): void {
    const draft = this.draft();
    if (draft?.drag) this.draft.set(drafting.dragTo(draft, pointLps));
  }

  endHandleDrag(): void {
    const draft = this.draft();
    if (draft?.drag) this.draft.set(drafting.endDrag(draft));
  }

  /** Starts a new plan, or opens a saved one (editable only if a draft the user may change). */
  startDrafting(draft: drafting.DraftingState, isEditable: boolean): void {
    this.draft.set(draft);
    this.isDraftEditable.set(isEditable);
    if (isEditable) this.mode.set('draft');
    const target = draft.applicators[0]?.targetLps;
    if (target) this.cursorLps.set([...target]);
    this.ensureClearance();
  }

  openPlan(plan: PlanView, isEditable: boolean): void {
    // A plan whose assessment failed is a draft again (the server lets it be corrected).
    const isDraft = plan.status === 'draft' || plan.status === 'assessment-failed';
    this.startDrafting(drafting.draftOfPlan(plan), isEditable && isDraft);
  }

  updateDraft(change: (state: drafting.DraftingState) => drafting.DraftingState): void {
    const draft = this.draft();
    if (draft) this.draft.set(change(draft));
  }

  stopDrafting(): void {
    this.draft.set(null);
    this.figures.set(null);
    if (this.mode() === 'draft') this.mode.set('navigate');
  }

  /** Called by each view after its first frame; the mark is set once all three slices show. */
  reportRendered(view: string): void {
    if (this.hasFirstFrame()) return;
    this.renderedViews.add(view);
    if (['axial', 'coronal', 'sagittal'].every((name) => this.renderedViews.has(name))) {
      performance.mark(viewerFirstFrameMark);
      this.hasFirstFrame.set(true);
    }
  }

  /** Each pane says how to take its picture once its scene exists (and withdraws on destroy). */
  registerCapture(pane: KeyImagePane, capture: (() => Promise<PaneCapture>) | null): void {
    if (capture) this.captures.set(pane, capture);
    else this.captures.delete(pane);
  }

  /** A picture of the pane as it is on screen, with its overlays. */
  capture(pane: KeyImagePane): Promise<PaneCapture> {
    const capture = this.captures.get(pane);
    return capture ? capture() : Promise.reject(new Error('That view is not on screen.'));
  }

  kindLabel(kind: StructureKind): string {
    return structureKindLabels[kind];
  }

  /** The distance fields are computed once, when a plan is first drafted or shown. */
  private ensureClearance(): void {
    const labelMap = this.labelMap();
    const volume = this.volume();
    if (this.clearance || !labelMap || !volume) return;
    performance.mark('emberline:clearance-start');
    this.clearance = new LiveClearance((reply) => {
      if (reply.type === 'kind-ready') {
        this.readyKinds.update((kinds) => new Set([...kinds, reply.kind]));
      } else if (reply.type === 'fields-ready') {
        this.fieldsTotalMs.set(reply.totalMs);
        performance.measure(clearanceFieldsMeasure, 'emberline:clearance-start');
      } else if (reply.type === 'figures') {
        this.figures.set(reply.figures[0] ?? null);
      } else {
        this.clearanceProblem.set(`The live clearance stopped: ${reply.message}`);
      }
    });
    this.clearance.load({
      labels: labelMap.labels,
      geometry: volume.geometry,
      kinds: labelValuesByKind(this.structures()),
      paddingMm: fieldPaddingMm,
    });
  }

  private measureSelected(): void {
    const draft = this.draft();
    this.readyKinds();
    const applicator = draft ? drafting.selectedApplicator(draft) : null;
    untracked(() => {
      if (!applicator?.entryLps || !applicator.targetLps) {
        this.figures.set(null);
        return;
      }
      if (this.clearance) {
        this.clearance.measure([
          { entryLps: applicator.entryLps, targetLps: applicator.targetLps },
        ]);
      } else {
        // No label map: length and angle still hold.
        this.figures.set(pathFigures([], applicator.entryLps, applicator.targetLps));
      }
    });
  }
}
