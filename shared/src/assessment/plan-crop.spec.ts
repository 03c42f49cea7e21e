import { describe, expect, it } from 'vitest';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { cropBoxAround, cropLabels } from './plan-crop';

const geometry: VolumeGeometry = {
  dimensions: [100, 80, 40],
  spacingMm: [0.5, 1, 2.5],
  originLps: [0, 0, 0],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};

describe('cropBoxAround', () => {
  it('pads by the margin in millimetres on each axis, snapped outwards', () => {
    // Voxels 40–50 along i, 30–35 along j, 10–12 along k, padded by 5 mm: 10, 5 and 2 voxels,
    // then widened to multiples of 8 (the box ends one past its last voxel).
    const box = cropBoxAround(geometry, [
      { extent: { min: [40, 30, 10], max: [50, 35, 12] }, marginMm: 5 },
    ]);
    expect(box).toEqual({ start: [24, 24, 8], size: [40, 24, 8] });
  });

  it('stops at the grid and holds every region', () => {
    const box = cropBoxAround(
      geometry,
      [
        { extent: { min: [2, 3, 1], max: [4, 5, 2] }, marginMm: 5 },
        { extent: { min: [90, 70, 30], max: [95, 75, 35] }, marginMm: 10 },
      ],
      1,
    );
    expect(box).toEqual({ start: [0, 0, 0], size: [100, 80, 40] });
  });

  it('answers null for a region wholly off the grid', () => {
    expect(
      cropBoxAround(geometry, [{ extent: { min: [300, 0, 0], max: [310, 5, 5] }, marginMm: 1 }]),
    ).toBeNull();
  });
});

describe('cropLabels', () => {
  it('copies the box out of the label map, i fastest', () => {
    const labels = new Uint16Array(100 * 80 * 40).map((_, index) => index % 65_536);
    const crop = cropLabels(labels, geometry, { start: [3, 2, 1], size: [2, 2, 2] });
    const at = (i: number, j: number, k: number) => (i + 100 * (j + 80 * k)) % 65_536;
    expect([...crop]).toEqual([
      at(3, 2, 1),
      at(4, 2, 1),
      at(3, 3, 1),
      at(4, 3, 1),
      at(3, 2, 2),
      at(4, 2, 2),
      at(3, 3, 2),
      at(4, 3, 2),
    ]);
    expect(crop).toBeInstanceOf(Uint16Array);
  });
});
