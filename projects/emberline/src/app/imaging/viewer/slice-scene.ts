/**
 * The vtk.js side of one slice view: a WebGL2 render window in the view's box showing one grid
 * plane of the series (grey, by the display window) with the label map over it (colours by
 * kind). The image data carries the series' origin, spacing and direction, so vtk.js world
 * coordinates are patient LPS millimetres. Plain TypeScript: the component owns one and calls
 * `dispose()` when it goes.
 */
import '@kitware/vtk.js/Rendering/OpenGL/Camera';
import '@kitware/vtk.js/Rendering/OpenGL/Renderer';
import '@kitware/vtk.js/Rendering/OpenGL/ImageMapper';
import '@kitware/vtk.js/Rendering/OpenGL/ImageSlice';
import '@kitware/vtk.js/Rendering/OpenGL/Texture';
import vtkDataArray from '@kitware/vtk.js/Common/Core/DataArray';
import vtkImageData from '@kitware/vtk.js/Common/DataModel/ImageData';
import vtkPiecewiseFunction from '@kitware/vtk.js/Common/DataModel/PiecewiseFunction';
import vtkColorTransferFunction from '@kitware/vtk.js/Rendering/Core/ColorTransferFunction';
import vtkImageMapper from '@kitware/vtk.js/Rendering/Core/ImageMapper';
import { SlicingMode } from '@kitware/vtk.js/Rendering/Core/ImageMapper/Constants';
import vtkImageSlice from '@kitware/vtk.js/Rendering/Core/ImageSlice';
import vtkRenderWindow from '@kitware/vtk.js/Rendering/Core/RenderWindow';
import vtkRenderer from '@kitware/vtk.js/Rendering/Core/Renderer';
import vtkOpenGLRenderWindow from '@kitware/vtk.js/Rendering/OpenGL/RenderWindow';
import { vector3, type Vec3, type VolumeGeometry } from '@emberline/shared';
import type { DisplayWindow } from './display-window';
import type { SliceAxes, VoxelAxis } from './slice-axes';
import type { SliceViewport } from './slice-viewport';
import { rgbOf, type LabelAppearance, type ViewerLabelMap, type ViewerVolume } from './viewer-data';
import { attachGlWindow, resizeGlWindow } from './webgl-support';

const slicingModes: Record<VoxelAxis, SlicingMode> = {
  0: SlicingMode.I,
  1: SlicingMode.J,
  2: SlicingMode.K,
};

/** Deep slate behind the image, Emberline's own. */
export const viewerBackground: [number, number, number] = [0.05, 0.07, 0.09];

/** Distance of the camera from the shown plane, mm: anything well outside the patient. */
const cameraDistanceMm = 2000;

/** vtk.js image data on the series' grid: world = LPS (origin, spacing, direction). */
export function imageDataOf(
  geometry: VolumeGeometry,
  values: Int16Array | Uint8Array | Uint16Array,
): { image: vtkImageData; scalars: vtkDataArray } {
  const image = vtkImageData.newInstance();
  image.setDimensions(geometry.dimensions);
  image.setSpacing(geometry.spacingMm);
  image.setOrigin(geometry.originLps);
  // vtk.js reads the direction column by column: the LPS directions of i, then j, then k.
  image.setDirection([
    ...geometry.direction[0],
    ...geometry.direction[1],
    ...geometry.direction[2],
  ]);
  const scalars = vtkDataArray.newInstance({ values, numberOfComponents: 1, name: 'values' });
  image.getPointData().setScalars(scalars);
  return { image, scalars };
}

interface LabelLayer {
  image: vtkImageData;
  scalars: vtkDataArray;
  mapper: vtkImageMapper;
  slice: vtkImageSlice;
  colours: vtkColorTransferFunction;
  opacities: vtkPiecewiseFunction;
  labelValues: readonly number[];
}

export class SliceScene {
  private readonly renderWindow = vtkRenderWindow.newInstance();
  private readonly renderer = vtkRenderer.newInstance({ background: viewerBackground });
  private readonly openGlWindow = vtkOpenGLRenderWindow.newInstance();
  private readonly image: vtkImageData;
  private readonly scalars: vtkDataArray;
  private readonly mapper = vtkImageMapper.newInstance();
  private readonly slice = vtkImageSlice.newInstance();
  private readonly labels: LabelLayer | null;
  private isDisposed = false;

  constructor(
    container: HTMLElement,
    volume: ViewerVolume,
    labelMap: ViewerLabelMap | null,
    axis: VoxelAxis,
  ) {
    this.renderWindow.addRenderer(this.renderer);
    this.renderWindow.addView(this.openGlWindow);
    attachGlWindow(this.openGlWindow, container);

    ({ image: this.image, scalars: this.scalars } = imageDataOf(volume.geometry, volume.voxels));
    this.mapper.setInputData(this.image);
    this.mapper.setSlicingMode(slicingModes[axis]);
    this.slice.setMapper(this.mapper);
    this.slice.getProperty().setInterpolationTypeToLinear();
    this.renderer.addActor(this.slice);

    this.labels = labelMap ? this.labelLayer(volume.geometry, labelMap, axis) : null;
    this.renderer.getActiveCamera().setParallelProjection(true);
  }

  private labelLayer(
    geometry: VolumeGeometry,
    labelMap: ViewerLabelMap,
    axis: VoxelAxis,
  ): LabelLayer {
    const { image, scalars } = imageDataOf(geometry, labelMap.labels);
    const mapper = vtkImageMapper.newInstance();
    mapper.setInputData(image);
    mapper.setSlicingMode(slicingModes[axis]);
    // Drawn over the grey image on the same plane: pulled towards the camera by depth offset.
    mapper.setResolveCoincidentTopologyToPolygonOffset();
    mapper.setRelativeCoincidentTopologyPolygonOffsetParameters(-2, -2);
    const slice = vtkImageSlice.newInstance();
    slice.setMapper(mapper);
    const colours = vtkColorTransferFunction.newInstance();
    const opacities = vtkPiecewiseFunction.newInstance();
    const property = slice.getProperty();
    property.setInterpolationTypeToNearest();
    property.setRGBTransferFunction(0, colours);
    property.setPiecewiseFunction(0, opacities);
    property.setUseLookupTableScalarRange(true);
    this.renderer.addActor(slice);
    return { image, scalars, mapper, slice, colours, opacities, labelValues: labelMap.labelValues };
  }

  setSlice(index: number): void {
    this.mapper.setSlice(index);
    this.labels?.mapper.setSlice(index);
  }

  setWindow(window: DisplayWindow): void {
    const property = this.slice.getProperty();
    property.setColorWindow(window.width);
    property.setColorLevel(window.centre);
  }

  /**
   * Label colours as steps: each value keeps its colour over ±0.45 around it, so that the
   * sampled lookup tables give every whole label value exactly its own colour and opacity.
   */
  setLabelAppearance(appearance: LabelAppearance): void {
    if (!this.labels) return;
    const { colours, opacities, labelValues } = this.labels;
    colours.removeAllPoints();
    opacities.removeAllPoints();
    const highest = Math.max(1, ...labelValues);
    colours.addRGBPoint(-0.5, 0, 0, 0);
    opacities.addPoint(-0.5, 0);
    opacities.addPoint(0.45, 0);
    for (const value of labelValues) {
      const [r, g, b] = rgbOf(appearance.colours.get(value) ?? '#ffffff');
      const opacity = appearance.visible.has(value) ? appearance.opacity : 0;
      for (const at of [value - 0.45, value + 0.45]) {
        colours.addRGBPoint(at, r, g, b);
        opacities.addPoint(at, opacity);
      }
    }
    colours.addRGBPoint(highest + 0.5, 0, 0, 0);
    opacities.addPoint(highest + 0.5, 0);
    this.labels.slice.modified();
  }

  /** The parallel camera of the viewport, looking along the plane's normal onto the plane. */
  setCamera(axes: SliceAxes, viewport: SliceViewport, planePointLps: Readonly<Vec3>): void {
    const camera = this.renderer.getActiveCamera();
    const depth = vector3.dot(vector3.subtract(planePointLps, viewport.centreLps), axes.normalLps);
    const focal = vector3.addScaled(viewport.centreLps, axes.normalLps, depth);
    const position = vector3.addScaled(focal, axes.normalLps, -cameraDistanceMm);
    camera.setFocalPoint(focal[0], focal[1], focal[2]);
    camera.setPosition(position[0], position[1], position[2]);
    camera.setViewUp(axes.upLps[0], axes.upLps[1], axes.upLps[2]);
    camera.setParallelScale((viewport.heightPx / 2) * viewport.mmPerPixel);
    camera.setClippingRange(cameraDistanceMm - 1000, cameraDistanceMm + 1000);
  }

  /** The drawing buffer in device pixels for a box of CSS pixels. */
  resize(widthPx: number, heightPx: number): void {
    resizeGlWindow(this.openGlWindow, widthPx, heightPx);
  }

  render(): void {
    if (!this.isDisposed) this.renderWindow.render();
  }

  dispose(): void {
    if (this.isDisposed) return;
    this.isDisposed = true;
    const layer = this.labels;
    if (layer) {
      for (const object of [
        layer.slice,
        layer.mapper,
        layer.colours,
        layer.opacities,
        layer.image,
        layer.scalars,
      ]) {
        object.delete();
      }
    }
    this.slice.delete();
    this.mapper.delete();
    this.image.delete();
    this.scalars.delete();
    this.renderer.delete();
    this.openGlWindow.setContainer(null);
    this.openGlWindow.delete();
    this.renderWindow.delete();
  }
}
