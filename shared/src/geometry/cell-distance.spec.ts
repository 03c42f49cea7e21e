import { describe, expect, it } from 'vitest';
import {
  boundaryVoxelsOfMask,
  packCells,
  segmentApproachToCells,
  segmentBoxSquared,
} from './cell-distance';
import { voxelCount, voxelToLps, type VolumeGeometry } from './patient-geometry';
import { addScaled, cross, dot, subtract, type Vec3 } from './vector';

/** An oblique grid: the axes turned 20° about (1, 2, 2)/3 (Rodrigues' formula). */
function obliqueGeometry(dimensions: [number, number, number], spacingMm: Vec3): VolumeGeometry {
  const axis: Vec3 = [1 / 3, 2 / 3, 2 / 3];
  const angleRad = (20 * Math.PI) / 180;
  const turn = (vector: Vec3): Vec3 => {
    const across = cross(axis, vector);
    const along = dot(axis, vector) * (1 - Math.cos(angleRad));
    return [0, 1, 2].map(
      (index) =>
        vector[index] * Math.cos(angleRad) +
        across[index] * Math.sin(angleRad) +
        axis[index] * along,
    ) as Vec3;
  };
  return {
    dimensions,
    spacingMm,
    originLps: [-12, 7, -30],
    direction: [turn([1, 0, 0]), turn([0, 1, 0]), turn([0, 0, 1])],
  };
}

const axial = (dimensions: [number, number, number], spacingMm: Vec3): VolumeGeometry => ({
  dimensions,
  spacingMm,
  originLps: [0, 0, 0],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
});

/** A small pseudo-random generator (Park–Miller), so that the cases repeat. */
function random(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
}

/**
 * Reference by brute force: the distance from a point to a box is the norm of the per-axis
 * gaps outside it (common practice; Ericson, Real-Time Collision Detection §5.1.3, from
 * memory), taken at 4001 points along the segment over every labelled voxel, in the grid frame.
 */
function bruteForce(
  geometry: VolumeGeometry,
  mask: Uint8Array,
  entry: Vec3,
  tip: Vec3,
  widenVoxels: number,
): number {
  const [nx, ny] = geometry.dimensions;
  const w = geometry.spacingMm;
  const toGrid = (point: Vec3): Vec3 => {
    const offset = subtract(point, geometry.originLps);
    return [0, 1, 2].map((axis) => dot(offset, geometry.direction[axis])) as Vec3;
  };
  const a = toGrid(entry);
  const b = toGrid(tip);
  let best = Infinity;
  for (let index = 0; index < mask.length; index++) {
    if (mask[index] === 0) continue;
    const centre = [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
    for (let sample = 0; sample <= 4000; sample++) {
      const t = sample / 4000;
      let squared = 0;
      for (let axis = 0; axis < 3; axis++) {
        const position = a[axis] + t * (b[axis] - a[axis]);
        const gap = Math.abs(position - centre[axis] * w[axis]) - (0.5 + widenVoxels) * w[axis];
        if (gap > 0) squared += gap * gap;
      }
      best = Math.min(best, squared);
    }
  }
  return Math.sqrt(best);
}

function approachOf(geometry: VolumeGeometry, mask: Uint8Array, entry: Vec3, tip: Vec3) {
  const packed = packCells(boundaryVoxelsOfMask(mask, geometry.dimensions), geometry.dimensions);
  const found = segmentApproachToCells(geometry, packed, entry, tip);
  if (!found) throw new Error('empty mask');
  return found;
}

describe('segmentBoxSquared', () => {
  const scratch = new Float64Array(8);
  it('is the gap to a box beside a segment that runs past it', () => {
    // Segment from (−5, 3, 0) to (5, 3, 0); unit box about the origin: gap 3 − 0.5 in y
    // (point-to-box distance by hand), nearest anywhere over x ∈ [−0.5, 0.5].
    const found = segmentBoxSquared(
      { start: [-5, 3, 0], step: [10, 0, 0], from: 0, to: 1 },
      [-0.5, -0.5, -0.5],
      [0.5, 0.5, 0.5],
      scratch,
    );
    expect(found.squared).toBeCloseTo(2.5 * 2.5, 12);
    expect(found.fraction).toBeCloseTo(0.45, 12);
  });

  it('is the corner distance for a segment passing a box diagonally', () => {
    // The line x + y = 4 (z = 0) passes the corner (0.5, 0.5) of the unit box at the
    // point-to-line distance |0.5 + 0.5 − 4| / √2 = 3/√2 (by hand).
    const found = segmentBoxSquared(
      { start: [4, 0, 0], step: [-4, 4, 0], from: 0, to: 1 },
      [-0.5, -0.5, -0.5],
      [0.5, 0.5, 0.5],
      scratch,
    );
    expect(found.squared).toBeCloseTo(4.5, 12);
    expect(found.fraction).toBeCloseTo(0.5, 12);
  });

  it('is 0 where the segment enters the box', () => {
    const found = segmentBoxSquared(
      { start: [-3, 0.2, 0.1], step: [6, 0, 0], from: 0, to: 1 },
      [-0.5, -0.5, -0.5],
      [0.5, 0.5, 0.5],
      scratch,
    );
    expect(found.squared).toBe(0);
  });
});

describe('segmentApproachToCells', () => {
  it('measures to the voxel faces: three voxels beside a one-voxel vessel is 2.5 spacings', () => {
    // A voxel at (12, 10, 5) on a 1 × 1 × 2 mm grid; a path along i at j = 13, k = 5: the
    // nearest face is the cell's at y = 10.5 mm, 2.5 mm off (3 mm to the centre, less ½ mm).
    const geometry = axial([24, 20, 10], [1, 1, 2]);
    const mask = new Uint8Array(voxelCount(geometry.dimensions));
    mask[12 + 24 * (10 + 20 * 5)] = 1;
    const found = approachOf(geometry, mask, [2, 13, 10], [22, 13, 10]);
    expect(found.distanceMm).toBeCloseTo(2.5, 12);
    // Widened by a voxel on every side the cell reaches y = 11.5 mm: 1.5 mm.
    expect(found.lowerBoundMm).toBeCloseTo(1.5, 12);
    // Nearest anywhere over x ∈ [11.5, 12.5]: the first such point, 9.5 mm from the entry.
    expect(found.atMm).toBeCloseTo(9.5, 9);
  });

  it('counts the slice thickness: two slices above a voxel is 3 mm to its top face', () => {
    // Path at z = 14 mm over the voxel centred at z = 10 mm of a 2 mm slice: its top face
    // lies at 11 mm (3 mm), widened by one slice at 13 mm (1 mm).
    const geometry = axial([24, 20, 10], [1, 1, 2]);
    const mask = new Uint8Array(voxelCount(geometry.dimensions));
    mask[12 + 24 * (10 + 20 * 5)] = 1;
    const found = approachOf(geometry, mask, [2, 10, 14], [22, 10, 14]);
    expect(found.distanceMm).toBeCloseTo(3, 12);
    expect(found.lowerBoundMm).toBeCloseTo(1, 12);
  });

  it('agrees with a brute-force search on random masks of an oblique anisotropic grid', () => {
    const geometry = obliqueGeometry([23, 19, 9], [0.7, 0.9, 2.5]);
    const next = random(7);
    for (let trial = 0; trial < 6; trial++) {
      const mask = new Uint8Array(voxelCount(geometry.dimensions));
      // A few blobs of voxels, some touching the grid's edge.
      for (let blob = 0; blob < 3; blob++) {
        const centre = [next() * 23, next() * 19, next() * 9];
        mask.forEach((_, index) => {
          const i = index % 23;
          const j = Math.floor(index / 23) % 19;
          const k = Math.floor(index / (23 * 19));
          if (Math.hypot(i - centre[0], j - centre[1], 2 * (k - centre[2])) < 3) mask[index] = 1;
        });
      }
      const entry = voxelToLps(geometry, [next() * 30 - 4, next() * 25 - 3, next() * 14 - 2]);
      const tip = voxelToLps(geometry, [next() * 30 - 4, next() * 25 - 3, next() * 14 - 2]);
      const found = approachOf(geometry, mask, entry, tip);
      // Sampling 4001 points finds the minimum within ½·step·(slope ≤ 1) of the exact one.
      const slackMm = Math.hypot(...subtract(tip, entry)) / 8000;
      const exact = bruteForce(geometry, mask, entry, tip, 0);
      expect(found.distanceMm).toBeLessThanOrEqual(exact + 1e-9);
      expect(found.distanceMm).toBeGreaterThanOrEqual(exact - slackMm);
      const widened = bruteForce(geometry, mask, entry, tip, 1);
      expect(found.lowerBoundMm).toBeLessThanOrEqual(widened + 1e-9);
      expect(found.lowerBoundMm).toBeGreaterThanOrEqual(widened - slackMm);
      // The reported place is a point of the segment at the reported distance.
      const along = found.atMm / Math.hypot(...subtract(tip, entry));
      const at = addScaled(entry, subtract(tip, entry), along);
      expect(bruteForce(geometry, mask, at, at, 0)).toBeCloseTo(found.distanceMm, 9);
    }
  });

  it('is 0 for a path running through the structure, and null for an empty one', () => {
    const geometry = axial([10, 10, 10], [1, 1, 1]);
    const mask = new Uint8Array(voxelCount(geometry.dimensions));
    for (let i = 3; i < 7; i++) mask[i + 10 * (5 + 10 * 5)] = 1;
    expect(approachOf(geometry, mask, [0, 5, 5], [9, 5, 5]).distanceMm).toBe(0);
    const empty = packCells(new Int32Array(0), geometry.dimensions);
    expect(segmentApproachToCells(geometry, empty, [0, 0, 0], [1, 1, 1])).toBeNull();
  });
});

describe('boundaryVoxelsOfMask', () => {
  it('keeps the voxels with a face outside and those on the grid edge, not the inner ones', () => {
    // A 3 × 3 × 3 block in a 5³ grid: 26 boundary voxels, the centre one inner.
    const geometry = axial([5, 5, 5], [1, 1, 1]);
    const mask = new Uint8Array(125);
    for (let k = 1; k < 4; k++)
      for (let j = 1; j < 4; j++) for (let i = 1; i < 4; i++) mask[i + 5 * (j + 5 * k)] = 1;
    const boundary = boundaryVoxelsOfMask(mask, geometry.dimensions);
    expect(boundary).toHaveLength(26);
    expect([...boundary]).not.toContain(2 + 5 * (2 + 5 * 2));
    const full = boundaryVoxelsOfMask(new Uint8Array(27).fill(1), [3, 3, 3]);
    expect(full).toHaveLength(26);
  });
});
