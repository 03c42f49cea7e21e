/**
 * The vtk.js side of the 3D view: the structures' surfaces in patient LPS millimetres (the
 * tumours optionally coloured vertex by vertex by their local margin), the assessed ablation
 * zones (a translucent skin, with a cage of outline rings for some models), the applicator paths as tubes with a
 * ball at each target, the annotations (a ball at each point, a thin tube along each line) and
 * the crosshair point. The camera
 * turns with the mouse (trackball) or the keys the component forwards. Plain TypeScript: the
 * component owns one and calls `dispose()` when it goes.
 */
import '@kitware/vtk.js/Rendering/OpenGL/Actor';
import '@kitware/vtk.js/Rendering/OpenGL/Camera';
import '@kitware/vtk.js/Rendering/OpenGL/PolyDataMapper';
import '@kitware/vtk.js/Rendering/OpenGL/Renderer';
import '@kitware/vtk.js/Rendering/OpenGL/Texture';
import vtkDataArray from '@kitware/vtk.js/Common/Core/DataArray';
import vtkPolyData from '@kitware/vtk.js/Common/DataModel/PolyData';
import vtkTubeFilter from '@kitware/vtk.js/Filters/General/TubeFilter';
import vtkLineSource from '@kitware/vtk.js/Filters/Sources/LineSource';
import vtkSphereSource from '@kitware/vtk.js/Filters/Sources/SphereSource';
import vtkInteractorStyleTrackballCamera from '@kitware/vtk.js/Interaction/Style/InteractorStyleTrackballCamera';
import vtkActor from '@kitware/vtk.js/Rendering/Core/Actor';
import vtkMapper from '@kitware/vtk.js/Rendering/Core/Mapper';
import vtkRenderWindow from '@kitware/vtk.js/Rendering/Core/RenderWindow';
import vtkRenderWindowInteractor from '@kitware/vtk.js/Rendering/Core/RenderWindowInteractor';
import vtkRenderer from '@kitware/vtk.js/Rendering/Core/Renderer';
import vtkOpenGLRenderWindow from '@kitware/vtk.js/Rendering/OpenGL/RenderWindow';
import type { StructureKind, Vec3, ZoneModel } from '@emberline/shared';
import {
  annotationBallRadiusMm,
  annotationColour,
  annotationTubeRadiusMm,
} from './annotations/annotation-style';
import { viewerBackground } from './slice-scene';
import type { SurfaceMesh } from './surface-mesh';
import { rgbOf, type LabelAppearance, type PathShape } from './viewer-data';
import { attachGlWindow, resizeGlWindow } from './webgl-support';

/**
 * Organs that enclose others are drawn fainter than the slider says, so that what lies inside
 * them stays visible: the skin at a fifth, the liver at two fifths (a display choice).
 */
const enclosingShare: Partial<Record<StructureKind, number>> = { skin: 0.2, liver: 0.4 };

const pathColour = rgbOf('#ff8a3d');
const selectedPathColour = rgbOf('#ffd23f');
const cursorColour = rgbOf('#ffffff');
const annotationRgb = rgbOf(annotationColour);

/** An annotation as the 3D view draws it: its points, LPS mm (two make a line). */
export interface AnnotationShape {
  pointsLps: readonly (readonly [number, number, number])[];
  /** The one being placed: drawn see-through. */
  isDraft: boolean;
}

/** One vtk.js source (a ball or a tube) with its mapper and actor. */
interface SourceActors {
  source: vtkSphereSource | vtkLineSource;
  tube: vtkTubeFilter | null;
  mapper: vtkMapper;
  actor: vtkActor;
}

/** How one zone model's surface is drawn (from `assessment/zone-styles.ts`). */
export interface ZoneSurfaceLook {
  colour: string;
  opacity: number;
}

interface SurfaceActors {
  data: vtkPolyData;
  mapper: vtkMapper;
  actor: vtkActor;
}

interface PathActors {
  line: vtkLineSource;
  tube: vtkTubeFilter;
  tubeMapper: vtkMapper;
  tubeActor: vtkActor;
  ball: vtkSphereSource;
  ballMapper: vtkMapper;
  ballActor: vtkActor;
}

/** A 3D camera: position, focal point and view-up, LPS millimetres. */
export interface CameraPose {
  position: Vec3;
  focalPoint: Vec3;
  viewUp: Vec3;
}

export class SurfaceScene {
  private readonly renderWindow = vtkRenderWindow.newInstance();
  private readonly renderer = vtkRenderer.newInstance({ background: viewerBackground });
  private readonly openGlWindow = vtkOpenGLRenderWindow.newInstance();
  private readonly interactor = vtkRenderWindowInteractor.newInstance();
  private readonly style = vtkInteractorStyleTrackballCamera.newInstance();
  private readonly surfaces = new Map<number, SurfaceActors>();
  private readonly zones = new Map<ZoneModel, SurfaceActors>();
  private readonly zoneRings = new Map<ZoneModel, SurfaceActors>();
  /** Labels whose surface carries per-vertex colours (the margin colouring). */
  private readonly colouredLabels = new Set<number>();
  private appearance: LabelAppearance | null = null;
  private readonly paths: PathActors[] = [];
  private annotationActors: SourceActors[] = [];
  private readonly cursor = vtkSphereSource.newInstance({
    radius: 1.5,
    thetaResolution: 16,
    phiResolution: 12,
  });
  private readonly cursorMapper = vtkMapper.newInstance();
  private readonly cursorActor = vtkActor.newInstance();
  private hasCamera = false;
  private isDisposed = false;
  /** True while a pose from elsewhere is applied: not a move of this user's. */
  private isPosing = false;

  constructor(container: HTMLElement) {
    this.renderWindow.addRenderer(this.renderer);
    this.renderWindow.addView(this.openGlWindow);
    attachGlWindow(this.openGlWindow, container);
    this.interactor.setView(this.openGlWindow);
    this.interactor.initialize();
    this.interactor.setInteractorStyle(this.style);
    this.interactor.bindEvents(container);
    this.cursorMapper.setInputConnection(this.cursor.getOutputPort());
    this.cursorActor.setMapper(this.cursorMapper);
    this.cursorActor.getProperty().setColor(...cursorColour);
    this.cursorActor.setVisibility(false);
    this.renderer.addActor(this.cursorActor);
  }

  /** Adds (or replaces) the surface of one label. */
  addSurface(mesh: SurfaceMesh): void {
    this.removeSurface(mesh.labelValue);
    const surface = this.surfaceActors(mesh);
    this.surfaces.set(mesh.labelValue, surface);
    if (!this.hasCamera) this.resetCamera();
  }

  private surfaceActors(mesh: SurfaceMesh): SurfaceActors {
    const data = vtkPolyData.newInstance();
    data.getPoints().setData(mesh.pointsLps, 3);
    data.getPolys().setData(mesh.polys);
    data
      .getPointData()
      .setNormals(
        vtkDataArray.newInstance({ name: 'Normals', values: mesh.normals, numberOfComponents: 3 }),
      );
    const mapper = vtkMapper.newInstance();
    mapper.setInputData(data);
    const actor = vtkActor.newInstance();
    actor.setMapper(mapper);
    actor.getProperty().setSpecular(0.2);
    actor.getProperty().setSpecularPower(20);
    this.renderer.addActor(actor);
    return { data, mapper, actor };
  }

  private disposeSurface(surface: SurfaceActors): void {
    this.renderer.removeActor(surface.actor);
    surface.actor.delete();
    surface.mapper.delete();
    surface.data.delete();
  }

  private removeSurface(labelValue: number): void {
    const existing = this.surfaces.get(labelValue);
    if (!existing) return;
    this.disposeSurface(existing);
    this.surfaces.delete(labelValue);
    this.colouredLabels.delete(labelValue);
  }

  setAppearance(appearance: LabelAppearance): void {
    this.appearance = appearance;
    for (const [labelValue, { actor }] of this.surfaces) {
      const kind = appearance.kinds.get(labelValue) ?? null;
      const share = (kind && enclosingShare[kind]) ?? 1;
      // A surface coloured by margin shows whole: its colours carry the reading.
      const isColoured = this.colouredLabels.has(labelValue);
      actor.getProperty().setColor(...rgbOf(appearance.colours.get(labelValue) ?? '#ffffff'));
      actor.getProperty().setOpacity(isColoured ? 1 : Math.max(0.02, appearance.opacity * share));
      actor.setVisibility(
        appearance.visible.has(labelValue) && (isColoured || appearance.opacity > 0),
      );
    }
  }

  /** Whether a label's surface is there (the margin colouring waits for it). */
  hasSurface(labelValue: number): boolean {
    return this.surfaces.has(labelValue);
  }

  /**
   * Colours a label's surface vertex by vertex (r, g, b 0…255 per vertex), or gives it back
   * its kind's colour (null). Answers false when the label has no surface (yet).
   */
  setVertexColours(labelValue: number, colours: Uint8Array | null): boolean {
    const surface = this.surfaces.get(labelValue);
    if (!surface) return false;
    const points = surface.data.getPoints().getNumberOfPoints();
    if (colours && colours.length === points * 3) {
      surface.data.getPointData().setScalars(
        vtkDataArray.newInstance({
          name: 'margin-colours',
          values: colours,
          numberOfComponents: 3,
        }),
      );
      surface.mapper.setColorModeToDirectScalars();
      surface.mapper.setScalarVisibility(true);
      this.colouredLabels.add(labelValue);
    } else {
      surface.mapper.setScalarVisibility(false);
      this.colouredLabels.delete(labelValue);
    }
    surface.data.modified();
    if (this.appearance) this.setAppearance(this.appearance);
    return true;
  }

  /** Adds (or replaces) an assessed zone's surface, drawn in its model's look. */
  setZoneSurface(model: ZoneModel, mesh: SurfaceMesh, look: ZoneSurfaceLook): void {
    const existing = this.zones.get(model);
    if (existing) this.disposeSurface(existing);
    const surface = this.surfaceActors(mesh);
    const property = surface.actor.getProperty();
    property.setColor(...rgbOf(look.colour));
    property.setOpacity(look.opacity);
    this.zones.set(model, surface);
  }

  /** Adds (or replaces) a zone's cage: closed outline loops, LPS millimetres, as lines. */
  setZoneRings(model: ZoneModel, loopsLps: readonly (readonly Vec3[])[], colour: string): void {
    const existing = this.zoneRings.get(model);
    if (existing) this.disposeSurface(existing);
    const pointCount = loopsLps.reduce((sum, loop) => sum + loop.length, 0);
    const points = new Float32Array(pointCount * 3);
    const lines = new Uint32Array(pointCount + 2 * loopsLps.length);
    let point = 0;
    let cell = 0;
    for (const loop of loopsLps) {
      // A closed polyline: n + 1 indices, the first repeated at the end.
      lines[cell++] = loop.length + 1;
      const first = point;
      for (const vertex of loop) {
        points.set(vertex, point * 3);
        lines[cell++] = point++;
      }
      lines[cell++] = first;
    }
    const data = vtkPolyData.newInstance();
    data.getPoints().setData(points, 3);
    data.getLines().setData(lines);
    const mapper = vtkMapper.newInstance();
    mapper.setInputData(data);
    const actor = vtkActor.newInstance();
    actor.setMapper(mapper);
    const property = actor.getProperty();
    property.setColor(...rgbOf(colour));
    property.setLighting(false);
    property.setLineWidth(1.5);
    this.renderer.addActor(actor);
    this.zoneRings.set(model, { data, mapper, actor });
  }

  /** Removes every zone surface and cage (another plan is shown). */
  clearZones(): void {
    for (const surface of [...this.zones.values(), ...this.zoneRings.values()]) {
      this.disposeSurface(surface);
    }
    this.zones.clear();
    this.zoneRings.clear();
  }

  setZonesShown(shown: ReadonlySet<ZoneModel>): void {
    for (const [model, { actor }] of [...this.zones, ...this.zoneRings]) {
      actor.setVisibility(shown.has(model));
    }
  }

  setPaths(shapes: readonly PathShape[]): void {
    while (this.paths.length > shapes.length) this.disposePath(this.paths.pop() as PathActors);
    while (this.paths.length < shapes.length) this.paths.push(this.newPath());
    shapes.forEach((shape, index) => {
      const actors = this.paths[index];
      actors.line.setPoint1(shape.entryLps[0], shape.entryLps[1], shape.entryLps[2]);
      actors.line.setPoint2(shape.targetLps[0], shape.targetLps[1], shape.targetLps[2]);
      actors.ball.setCenter(shape.targetLps[0], shape.targetLps[1], shape.targetLps[2]);
      const colour = shape.isSelected ? selectedPathColour : pathColour;
      actors.tubeActor.getProperty().setColor(...colour);
      actors.ballActor.getProperty().setColor(...colour);
    });
  }

  private newPath(): PathActors {
    const line = vtkLineSource.newInstance({ resolution: 1 });
    const tube = vtkTubeFilter.newInstance({ radius: 1, numberOfSides: 16, capping: true });
    tube.setInputConnection(line.getOutputPort());
    const tubeMapper = vtkMapper.newInstance();
    tubeMapper.setInputConnection(tube.getOutputPort());
    const tubeActor = vtkActor.newInstance();
    tubeActor.setMapper(tubeMapper);
    const ball = vtkSphereSource.newInstance({ radius: 2, thetaResolution: 16, phiResolution: 12 });
    const ballMapper = vtkMapper.newInstance();
    ballMapper.setInputConnection(ball.getOutputPort());
    const ballActor = vtkActor.newInstance();
    ballActor.setMapper(ballMapper);
    this.renderer.addActor(tubeActor);
    this.renderer.addActor(ballActor);
    return { line, tube, tubeMapper, tubeActor, ball, ballMapper, ballActor };
  }

  private disposePath(actors: PathActors): void {
    this.renderer.removeActor(actors.tubeActor);
    this.renderer.removeActor(actors.ballActor);
    for (const object of Object.values(actors)) object.delete();
  }

  /**
   * Draws the annotations afresh (a few dozen at most: rebuilding is simpler than matching
   * them up and costs nothing to see).
   */
  setAnnotations(shapes: readonly AnnotationShape[]): void {
    for (const actors of this.annotationActors.splice(0)) this.disposeSource(actors);
    for (const shape of shapes) {
      const opacity = shape.isDraft ? 0.6 : 1;
      for (const point of shape.pointsLps) {
        const ball = vtkSphereSource.newInstance({
          center: [point[0], point[1], point[2]],
          radius: annotationBallRadiusMm,
          thetaResolution: 16,
          phiResolution: 12,
        });
        this.annotationActors.push(this.sourceActors(ball, null, opacity));
      }
      if (shape.pointsLps.length === 2) {
        const [a, b] = shape.pointsLps;
        const line = vtkLineSource.newInstance({ resolution: 1 });
        line.setPoint1(a[0], a[1], a[2]);
        line.setPoint2(b[0], b[1], b[2]);
        const tube = vtkTubeFilter.newInstance({
          radius: annotationTubeRadiusMm,
          numberOfSides: 12,
          capping: true,
        });
        tube.setInputConnection(line.getOutputPort());
        this.annotationActors.push(this.sourceActors(line, tube, opacity));
      }
    }
  }

  private sourceActors(
    source: vtkSphereSource | vtkLineSource,
    tube: vtkTubeFilter | null,
    opacity: number,
  ): SourceActors {
    const mapper = vtkMapper.newInstance();
    mapper.setInputConnection((tube ?? source).getOutputPort());
    const actor = vtkActor.newInstance();
    actor.setMapper(mapper);
    actor.getProperty().setColor(...annotationRgb);
    actor.getProperty().setOpacity(opacity);
    this.renderer.addActor(actor);
    return { source, tube, mapper, actor };
  }

  private disposeSource(actors: SourceActors): void {
    this.renderer.removeActor(actors.actor);
    actors.actor.delete();
    actors.mapper.delete();
    actors.tube?.delete();
    actors.source.delete();
  }

  setCursor(pointLps: Readonly<Vec3> | null): void {
    if (pointLps) this.cursor.setCenter(pointLps[0], pointLps[1], pointLps[2]);
    this.cursorActor.setVisibility(pointLps !== null);
  }

  /** Where the camera is and looks, LPS millimetres: what a board session shares. */
  cameraPose(): CameraPose {
    const camera = this.renderer.getActiveCamera();
    const triple = (values: number[]): Vec3 => [values[0], values[1], values[2]];
    return {
      position: triple(camera.getPosition()),
      focalPoint: triple(camera.getFocalPoint()),
      viewUp: triple(camera.getViewUp()),
    };
  }

  /** Puts the camera where another viewer has it (the session's lead). */
  setCameraPose(pose: CameraPose): void {
    const camera = this.renderer.getActiveCamera();
    this.isPosing = true;
    try {
      camera.setPosition(...pose.position);
      camera.setFocalPoint(...pose.focalPoint);
      camera.setViewUp(...pose.viewUp);
      this.renderer.resetCameraClippingRange();
    } finally {
      this.isPosing = false;
    }
    this.hasCamera = true;
  }

  /** Calls back when the user turns or zooms the camera (not when `setCameraPose` moves it). */
  onCameraMoved(callback: (pose: CameraPose) => void): void {
    // The camera is also "modified" by every render's clipping range: report real moves only.
    let last = '';
    this.renderer.getActiveCamera().onModified(() => {
      if (this.isPosing) return;
      const pose = this.cameraPose();
      const key = JSON.stringify(pose);
      if (key === last) return;
      last = key;
      callback(pose);
    });
  }

  /** Seen from the front (anterior), head up: the coronal view's way (common practice). */
  resetCamera(): void {
    const camera = this.renderer.getActiveCamera();
    camera.setFocalPoint(0, 0, 0);
    camera.setPosition(0, -1, 0);
    camera.setViewUp(0, 0, 1);
    this.renderer.resetCamera();
    this.hasCamera = this.surfaces.size > 0;
  }

  /** Turns the camera about the focal point, degrees. */
  rotate(azimuthDeg: number, elevationDeg: number): void {
    const camera = this.renderer.getActiveCamera();
    camera.azimuth(azimuthDeg);
    camera.elevation(elevationDeg);
    camera.orthogonalizeViewUp();
    this.renderer.resetCameraClippingRange();
  }

  zoom(factor: number): void {
    this.renderer.getActiveCamera().zoom(factor);
    this.renderer.resetCameraClippingRange();
  }

  resize(widthPx: number, heightPx: number): void {
    resizeGlWindow(this.openGlWindow, widthPx, heightPx);
  }

  render(): void {
    if (this.isDisposed) return;
    this.renderer.resetCameraClippingRange();
    this.renderWindow.render();
  }

  dispose(): void {
    if (this.isDisposed) return;
    this.isDisposed = true;
    this.interactor.unbindEvents();
    for (const labelValue of [...this.surfaces.keys()]) this.removeSurface(labelValue);
    this.clearZones();
    for (const actors of this.paths.splice(0)) this.disposePath(actors);
    for (const actors of this.annotationActors.splice(0)) this.disposeSource(actors);
    this.cursorActor.delete();
    this.cursorMapper.delete();
    this.cursor.delete();
    this.interactor.delete();
    this.style.delete();
    this.renderer.delete();
    this.openGlWindow.setContainer(null);
    this.openGlWindow.delete();
    this.renderWindow.delete();
  }
}
