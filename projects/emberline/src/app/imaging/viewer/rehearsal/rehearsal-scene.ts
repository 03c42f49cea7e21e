/**
 * The vtk.js side of the rehearsal replay: the liver's surface as the simulation deformed it
 * (see-through, so the needle inside shows), the needle from its base to its tip as a thin tube
 * and the target as a small ball, the tumours' and vessels' embedded points as dots in their
 * kinds' colours, all in patient LPS millimetres. Built as the 3D view's scene
 * (`../surface-scene.ts`): WebGL2, no GPU needed. Plain TypeScript: the component owns one and
 * calls `dispose()` when it goes.
 */
import '@kitware/vtk.js/Rendering/OpenGL/Actor';
import '@kitware/vtk.js/Rendering/OpenGL/Camera';
import '@kitware/vtk.js/Rendering/OpenGL/PolyDataMapper';
import '@kitware/vtk.js/Rendering/OpenGL/Renderer';
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
import type { StructureKind } from '@emberline/shared';
import { structureKindColours } from '../../structure-kind-colours';
import { viewerBackground } from '../slice-scene';
import { rgbOf } from '../viewer-data';
import { cameraDirection, type FrameShapes, type ReplayGeometry } from './rehearsal-frames';
import { attachGlWindow, resizeGlWindow } from '../webgl-support';

/**
 * Looks: the liver in its kind's colour at a third (the needle and target inside must show),
 * the needle pale steel, the target ember so that it stands apart from both; sizes in mm.
 */
export const rehearsalLooks = {
  liverColour: structureKindColours.liver,
  liverOpacity: 0.4,
  needleColour: '#dfe6ec',
  /** Drawn a little thicker than a typical ablation needle, so that it shows at full view. */
  needleRadiusMm: 1,
  targetColour: '#ff8c58',
  targetRadiusMm: 2.5,
  /** Tumour and vessel points, in their kinds' colours (structure-kind-colours.ts). */
  structurePointSizePx: 4,
} as const;

/** What the replay component asks of its scene (a test gives it a recorder instead). */
export interface RehearsalSceneView {
  /** The surface's triangles (another replay: the points follow with `showFrame`). */
  setSurface(geometry: ReplayGeometry): void;
  showFrame(shapes: FrameShapes): void;
  resetCamera(): void;
  resize(widthPx: number, heightPx: number): void;
  render(): void;
  dispose(): void;
}

export class RehearsalScene implements RehearsalSceneView {
  private readonly renderWindow = vtkRenderWindow.newInstance();
  private readonly renderer = vtkRenderer.newInstance({ background: viewerBackground });
  private readonly openGlWindow = vtkOpenGLRenderWindow.newInstance();
  private readonly interactor = vtkRenderWindowInteractor.newInstance();
  private readonly style = vtkInteractorStyleTrackballCamera.newInstance();
  private readonly surface = vtkPolyData.newInstance();
  private readonly surfaceMapper = vtkMapper.newInstance();
  private readonly surfaceActor = vtkActor.newInstance();
  private readonly needle = vtkLineSource.newInstance({ resolution: 1 });
  private readonly needleTube = vtkTubeFilter.newInstance({
    radius: rehearsalLooks.needleRadiusMm,
    numberOfSides: 12,
    capping: true,
  });
  private readonly needleMapper = vtkMapper.newInstance();
  private readonly needleActor = vtkActor.newInstance();
  private readonly target = vtkSphereSource.newInstance({
    radius: rehearsalLooks.targetRadiusMm,
    thetaResolution: 16,
    phiResolution: 12,
  });
  private readonly targetMapper = vtkMapper.newInstance();
  private readonly targetActor = vtkActor.newInstance();
  /** One point cloud per structure kind, made when a frame first carries that kind. */
  private readonly clouds = new Map<
    StructureKind,
    {
      data: ReturnType<typeof vtkPolyData.newInstance>;
      mapper: ReturnType<typeof vtkMapper.newInstance>;
      actor: ReturnType<typeof vtkActor.newInstance>;
    }
  >();
  private hasCamera = false;
  private isDisposed = false;
  /** Where the camera looks from (`cameraDirection` of the needle shown first). */
  private viewFrom: [number, number, number] = [0, -1, 0];

  constructor(container: HTMLElement) {
    this.renderWindow.addRenderer(this.renderer);
    this.renderWindow.addView(this.openGlWindow);
    attachGlWindow(this.openGlWindow, container);
    this.interactor.setView(this.openGlWindow);
    this.interactor.initialize();
    this.interactor.setInteractorStyle(this.style);
    this.interactor.bindEvents(container);

    this.surfaceMapper.setInputData(this.surface);
    this.surfaceActor.setMapper(this.surfaceMapper);
    const liver = this.surfaceActor.getProperty();
    liver.setColor(...rgbOf(rehearsalLooks.liverColour));
    liver.setOpacity(rehearsalLooks.liverOpacity);
    liver.setSpecular(0.15);
    liver.setSpecularPower(20);
    // vtk.js draws the see-through skin after the opaque needle and target, over them.
    this.renderer.addActor(this.needleActor);
    this.renderer.addActor(this.targetActor);
    this.renderer.addActor(this.surfaceActor);

    this.needleTube.setInputConnection(this.needle.getOutputPort());
    this.needleMapper.setInputConnection(this.needleTube.getOutputPort());
    this.needleActor.setMapper(this.needleMapper);
    this.needleActor.getProperty().setColor(...rgbOf(rehearsalLooks.needleColour));
    // Some light of its own, so that the thin needle stays pale whichever way it faces.
    this.needleActor.getProperty().setAmbient(0.35);

    this.targetMapper.setInputConnection(this.target.getOutputPort());
    this.targetActor.setMapper(this.targetMapper);
    this.targetActor.getProperty().setColor(...rgbOf(rehearsalLooks.targetColour));
  }

  setSurface(geometry: ReplayGeometry): void {
    this.surface.getPolys().setData(geometry.polys);
    this.surface.modified();
  }

  showFrame(shapes: FrameShapes): void {
    this.surface.getPoints().setData(shapes.surfacePoints, 3);
    this.surface.modified();
    this.needle.setPoint1(shapes.baseMm[0], shapes.baseMm[1], shapes.baseMm[2]);
    this.needle.setPoint2(shapes.tipMm[0], shapes.tipMm[1], shapes.tipMm[2]);
    this.target.setCenter(shapes.targetMm[0], shapes.targetMm[1], shapes.targetMm[2]);
    for (const [kind, cloud] of this.clouds) {
      if (!shapes.structures.some((group) => group.kind === kind)) cloud.actor.setVisibility(false);
    }
    for (const group of shapes.structures) this.showCloud(group.kind, group.points);
    if (!this.hasCamera) {
      this.viewFrom = cameraDirection(shapes.baseMm, shapes.tipMm);
      this.resetCamera();
    }
  }

  private showCloud(kind: StructureKind, points: Float32Array): void {
    let cloud = this.clouds.get(kind);
    if (!cloud) {
      const data = vtkPolyData.newInstance();
      const mapper = vtkMapper.newInstance();
      const actor = vtkActor.newInstance();
      mapper.setInputData(data);
      actor.setMapper(mapper);
      const property = actor.getProperty();
      property.setColor(...rgbOf(structureKindColours[kind]));
      property.setPointSize(rehearsalLooks.structurePointSizePx);
      property.setLighting(false);
      // Opaque dots before the see-through skin, like the needle.
      this.renderer.removeActor(this.surfaceActor);
      this.renderer.addActor(actor);
      this.renderer.addActor(this.surfaceActor);
      cloud = { data, mapper, actor };
      this.clouds.set(kind, cloud);
    }
    const count = points.length / 3;
    const verts = new Uint32Array(2 * count);
    for (let i = 0; i < count; i++) {
      verts[2 * i] = 1;
      verts[2 * i + 1] = i;
    }
    cloud.data.getPoints().setData(points, 3);
    cloud.data.getVerts().setData(verts);
    cloud.data.modified();
    cloud.actor.setVisibility(count > 0);
  }

  /** Across the needle, from the front where it can, head up, the whole surface in view. */
  resetCamera(): void {
    const camera = this.renderer.getActiveCamera();
    camera.setFocalPoint(0, 0, 0);
    camera.setPosition(...this.viewFrom);
    camera.setViewUp(0, 0, 1);
    camera.orthogonalizeViewUp();
    this.renderer.resetCamera();
    this.hasCamera = this.surface.getPoints().getNumberOfPoints() > 0;
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
    for (const actor of [this.surfaceActor, this.needleActor, this.targetActor]) {
      this.renderer.removeActor(actor);
    }
    for (const cloud of this.clouds.values()) {
      this.renderer.removeActor(cloud.actor);
      cloud.actor.delete();
      cloud.mapper.delete();
      cloud.data.delete();
    }
    for (const object of [
      this.surfaceActor,
      this.surfaceMapper,
      this.surface,
      this.needleActor,
      this.needleMapper,
      this.needleTube,
      this.needle,
      this.targetActor,
      this.targetMapper,
      this.target,
      this.interactor,
      this.style,
      this.renderer,
    ]) {
      object.delete();
    }
    this.openGlWindow.setContainer(null);
    this.openGlWindow.delete();
    this.renderWindow.delete();
  }
}
