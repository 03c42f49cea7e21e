import { DecimalPipe } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  ElementRef,
  afterNextRender,
  effect,
  inject,
  signal,
  untracked,
  viewChild,
} from '@angular/core';
import type { AssessmentDisplay, DisplayZone, StructureKind } from '@emberline/shared';
import { AnnotationLayer, draftAnnotationId } from './annotations/annotation-layer';
import { MarginLegend } from './assessment/margin-legend';
import { marginColours } from './assessment/margin-colours';
import { nearestSampleValues } from './assessment/nearest-sample';
import { zoneRings } from './assessment/zone-contour';
import { ZoneOverlay } from './assessment/zone-overlay';
import { zoneStyles } from './assessment/zone-styles';
import { clearanceKindOrder } from './drafting/clearance-fields';
import { SurfaceBuilder } from './surface-builder';
import type { SurfaceMesh } from './surface-mesh';
import type { SurfaceReply } from './surface-protocol';
import { capturePane } from './pane-capture';
import { SurfaceScene } from './surface-scene';
import { ViewerSession } from './viewer-session';

/** The 3D view shows the tumour first and the enclosing organs last. */
const surfaceOrder: readonly StructureKind[] = [
  'tumour',
  ...clearanceKindOrder.filter((kind) => kind !== 'tumour'),
];

export const surfacesReadyMark = 'emberline:viewer-surfaces-ready';

/**
 * How far a surface vertex may lie from the nearest margin sample (a surface voxel centre) and
 * still take its value, mm: the smoothed surface keeps within about a voxel of the voxels.
 */
const marginReachMm = 5;

/**
 * The 3D view: surface models of the structures (built in a worker, one by one), the assessed
 * zones of the plan on screen with the tumours coloured by local margin and its legend, the
 * applicator paths, the annotations and the crosshair point. Drag to turn, wheel to zoom; arrow keys turn,
 * plus and minus zoom, 0 resets.
 */
@Component({
  selector: 'em-volume-view',
  imports: [DecimalPipe, MarginLegend],
  template: `
    <div class="caption">
      <span class="name">3D</span>
      <span class="em-muted" aria-live="polite">{{ status() }}</span>
      <button type="button" class="fit" (click)="reset()">Reset</button>
    </div>
    <div
      #host
      class="host"
      tabindex="0"
      role="application"
      aria-label="3D view of the structures, the applicator paths and the annotations. Arrow keys turn it, plus and minus zoom, 0 resets."
      (keydown)="keyDown($event)"
      (focus)="focused()"
      (pointerdown.capture)="focused()"
    >
      <em-margin-legend />
    </div>
    @if (triangleCount()) {
      <p class="note">
        {{ triangleCount() | number }} triangles · surfaces smoothed for display; figures come from
        the label map{{ zoneStatus() ? ' · ' + zoneStatus() : '' }}
      </p>
    }
  `,
  styleUrls: ['./viewer-pane.scss', './volume-view.scss'],
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class VolumeView {
  private readonly session = inject(ViewerSession);
  private readonly zones = inject(ZoneOverlay);
  private readonly annotations = inject(AnnotationLayer, { optional: true });
  private readonly host = viewChild.required<ElementRef<HTMLElement>>('host');
  private scene: SurfaceScene | null = null;
  private builder: SurfaceBuilder | null = null;
  private resizeObserver: ResizeObserver | null = null;
  private frameRequest = 0;
  private readonly isSceneReady = signal(false);

  protected readonly status = signal('Waiting for the slices…');
  protected readonly triangleCount = signal(0);
  private surfaceCount = 0;
  /** The structures' meshes by label value, for the margin colouring of the tumours. */
  private readonly meshes = new Map<number, SurfaceMesh>();
  private readonly meshCount = signal(0);
  private zoneBuilder: SurfaceBuilder | null = null;
  private builtDisplay: AssessmentDisplay | null = null;
  /** Margins carried to the vertices, by label value and zone model. */
  private readonly vertexMargins = new Map<string, Float32Array>();
  private colouredLabels = new Set<number>();
  protected readonly zoneStatus = signal('');

  constructor() {
    afterNextRender(() => this.start());
    inject(DestroyRef).onDestroy(() => this.stop());
    effect(() => this.showAppearance());
    effect(() => this.showPaths());
    effect(() => this.showCursor());
    effect(() => this.showAnnotations());
    // A camera put there by the session's lead is applied; the user's own moves are reported.
    effect(() => {
      const camera = this.session.camera();
      if (!camera?.isFollowed || !this.isSceneReady()) return;
      untracked(() => {
        this.scene?.setCameraPose(camera.pose);
        this.requestRender();
      });
    });
    // Surfaces are built once the slices are on screen, so that they never delay them.
    effect(() => {
      if (this.session.hasFirstFrame() && this.isSceneReady())
        untracked(() => this.buildSurfaces());
    });
    effect(() => {
      const display = this.zones.display();
      if (this.session.hasFirstFrame() && this.isSceneReady())
        untracked(() => this.buildZones(display));
    });
    effect(() => this.showZones());
    effect(() => this.showMargins());
  }

  private start(): void {
    const host = this.host().nativeElement;
    this.scene = new SurfaceScene(host);
    this.scene.onCameraMoved((pose) => this.session.camera.set({ pose, isFollowed: false }));
    host.querySelector('canvas')?.setAttribute('role', 'img');
    host
      .querySelector('canvas')
      ?.setAttribute('aria-label', '3D surfaces of the structures and the applicator paths');
    this.resizeObserver = new ResizeObserver((entries) => {
      const box = entries[0]?.contentRect;
      if (box) this.resized(box.width, box.height);
    });
    this.resizeObserver.observe(host);
    const box = host.getBoundingClientRect();
    this.resized(box.width, box.height);
    this.isSceneReady.set(true);
    this.session.registerCapture('3d', () => capturePane(host, () => this.scene?.render()));
  }

  private stop(): void {
    this.session.registerCapture('3d', null);
    cancelAnimationFrame(this.frameRequest);
    this.resizeObserver?.disconnect();
    this.builder?.dispose();
    this.zoneBuilder?.dispose();
    this.scene?.dispose();
    this.scene = null;
  }

  private resized(widthPx: number, heightPx: number): void {
    if (widthPx < 1 || heightPx < 1) return;
    this.scene?.resize(widthPx, heightPx);
    this.requestRender();
  }

  private buildSurfaces(): void {
    const labelMap = this.session.labelMap();
    const volume = this.session.volume();
    if (this.builder || !volume) return;
    if (!labelMap) {
      this.status.set('No structures imported for this series.');
      return;
    }
    const kinds = this.session.appearance().kinds;
    const rank = (value: number) => {
      const kind = kinds.get(value) ?? null;
      return kind ? surfaceOrder.indexOf(kind) : surfaceOrder.length;
    };
    const labelValues = [...labelMap.labelValues].sort((a, b) => rank(a) - rank(b) || a - b);
    this.status.set(`Building surfaces… 0 of ${labelValues.length}`);
    this.builder = new SurfaceBuilder((reply) => this.received(reply, labelValues.length));
    this.builder.build({ labels: labelMap.labels, geometry: volume.geometry, labelValues });
  }

  private received(reply: SurfaceReply, total: number): void {
    if (reply.type === 'surface') {
      this.scene?.addSurface(reply.mesh);
      this.meshes.set(reply.mesh.labelValue, reply.mesh);
      this.meshCount.update((count) => count + 1);
      this.scene?.setAppearance(this.session.appearance());
      this.surfaceCount++;
      this.triangleCount.update((count) => count + reply.mesh.triangleCount);
      this.status.set(`Building surfaces… ${this.surfaceCount} of ${total}`);
      this.requestRender();
    } else if (reply.type === 'surfaces-done') {
      performance.mark(surfacesReadyMark);
      this.status.set(`${this.surfaceCount} surfaces in ${(reply.totalMs / 1000).toFixed(1)} s`);
    } else if (reply.type === 'failed') {
      this.status.set(`The surfaces could not be built: ${reply.message}`);
    }
  }

  /**
   * Contours the zones of the display one after the other in one surface worker (each on its
   * own tight box, placed by that box's grid), and draws the ring cages of the models that
   * have one on the page (a few slices' marching squares); another display replaces them.
   */
  private buildZones(display: AssessmentDisplay | null): void {
    if (display === this.builtDisplay) return;
    this.builtDisplay = display;
    this.zoneBuilder?.dispose();
    this.zoneBuilder = null;
    this.scene?.clearZones();
    this.vertexMargins.clear();
    this.requestRender();
    const pending = (display?.zones ?? []).filter((zone) => zone.mask.includes(1));
    for (const zone of pending) {
      const stepMm = zoneStyles[zone.model].ringStepMm;
      if (stepMm === null) continue;
      // Axial and sagittal rings: seen from the front, a grid over the zone.
      const rings = zoneRings(zone, stepMm, [
        [0, 0, 1],
        [1, 0, 0],
      ]);
      this.scene?.setZoneRings(zone.model, rings, zoneStyles[zone.model].colour);
    }
    this.scene?.setZonesShown(this.zones.shownZones());
    if (!pending.length) {
      this.zoneStatus.set('');
      return;
    }
    let current: DisplayZone | undefined;
    const builder = new SurfaceBuilder((reply) => {
      if (reply.type === 'surface' && current) {
        this.scene?.setZoneSurface(current.model, reply.mesh, zoneStyles[current.model]);
        this.scene?.setZonesShown(this.zones.shownZones());
        this.requestRender();
      } else if (reply.type === 'surfaces-done') {
        next();
      } else if (reply.type === 'failed') {
        this.zoneStatus.set(`the zone surfaces could not be built: ${reply.message}`);
      }
    });
    const next = () => {
      current = pending.shift();
      if (!current) {
        this.zoneStatus.set('');
        builder.dispose();
        if (this.zoneBuilder === builder) this.zoneBuilder = null;
        return;
      }
      this.zoneStatus.set(`building the ${zoneStyles[current.model].label.toLowerCase()}…`);
      builder.build({ labels: current.mask, geometry: current.geometry, labelValues: [1] });
    };
    this.zoneBuilder = builder;
    next();
  }

  private showZones(): void {
    const shown = this.zones.shownZones();
    if (!this.isSceneReady()) return;
    this.scene?.setZonesShown(shown);
    this.requestRender();
  }

  /**
   * Colours each tumour with margin samples by the nearest sample's margin, through the
   * scale of the legend; gives the others back their kind's colour.
   */
  private showMargins(): void {
    const margins = this.zones.shownMargins();
    const scale = this.zones.scale();
    const structures = this.session.structures();
    this.meshCount();
    if (!this.isSceneReady()) return;
    untracked(() => {
      const labelOf = new Map(structures.map((structure) => [structure.id, structure.labelValue]));
      const coloured = new Set<number>();
      for (const entry of margins) {
        const labelValue = labelOf.get(entry.structureId);
        const mesh = labelValue === undefined ? undefined : this.meshes.get(labelValue);
        if (labelValue === undefined || !mesh || !scale) continue;
        const key = `${labelValue}:${entry.model}`;
        let values = this.vertexMargins.get(key);
        if (!values) {
          values = nearestSampleValues(mesh.pointsLps, entry.pointsLps, entry.marginMm, {
            maxDistanceMm: marginReachMm,
          });
          this.vertexMargins.set(key, values);
        }
        if (this.scene?.setVertexColours(labelValue, marginColours(values, scale))) {
          coloured.add(labelValue);
        }
      }
      for (const labelValue of this.colouredLabels) {
        if (!coloured.has(labelValue)) this.scene?.setVertexColours(labelValue, null);
      }
      this.colouredLabels = coloured;
      this.requestRender();
    });
  }

  private showAppearance(): void {
    const appearance = this.session.appearance();
    if (!this.isSceneReady()) return;
    this.scene?.setAppearance(appearance);
    this.requestRender();
  }

  private showPaths(): void {
    const paths = this.session.paths();
    if (!this.isSceneReady()) return;
    this.scene?.setPaths(paths);
    this.requestRender();
  }

  private showAnnotations(): void {
    const drawn = this.annotations?.drawn() ?? [];
    if (!this.isSceneReady()) return;
    this.scene?.setAnnotations(
      drawn.map((annotation) => ({
        pointsLps: annotation.points,
        isDraft: annotation.id === draftAnnotationId,
      })),
    );
    this.requestRender();
  }

  private showCursor(): void {
    const cursor = this.session.cursorLps();
    if (!this.isSceneReady()) return;
    this.scene?.setCursor(cursor);
    this.requestRender();
  }

  private requestRender(): void {
    if (this.frameRequest || !this.scene) return;
    this.frameRequest = requestAnimationFrame(() => {
      this.frameRequest = 0;
      this.scene?.render();
    });
  }

  /** The 3D view becomes the pane "Keep this view" takes. */
  protected focused(): void {
    this.session.activePane.set('3d');
  }

  protected reset(): void {
    this.scene?.resetCamera();
    this.requestRender();
  }

  protected keyDown(event: KeyboardEvent): void {
    const turns: Record<string, [number, number]> = {
      ArrowLeft: [-10, 0],
      ArrowRight: [10, 0],
      ArrowUp: [0, 10],
      ArrowDown: [0, -10],
    };
    const turn = turns[event.key];
    if (turn) this.scene?.rotate(turn[0], turn[1]);
    else if (event.key === '+' || event.key === '=') this.scene?.zoom(1.2);
    else if (event.key === '-') this.scene?.zoom(1 / 1.2);
    else if (event.key === '0') this.scene?.resetCamera();
    else return;
    event.preventDefault();
    this.requestRender();
  }
}
