import {
  boxGeometry,
  vector3,
  voxelToLps,
  type Vec3,
  type VolumeGeometry,
  type VoxelBox,
} from '@emberline/shared';
import { gridPlaneNormal } from '../slice-axes';
import { slicePlanePoint } from '../slice-viewport';
import {
  marchingSquares,
  svgPathOfLoops,
  zoneContourOnPlane,
  zoneRings,
  type ZoneMask,
} from './zone-contour';

/** A series grid turned 20° about the patient's z axis, anisotropic, off the origin. */
const turn = (20 * Math.PI) / 180;
const series: VolumeGeometry = {
  dimensions: [60, 50, 30],
  spacingMm: [0.8, 0.7, 2.5],
  originLps: [-100, 40, -60],
  direction: [
    [Math.cos(turn), Math.sin(turn), 0],
    [-Math.sin(turn), Math.cos(turn), 0],
    [0, 0, 1],
  ],
};

function zoneOn(box: VoxelBox, isInside: (voxel: Vec3) => boolean): ZoneMask {
  const geometry = boxGeometry(series, box);
  const [nx, ny, nz] = box.size;
  const mask = new Uint8Array(nx * ny * nz);
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) mask[i + nx * (j + ny * k)] = isInside([i, j, k]) ? 1 : 0;
    }
  }
  return { geometry, mask };
}

/** The series' own slice `index` along `axis`: a point on it and its normal. */
function seriesPlane(axis: 0 | 1 | 2, index: number): [Vec3, Vec3] {
  return [slicePlanePoint(series, axis, index), gridPlaneNormal(series, axis)];
}

function expectSamePoints(actual: Vec3[], expected: Vec3[]): void {
  expect(actual).toHaveLength(expected.length);
  for (const point of expected) {
    const nearest = Math.min(...actual.map((candidate) => vector3.distance(candidate, point)));
    expect(nearest).toBeLessThan(1e-9);
  }
}

/**
 * Area of a closed polygon in the plane spanned by two unit vectors: the shoelace formula
 * (Gauss's area formula, common practice).
 */
function polygonAreaMm2(loop: Vec3[], first: Vec3, second: Vec3): number {
  let twice = 0;
  loop.forEach((point, index) => {
    const next = loop[(index + 1) % loop.length];
    twice +=
      vector3.dot(point, first) * vector3.dot(next, second) -
      vector3.dot(next, first) * vector3.dot(point, second);
  });
  return Math.abs(twice) / 2;
}

describe('zone contour on a slice', () => {
  const box: VoxelBox = { start: [10, 20, 5], size: [6, 7, 4] };
  const single = zoneOn(box, ([i, j, k]) => i === 2 && j === 3 && k === 1);

  it('outlines one voxel of an offset sub-box where the series grid puts it', () => {
    // Zone voxel (2, 3, 1) is series voxel (12, 23, 6): on series slice k = 6, marching squares
    // at half crosses midway to the four neighbours, a diamond of half-voxel steps.
    const [point, normal] = seriesPlane(2, 6);
    const loops = zoneContourOnPlane(single, point, normal);
    expect(loops).toHaveLength(1);
    expectSamePoints(
      loops[0],
      [
        [11.5, 23, 6],
        [12.5, 23, 6],
        [12, 22.5, 6],
        [12, 23.5, 6],
      ].map((voxel) => voxelToLps(series, voxel as Vec3)),
    );
  });

  it('draws nothing on the series slices beside the voxel, nor on a slice missing the box', () => {
    for (const index of [5, 7, 20]) {
      const [point, normal] = seriesPlane(2, index);
      expect(zoneContourOnPlane(single, point, normal)).toEqual([]);
    }
  });

  it('cuts the box across its other axes for coronal and sagittal planes', () => {
    // Series slice i = 12 holds zone column i = 2: the diamond now spans j and k.
    const [point, normal] = seriesPlane(0, 12);
    const loops = zoneContourOnPlane(single, point, normal);
    expect(loops).toHaveLength(1);
    expectSamePoints(
      loops[0],
      [
        [12, 22.5, 6],
        [12, 23.5, 6],
        [12, 23, 5.5],
        [12, 23, 6.5],
      ].map((voxel) => voxelToLps(series, voxel as Vec3)),
    );
    const [beside, sameNormal] = seriesPlane(0, 13);
    expect(zoneContourOnPlane(single, beside, sameNormal)).toEqual([]);
  });

  it('encloses the area of a digitised disc, π r² (analytic), within 2 %', () => {
    const radiusMm = 9;
    const discBox: VoxelBox = { start: [4, 3, 2], size: [30, 32, 3] };
    const centre = voxelToLps(series, [19, 19, 3]);
    const disc = zoneOn(discBox, (voxel) => {
      const lps = voxelToLps(series, [voxel[0] + 4, voxel[1] + 3, voxel[2] + 2]);
      return Math.hypot(lps[0] - centre[0], lps[1] - centre[1]) <= radiusMm && voxel[2] === 1;
    });
    const [point, normal] = seriesPlane(2, 3);
    const loops = zoneContourOnPlane(disc, point, normal);
    expect(loops).toHaveLength(1);
    const area = polygonAreaMm2(loops[0], series.direction[0], series.direction[1]);
    expect(Math.abs(area / (Math.PI * radiusMm ** 2) - 1)).toBeLessThan(0.02);
    for (const vertex of loops[0])
      expect(vector3.dot(vector3.subtract(vertex, point), normal)).toBeCloseTo(0, 9);
  });
});

describe('zone rings', () => {
  it('rings a block every 5 mm across k (2.5 mm slices) and across i (0.8 mm columns)', () => {
    // A 20 × 5 × 9 block: k has 9 slices, every 2nd (5 mm / 2.5 mm) from slice 0 gives 5 rings;
    // i has 20 columns, every 6th (5 mm / 0.8 mm, rounded) from column 0 gives 4 rings.
    const block = zoneOn({ start: [3, 4, 2], size: [20, 5, 9] }, () => true);
    const axial: Vec3 = [0, 0, 1];
    const sagittal: Vec3 = [1, 0, 0];
    expect(zoneRings(block, 5, [axial])).toHaveLength(5);
    expect(zoneRings(block, 5, [sagittal])).toHaveLength(4);
    // Each axial ring lies on one of the series' own slices 2, 4, …, 10.
    const heights = zoneRings(block, 5, [axial]).map((loop) => {
      const k = (loop[0][2] - series.originLps[2]) / series.spacingMm[2];
      for (const point of loop) expect(point[2]).toBeCloseTo(loop[0][2], 9);
      return Math.round(k * 1000) / 1000;
    });
    expect(heights).toEqual([2, 4, 6, 8, 10]);
  });
});

describe('marching squares', () => {
  it('gives a ring two loops, its outer edge and its hole', () => {
    const loops = marchingSquares(5, 5, (u, v) => !(u === 2 && v === 2));
    expect(loops).toHaveLength(2);
  });

  it('keeps voxels that touch only at a corner apart', () => {
    const loops = marchingSquares(2, 2, (u, v) => u === v);
    expect(loops).toHaveLength(2);
    for (const loop of loops) expect(loop).toHaveLength(4);
  });

  it('leaves only the corners of a rectangle, its straight runs dropped', () => {
    const loops = marchingSquares(4, 3, () => true);
    expect(loops).toHaveLength(1);
    // Doubled coordinates: the half level runs half a pixel outside the pixel centres, so the
    // cut corners of the 4 × 3 block are the eight points of an octagon.
    expect(loops[0]).toHaveLength(8);
    for (const [x, y] of loops[0]) {
      expect(x === -1 || x === 7 || y === -1 || y === 5).toBe(true);
    }
  });
});

describe('svg path of loops', () => {
  it('writes each loop as a closed subpath in pixels, one decimal', () => {
    expect(
      svgPathOfLoops([
        [
          { x: 1, y: 2 },
          { x: 3.14159, y: 4 },
          { x: 5, y: 6 },
        ],
      ]),
    ).toBe('M1.0 2.0 L3.1 4.0 L5.0 6.0 Z');
  });
});
