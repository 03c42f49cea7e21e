/**
 * Surface models of labelled structures for the 3D view: each label's voxels, cropped, lightly
 * smoothed, contoured at half by marching cubes (vtk.js), then placed in the patient with the
 * series' own voxel-to-LPS map. For display only: the figures a board reads come from the
 * distance fields, never from these surfaces.
 */
import vtkDataArray from '@kitware/vtk.js/Common/Core/DataArray';
import vtkImageData from '@kitware/vtk.js/Common/DataModel/ImageData';
import vtkImageMarchingCubes from '@kitware/vtk.js/Filters/General/ImageMarchingCubes';
import { voxelToLps, type Vec3, type VolumeGeometry, type VoxelBox } from '@emberline/shared';

export interface SurfaceMesh {
  labelValue: number;
  /** Vertex positions, LPS millimetres, x y z per vertex. */
  pointsLps: Float32Array;
  /** Unit vertex normals pointing out of the structure. */
  normals: Float32Array;
  /** Triangles as vtk.js cell arrays: 3, a, b, c, 3, … */
  polys: Uint32Array;
  triangleCount: number;
}

/** The tight box of every label value present, in one pass over the label map. */
export function labelBoxes(
  labels: Uint8Array | Uint16Array,
  dimensions: Readonly<[number, number, number]>,
): Map<number, VoxelBox> {
  const [nx, ny, nz] = dimensions;
  const bounds = new Map<number, number[]>();
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const value = labels[index];
        if (value === 0) continue;
        let box = bounds.get(value);
        if (!box) {
          box = [i, j, k, i, j, k];
          bounds.set(value, box);
        }
        if (i < box[0]) box[0] = i;
        if (j < box[1]) box[1] = j;
        if (k < box[2]) box[2] = k;
        if (i > box[3]) box[3] = i;
        if (j > box[4]) box[4] = j;
        if (k > box[5]) box[5] = k;
      }
    }
  }
  const boxes = new Map<number, VoxelBox>();
  for (const [value, box] of bounds) {
    boxes.set(value, {
      start: [box[0], box[1], box[2]],
      size: [box[3] - box[0] + 1, box[4] - box[1] + 1, box[5] - box[2] + 1],
    });
  }
  return boxes;
}

/** Empty voxels around the crop, so that a structure touching the grid's edge still closes. */
const margin = 2;

/**
 * The label's mask on its box widened by `margin` voxels (zeros beyond the grid), as floats,
 * sampled every `stride` voxels in-plane, then smoothed with the [1 2 1]/4 kernel along every
 * axis whose spacing is within 1.25 × the finest: a coarse axis (thick slices) is left alone,
 * so that a vessel one slice thick keeps its surface.
 */
function smoothedMask(
  labels: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  labelValue: number,
  box: VoxelBox,
  stride: number,
): { values: Float32Array; size: [number, number, number]; start: Vec3; step: Vec3 } {
  const [nx, ny, nz] = geometry.dimensions;
  const step: Vec3 = [stride, stride, 1];
  const start: Vec3 = [
    box.start[0] - margin * step[0],
    box.start[1] - margin * step[1],
    box.start[2] - margin * step[2],
  ];
  const size: [number, number, number] = [0, 1, 2].map(
    (axis) => Math.ceil(box.size[axis] / step[axis]) + 2 * margin,
  ) as [number, number, number];
  const [sx, sy, sz] = size;
  const values = new Float32Array(sx * sy * sz);
  for (let c = 0; c < sz; c++) {
    const k = start[2] + c * step[2];
    if (k < 0 || k >= nz) continue;
    for (let b = 0; b < sy; b++) {
      const j = start[1] + b * step[1];
      if (j < 0 || j >= ny) continue;
      for (let a = 0; a < sx; a++) {
        const i = start[0] + a * step[0];
        if (i < 0 || i >= nx) continue;
        if (labels[i + nx * (j + ny * k)] === labelValue) values[a + sx * (b + sy * c)] = 1;
      }
    }
  }
  const finest = Math.min(...geometry.spacingMm.map((spacing, axis) => spacing * step[axis]));
  const strides = [1, sx, sx * sy];
  for (let axis = 0; axis < 3; axis++) {
    if (geometry.spacingMm[axis] * step[axis] > 1.25 * finest) continue;
    blurAlong(values, size, axis, strides[axis]);
  }
  return { values, size, start, step };
}

function blurAlong(
  values: Float32Array,
  size: readonly number[],
  axis: number,
  stride: number,
): void {
  const length = size[axis];
  const line = new Float32Array(length);
  const total = values.length;
  for (let first = 0; first < total; first++) {
    // `first` starts a line when its coordinate along the axis is 0.
    if (Math.floor(first / stride) % length !== 0) continue;
    for (let t = 0; t < length; t++) line[t] = values[first + t * stride];
    for (let t = 0; t < length; t++) {
      const before = t > 0 ? line[t - 1] : 0;
      const after = t < length - 1 ? line[t + 1] : 0;
      values[first + t * stride] = 0.25 * before + 0.5 * line[t] + 0.25 * after;
    }
  }
}

/**
 * The surface of one label: null when it has no voxel or contours to nothing. Structures with
 * a box of more than `coarseVoxels` voxels are sampled every second voxel in-plane (fewer
 * triangles for the skin and the liver; a display choice).
 */
export function labelSurface(
  labels: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  labelValue: number,
  box: VoxelBox,
  coarseVoxels = 1_500_000,
): SurfaceMesh | null {
  const stride = box.size[0] * box.size[1] * box.size[2] > coarseVoxels ? 2 : 1;
  const mask = smoothedMask(labels, geometry, labelValue, box, stride);
  const image = vtkImageData.newInstance();
  image.setDimensions(mask.size);
  image.setOrigin([0, 0, 0]);
  image.setSpacing([1, 1, 1]);
  const scalars = vtkDataArray.newInstance({ values: mask.values, numberOfComponents: 1 });
  image.getPointData().setScalars(scalars);
  const contour = vtkImageMarchingCubes.newInstance({
    contourValue: 0.5,
    computeNormals: false,
    mergePoints: true,
  });
  contour.setInputData(image);
  const output = contour.getOutputData();
  const crop = output.getPoints().getData() as Float32Array | Float64Array;
  const polys = Uint32Array.from(output.getPolys().getData());
  contour.delete();
  image.delete();
  scalars.delete();
  if (polys.length === 0) return null;
  // Crop index → grid index → LPS: affine, so three axis images and the origin suffice.
  const origin = voxelToLps(geometry, mask.start);
  const axes = ([0, 1, 2] as const).map((axis) => {
    const voxel: Vec3 = [...mask.start];
    voxel[axis] += mask.step[axis];
    const moved = voxelToLps(geometry, voxel);
    return [moved[0] - origin[0], moved[1] - origin[1], moved[2] - origin[2]];
  });
  const pointsLps = new Float32Array(crop.length);
  for (let p = 0; p < crop.length; p += 3) {
    for (let c = 0; c < 3; c++) {
      pointsLps[p + c] =
        origin[c] + axes[0][c] * crop[p] + axes[1][c] * crop[p + 1] + axes[2][c] * crop[p + 2];
    }
  }
  const determinant =
    axes[0][0] * (axes[1][1] * axes[2][2] - axes[1][2] * axes[2][1]) -
    axes[0][1] * (axes[1][0] * axes[2][2] - axes[1][2] * axes[2][0]) +
    axes[0][2] * (axes[1][0] * axes[2][1] - axes[1][1] * axes[2][0]);
  if (determinant < 0) flipTriangles(polys);
  return {
    labelValue,
    pointsLps,
    normals: vertexNormals(pointsLps, polys),
    polys,
    triangleCount: polys.length / 4,
  };
}

/** A mirroring map turns triangles inside out: swap two corners of each. */
function flipTriangles(polys: Uint32Array): void {
  for (let cell = 0; cell < polys.length; cell += 4) {
    const second = polys[cell + 2];
    polys[cell + 2] = polys[cell + 3];
    polys[cell + 3] = second;
  }
}

/**
 * Vertex normals as the normalised sum of the area-weighted normals of the triangles around
 * each vertex, oriented by the triangles' winding.
 */
export function vertexNormals(points: Float32Array, polys: Uint32Array): Float32Array {
  const normals = new Float32Array(points.length);
  for (let cell = 0; cell < polys.length; cell += 4) {
    const a = 3 * polys[cell + 1];
    const b = 3 * polys[cell + 2];
    const c = 3 * polys[cell + 3];
    const ux = points[b] - points[a];
    const uy = points[b + 1] - points[a + 1];
    const uz = points[b + 2] - points[a + 2];
    const vx = points[c] - points[a];
    const vy = points[c + 1] - points[a + 1];
    const vz = points[c + 2] - points[a + 2];
    const nx = uy * vz - uz * vy;
    const ny = uz * vx - ux * vz;
    const nz = ux * vy - uy * vx;
    for (const vertex of [a, b, c]) {
      normals[vertex] += nx;
      normals[vertex + 1] += ny;
      normals[vertex + 2] += nz;
    }
  }
  for (let v = 0; v < normals.length; v += 3) {
    const length = Math.hypot(normals[v], normals[v + 1], normals[v + 2]) || 1;
    normals[v] /= length;
    normals[v + 1] /= length;
    normals[v + 2] /= length;
  }
  return normals;
}
