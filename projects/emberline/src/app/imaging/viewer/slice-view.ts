import { DecimalPipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  ElementRef,
  afterNextRender,
  computed,
  effect,
  inject,
  input,
  signal,
  untracked,
  viewChild,
} from '@angular/core';
import { vector3, type Vec3 } from '@emberline/shared';
import { draftAnnotationId, AnnotationLayer } from './annotations/annotation-layer';
import { annotationsOnSlice } from './annotations/annotation-geometry';
import { annotationColour, annotationOutline } from './annotations/annotation-style';
import { svgPathOfLoops, zoneContourOnPlane } from './assessment/zone-contour';
import { ZoneOverlay } from './assessment/zone-overlay';
import { zoneStyles } from './assessment/zone-styles';
import { draggedWindow, type DisplayWindow } from './display-window';
import { directionLetters, sliceViewNames, type SliceViewName } from './slice-axes';
import { nearestWithin, pathOverlay, planeCutLine } from './slice-overlay';
import { capturePane } from './pane-capture';
import { SliceScene } from './slice-scene';
import {
  fittedViewport,
  lpsToScreen,
  pannedViewport,
  resizedViewport,
  screenToLps,
  sliceIndexAt,
  slicePlanePoint,
  zoomedViewport,
  type SliceViewport,
} from './slice-viewport';
import { ViewerSession } from './viewer-session';

const viewTitles: Record<SliceViewName, string> = {
  axial: 'Axial',
  coronal: 'Coronal',
  sagittal: 'Sagittal',
};

/** How far from a handle a press still takes hold of it, CSS pixels. */
const handleReachPx = 10;

type Gesture =
  | { kind: 'cursor' }
  | { kind: 'pan'; lastX: number; lastY: number }
  | { kind: 'window'; startX: number; startY: number; start: DisplayWindow }
  | { kind: 'handle'; depthPointLps: Vec3 };

/**
 * One slice view (axial, coronal or sagittal): the vtk.js picture of the slice under the
 * crosshair, and an SVG overlay of the assessed zones' outlines, the crosshair, the applicator
 * paths with their handles and the distance measurement. Wheel or Page Up/Down move through slices, Ctrl+wheel or +/−
 * zoom, Shift+drag or the middle button pan, right-drag sets the window, arrows move the
 * crosshair, Enter acts at it as a click would. The case's annotations near the slice show as
 * markers with their notes; in annotate mode a click places one.
 */
@Component({
  selector: 'em-slice-view',
  imports: [DecimalPipe],
  templateUrl: './slice-view.html',
  styleUrls: ['./viewer-pane.scss', './slice-view.scss'],
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SliceView {
  readonly view = input.required<SliceViewName>();

  private readonly session = inject(ViewerSession);
  private readonly zones = inject(ZoneOverlay);
  private readonly annotations = inject(AnnotationLayer, { optional: true });
  private readonly host = viewChild.required<ElementRef<HTMLElement>>('host');
  private scene: SliceScene | null = null;
  private resizeObserver: ResizeObserver | null = null;
  private frameRequest = 0;
  private hasRendered = false;
  private gesture: Gesture | null = null;

  private readonly isSceneReady = signal(false);
  protected readonly annotationColour = annotationColour;
  protected readonly annotationOutline = annotationOutline;
  protected readonly viewport = signal<SliceViewport | null>(null);
  protected readonly title = computed(() => viewTitles[this.view()]);
  protected readonly axes = computed(() => this.session.axes()?.[this.view()] ?? null);
  protected readonly sliceCount = computed(() => {
    const axes = this.axes();
    const volume = this.session.volume();
    return axes && volume ? volume.geometry.dimensions[axes.voxelAxis] : 0;
  });
  protected readonly sliceIndex = computed(() => {
    const axes = this.axes();
    const volume = this.session.volume();
    const cursor = this.session.cursorLps();
    return axes && volume && cursor ? sliceIndexAt(volume.geometry, axes.voxelAxis, cursor) : 0;
  });
  private readonly plane = computed(() => {
    const axes = this.axes();
    const volume = this.session.volume();
    if (!axes || !volume) return null;
    const geometry = volume.geometry;
    const step = vector3.scale(
      geometry.direction[axes.voxelAxis],
      geometry.spacingMm[axes.voxelAxis],
    );
    return {
      pointLps: slicePlanePoint(geometry, axes.voxelAxis, this.sliceIndex()),
      halfThicknessMm: Math.abs(vector3.dot(step, axes.normalLps)) / 2,
    };
  });
  protected readonly letters = computed(() => {
    const axes = this.axes();
    if (!axes) return null;
    return {
      left: directionLetters(vector3.scale(axes.rightLps, -1)),
      right: directionLetters(axes.rightLps),
      top: directionLetters(axes.upLps),
      bottom: directionLetters(vector3.scale(axes.upLps, -1)),
    };
  });
  protected readonly ariaLabel = computed(
    () =>
      `${this.title()} slice view, slice ${this.sliceIndex() + 1} of ${this.sliceCount()}. ` +
      'Page Up and Page Down change the slice, arrow keys move the crosshair, plus and minus ' +
      'zoom, Enter acts at the crosshair as a click does.',
  );

  /** The shown zones' outlines on this slice, LPS: recomputed when the slice changes. */
  private readonly zoneLoops = computed(() => {
    const axes = this.axes();
    const plane = this.plane();
    if (!axes || !plane) return [];
    return this.zones.visibleZones().map((zone) => ({
      model: zone.model,
      loops: zoneContourOnPlane(zone, plane.pointLps, axes.normalLps),
    }));
  });

  /** The annotations (and the one being placed) near this slice, on screen. */
  private readonly annotationShapes = computed(() => {
    const axes = this.axes();
    const viewport = this.viewport();
    const plane = this.plane();
    const drawn = this.annotations?.drawn() ?? [];
    if (!axes || !viewport || !plane || !drawn.length) return [];
    return annotationsOnSlice(drawn, axes, viewport, plane).map((shape) => ({
      ...shape,
      isDraft: shape.id === draftAnnotationId,
    }));
  });

  protected readonly overlay = computed(() => {
    const axes = this.axes();
    const allAxes = this.session.axes();
    const viewport = this.viewport();
    const plane = this.plane();
    const cursor = this.session.cursorLps();
    if (!axes || !allAxes || !viewport || !plane || !cursor) return null;
    const crosshair = sliceViewNames
      .filter((name) => name !== this.view())
      .map((name) => planeCutLine(axes, viewport, plane, allAxes[name].normalLps, cursor))
      .filter((line) => line !== null);
    const paths = this.session.paths().map((shape) => ({
      shape,
      drawn: pathOverlay(axes, viewport, plane, shape.entryLps, shape.targetLps),
    }));
    const zones = this.zoneLoops()
      .filter((zone) => zone.loops.length)
      .map((zone) => ({
        model: zone.model,
        colour: zoneStyles[zone.model].colour,
        dash: zoneStyles[zone.model].dash,
        d: svgPathOfLoops(
          zone.loops.map((loop) =>
            loop.map((point) => lpsToScreen(axes, viewport, plane.pointLps, point)),
          ),
        ),
      }));
    const measurement = this.session.measurement();
    const measured =
      measurement?.view === this.view()
        ? measurement.pointsLps.map((point) => lpsToScreen(axes, viewport, plane.pointLps, point))
        : [];
    return {
      zones,
      crosshair,
      paths,
      annotations: this.annotationShapes(),
      measured,
      measuredMm: measured.length === 2 ? this.session.measurementMm() : null,
      widthPx: viewport.widthPx,
      heightPx: viewport.heightPx,
    };
  });

  constructor() {
    afterNextRender(() => this.start());
    inject(DestroyRef).onDestroy(() => this.stop());
    effect(() => this.showSlice());
    effect(() => this.showWindow());
    effect(() => this.showLabels());
  }

  private start(): void {
    const volume = this.session.volume();
    const axes = this.axes();
    if (!volume || !axes) return;
    const host = this.host().nativeElement;
    this.scene = new SliceScene(host, volume, this.session.labelMap(), axes.voxelAxis);
    const canvas = host.querySelector('canvas');
    canvas?.setAttribute('role', 'img');
    canvas?.setAttribute('aria-label', `${this.title()} slice of the series`);
    this.resizeObserver = new ResizeObserver((entries) => {
      const box = entries[0]?.contentRect;
      if (box) this.resized(box.width, box.height);
    });
    this.resizeObserver.observe(host);
    const box = host.getBoundingClientRect();
    this.resized(box.width, box.height);
    this.isSceneReady.set(true);
    this.session.registerCapture(this.view(), () => capturePane(host, () => this.scene?.render()));
  }

  private stop(): void {
    this.session.registerCapture(this.view(), null);
    cancelAnimationFrame(this.frameRequest);
    this.resizeObserver?.disconnect();
    this.scene?.dispose();
    this.scene = null;
  }

  private resized(widthPx: number, heightPx: number): void {
    const axes = this.axes();
    const volume = this.session.volume();
    if (!axes || !volume || widthPx < 1 || heightPx < 1) return;
    const current = untracked(this.viewport);
    this.viewport.set(
      current
        ? resizedViewport(current, widthPx, heightPx)
        : fittedViewport(axes, volume.geometry, widthPx, heightPx),
    );
    this.scene?.resize(widthPx, heightPx);
    this.requestRender();
  }

  private showSlice(): void {
    const axes = this.axes();
    const viewport = this.viewport();
    const plane = this.plane();
    const index = this.sliceIndex();
    if (!this.isSceneReady() || !axes || !viewport || !plane) return;
    this.scene?.setSlice(index);
    this.scene?.setCamera(axes, viewport, plane.pointLps);
    this.requestRender();
  }

  private showWindow(): void {
    const window = this.session.window();
    if (!this.isSceneReady()) return;
    this.scene?.setWindow(window);
    this.requestRender();
  }

  private showLabels(): void {
    const appearance = this.session.appearance();
    if (!this.isSceneReady()) return;
    this.scene?.setLabelAppearance(appearance);
    this.requestRender();
  }

  private requestRender(): void {
    if (this.frameRequest || !this.scene) return;
    this.frameRequest = requestAnimationFrame(() => {
      this.frameRequest = 0;
      this.scene?.render();
      if (!this.hasRendered) {
        this.hasRendered = true;
        // The next frame starts once this one has been put on screen.
        requestAnimationFrame(() => this.session.reportRendered(this.view()));
      }
    });
  }

  private pointAt(x: number, y: number, depthPointLps?: Vec3): Vec3 | null {
    const axes = this.axes();
    const viewport = this.viewport();
    const plane = this.plane();
    if (!axes || !viewport || !plane) return null;
    return screenToLps(axes, viewport, depthPointLps ?? plane.pointLps, x, y);
  }

  private local(event: MouseEvent): { x: number; y: number } {
    const box = this.host().nativeElement.getBoundingClientRect();
    return { x: event.clientX - box.left, y: event.clientY - box.top };
  }

  /** This pane becomes the one "Keep this view" takes. */
  protected focused(): void {
    this.session.activePane.set(this.view());
  }

  protected pointerDown(event: PointerEvent): void {
    const host = this.host().nativeElement;
    host.focus();
    this.focused();
    host.setPointerCapture?.(event.pointerId);
    const { x, y } = this.local(event);
    if (event.button === 2) {
      this.gesture = { kind: 'window', startX: x, startY: y, start: this.session.window() };
      return;
    }
    if (event.button === 1 || (event.button === 0 && event.shiftKey)) {
      this.gesture = { kind: 'pan', lastX: x, lastY: y };
      return;
    }
    if (event.button !== 0) return;
    const overlay = this.overlay();
    if (overlay && this.session.canDrag()) {
      const handles = overlay.paths.flatMap(({ shape, drawn }) => [
        {
          ...drawn.target,
          handle: { applicator: shape.applicator, end: 'target' as const },
          lps: shape.targetLps,
        },
        {
          ...drawn.entry,
          handle: { applicator: shape.applicator, end: 'entry' as const },
          lps: shape.entryLps,
        },
      ]);
      const hit = nearestWithin(handles, x, y, handleReachPx);
      if (hit) {
        this.session.beginHandleDrag(hit.handle);
        this.gesture = { kind: 'handle', depthPointLps: [...hit.lps] };
        return;
      }
    }
    const point = this.pointAt(x, y);
    if (!point) return;
    this.actAt(point);
    const mode = this.session.mode();
    this.gesture = mode === 'measure' || mode === 'annotate' ? null : { kind: 'cursor' };
  }

  protected pointerMove(event: PointerEvent): void {
    const { x, y } = this.local(event);
    const gesture = this.gesture;
    this.session.setHover(this.view(), this.pointAt(x, y));
    if (!gesture) return;
    const axes = this.axes();
    const viewport = this.viewport();
    if (gesture.kind === 'pan' && axes && viewport) {
      this.viewport.set(pannedViewport(axes, viewport, x - gesture.lastX, y - gesture.lastY));
      this.gesture = { ...gesture, lastX: x, lastY: y };
    } else if (gesture.kind === 'window') {
      const volume = this.session.volume();
      if (volume) {
        this.session.window.set(
          draggedWindow(gesture.start, x - gesture.startX, y - gesture.startY, volume.valueRange),
        );
      }
    } else if (gesture.kind === 'handle') {
      const point = this.pointAt(x, y, gesture.depthPointLps);
      if (point) this.session.dragHandle(point);
    } else {
      const point = this.pointAt(x, y);
      if (point) this.session.setCursor(point);
    }
  }

  protected pointerUp(event: PointerEvent): void {
    this.host().nativeElement.releasePointerCapture?.(event.pointerId);
    if (this.gesture?.kind === 'handle') this.session.endHandleDrag();
    this.gesture = null;
  }

  protected pointerLeave(): void {
    this.session.setHover(this.view(), null);
  }

  protected wheel(event: WheelEvent): void {
    event.preventDefault();
    if (event.deltaY === 0) return;
    if (event.ctrlKey || event.metaKey) {
      const { x, y } = this.local(event);
      this.zoom(event.deltaY < 0 ? 1.15 : 1 / 1.15, x, y);
    } else {
      this.session.stepSlices(this.view(), event.deltaY < 0 ? 1 : -1);
    }
  }

  private zoom(factor: number, x?: number, y?: number): void {
    const axes = this.axes();
    const viewport = this.viewport();
    if (!axes || !viewport) return;
    this.viewport.set(
      zoomedViewport(axes, viewport, factor, x ?? viewport.widthPx / 2, y ?? viewport.heightPx / 2),
    );
  }

  protected fit(): void {
    const axes = this.axes();
    const volume = this.session.volume();
    const viewport = this.viewport();
    if (axes && volume && viewport) {
      this.viewport.set(fittedViewport(axes, volume.geometry, viewport.widthPx, viewport.heightPx));
    }
  }

  protected keyDown(event: KeyboardEvent): void {
    const axes = this.axes();
    const cursor = this.session.cursorLps();
    if (!axes || !cursor) return;
    const stepMm = event.shiftKey ? 10 : 1;
    const moves: Record<string, Vec3> = {
      ArrowUp: axes.upLps,
      ArrowDown: vector3.scale(axes.upLps, -1),
      ArrowRight: axes.rightLps,
      ArrowLeft: vector3.scale(axes.rightLps, -1),
    };
    const move = moves[event.key];
    if (move) {
      this.session.setCursor(vector3.addScaled(cursor, move, stepMm));
    } else if (event.key === 'PageUp' || event.key === 'PageDown') {
      this.session.stepSlices(
        this.view(),
        (event.key === 'PageUp' ? 1 : -1) * (event.shiftKey ? 5 : 1),
      );
    } else if (event.key === '+' || event.key === '=') {
      this.zoom(1.25);
    } else if (event.key === '-') {
      this.zoom(1 / 1.25);
    } else if (event.key === '0') {
      this.fit();
    } else if (event.key === 'Enter' || event.key === ' ') {
      const plane = this.plane();
      if (!plane) return;
      // The crosshair onto this view's plane: what a click on it would pick.
      const depth = vector3.dot(vector3.subtract(plane.pointLps, cursor), axes.normalLps);
      this.actAt(vector3.addScaled(cursor, axes.normalLps, depth));
    } else {
      return;
    }
    event.preventDefault();
  }

  /** A click (or Enter) at a point of this slice: an annotation's point, or the session's act. */
  private actAt(pointLps: Vec3): void {
    if (this.session.mode() === 'annotate' && this.annotations) this.annotations.place(pointLps);
    else this.session.act(this.view(), pointLps);
  }

  protected preventMenu(event: Event): void {
    event.preventDefault();
  }
}
