import { describe, expect, it } from 'vitest';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { lpsToVoxel } from '../geometry/patient-geometry';
import { addScaled, normalize, subtract, type Vec3 } from '../geometry/vector';
import type { ZoneApplicator } from './applicator-heating';
import { zoneCropGeometry } from './zone-crop';

/** A coronal series' axes (DICOM IOP 1,0,0 / 0,0,−1; normal X × Y = (0, 1, 0)). */
const CORONAL: VolumeGeometry['direction'] = [
  [1, 0, 0],
  [0, 0, -1],
  [0, 1, 0],
];

const applicators: ZoneApplicator[] = [
  {
    entryLps: [80, -120, 40],
    tipLps: [40, -30, 10],
    activeLengthMm: 30,
    powerW: 60,
    timeS: 600,
    calibration: 0.3,
  },
  {
    entryLps: [90, -110, 60],
    tipLps: [55, -25, 20],
    activeLengthMm: 15,
    powerW: 60,
    timeS: 600,
    calibration: 0.3,
  },
];

describe('crop grid around the heating segments', () => {
  it('holds every segment with the margin on all sides, on the series’ axes', () => {
    const geometry = zoneCropGeometry(applicators, CORONAL, [1.5, 1.5, 2], 20);
    expect(geometry.direction).toBe(CORONAL);
    expect(geometry.spacingMm).toEqual([1.5, 1.5, 2]);
    for (const applicator of applicators) {
      const axis = normalize(subtract(applicator.entryLps, applicator.tipLps));
      const back = addScaled(applicator.tipLps, axis, applicator.activeLengthMm);
      for (const point of [applicator.tipLps, back]) {
        const voxel = lpsToVoxel(geometry, point);
        voxel.forEach((index, axisIndex) => {
          const marginVoxels = 20 / geometry.spacingMm[axisIndex];
          expect(index).toBeGreaterThanOrEqual(marginVoxels - 1e-9);
          expect(index).toBeLessThanOrEqual(
            geometry.dimensions[axisIndex] - 1 - marginVoxels + 1e-9,
          );
        });
      }
    }
  });

  it('is no larger than the box plus one voxel along each axis', () => {
    const [only] = applicators;
    const geometry = zoneCropGeometry([only], CORONAL, [2, 2, 2], 25);
    const axis = normalize(subtract(only.entryLps, only.tipLps));
    const back = addScaled(only.tipLps, axis, only.activeLengthMm);
    CORONAL.forEach((direction, axisIndex) => {
      const spanMm = Math.abs(
        subtract(back, only.tipLps).reduce(
          (sum, value, index) => sum + value * direction[index],
          0,
        ),
      );
      const extentMm = (geometry.dimensions[axisIndex] - 1) * 2;
      expect(extentMm).toBeGreaterThanOrEqual(spanMm + 50 - 1e-9);
      expect(extentMm).toBeLessThan(spanMm + 50 + 2);
    });
  });

  it('refuses no applicators, a bad spacing or margin', () => {
    const spacing: Vec3 = [2, 2, 2];
    expect(() => zoneCropGeometry([], CORONAL, spacing)).toThrow(/at least one applicator/);
    expect(() => zoneCropGeometry(applicators, CORONAL, [2, 0, 2])).toThrow(/spacingMm/);
    expect(() => zoneCropGeometry(applicators, CORONAL, spacing, -1)).toThrow(/marginMm/);
  });
});
