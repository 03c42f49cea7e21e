import { describe, expect, it } from 'vitest';
import { geometryFromSlices, voxelToLps } from './patient-geometry';
import type { Vec3 } from './vector';
import { boxGeometry, checkBoxInsideGrid, wholeGridBox, type VoxelBox } from './voxel-box';

// An oblique series of 6 slices, 40 × 30 pixels (DICOM PS3.3 C.7.6.2.1.1 geometry).
const orientation = [0.8, 0.6, 0, -0.6, 0.8, 0];
const { geometry } = geometryFromSlices(
  [0, 1, 2, 3, 4, 5].map((k) => ({
    imagePositionPatient: [-100, 20, 30 + 2 * k],
    imageOrientationPatient: orientation,
    pixelSpacing: [0.9, 0.7],
    rows: 30,
    columns: 40,
  })),
);

describe('a box’s own grid', () => {
  const box: VoxelBox = { start: [5, 7, 2], size: [20, 10, 3] };
  const inner = boxGeometry(geometry, box);

  it.each([
    [0, 0, 0],
    [19, 9, 2],
    [3.5, 2.25, 1],
  ] as Vec3[])(
    'puts box voxel %s where the whole grid puts it, shifted by the start',
    (...voxel) => {
      const shifted: Vec3 = [voxel[0] + 5, voxel[1] + 7, voxel[2] + 2];
      const expected = voxelToLps(geometry, shifted);
      voxelToLps(inner, voxel).forEach((value, axis) =>
        expect(value).toBeCloseTo(expected[axis], 9),
      );
    },
  );

  it('keeps spacing and directions and takes the box size as dimensions', () => {
    expect(inner.dimensions).toEqual([20, 10, 3]);
    expect(inner.spacingMm).toEqual(geometry.spacingMm);
    expect(inner.direction).toEqual(geometry.direction);
  });

  it('is the grid itself for the whole-grid box', () => {
    expect(boxGeometry(geometry, wholeGridBox(geometry.dimensions))).toEqual(geometry);
  });
});

describe('boxes that do not fit', () => {
  it.each([
    { name: 'running past the last column', box: { start: [30, 0, 0], size: [11, 1, 1] } },
    { name: 'starting before the first row', box: { start: [0, -1, 0], size: [1, 1, 1] } },
    { name: 'with no slice', box: { start: [0, 0, 0], size: [1, 1, 0] } },
    { name: 'with a fractional start', box: { start: [0.5, 0, 0], size: [1, 1, 1] } },
  ] as { name: string; box: VoxelBox }[])('refuses a box $name', ({ box }) => {
    expect(() => checkBoxInsideGrid(box, geometry.dimensions)).toThrow(RangeError);
  });

  it('accepts the box of the last voxel alone', () => {
    expect(() =>
      checkBoxInsideGrid({ start: [39, 29, 5], size: [1, 1, 1] }, geometry.dimensions),
    ).not.toThrow();
  });
});
