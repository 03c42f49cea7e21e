/**
 * A crop grid for a zone simulation: a box around the applicators' heating segments, aligned
 * with the series' axes, at a chosen spacing.
 */
import type { GridDimensions, VolumeGeometry } from '../geometry/patient-geometry';
import { addScaled, dot, normalize, subtract, type Vec3 } from '../geometry/vector';
import {
  checkOrthonormalGrid,
  checkZoneApplicator,
  type ZoneApplicator,
} from './applicator-heating';

/**
 * Room around the heating segments for the zone, millimetres: zone tables rarely exceed 50 mm
 * across (our working figure), and a wall held at 37 °C should stay ~3 perfusion lengths
 * (~13 mm) beyond the zone's edge.
 */
export const DEFAULT_CROP_MARGIN_MM = 30;

/**
 * Crop grid around the heating segments of the applicators (`activeLengthMm` long, beginning
 * `segmentOffsetMm` behind the tip; LPS millimetres), grown by `marginMm` on every side, with the series' direction cosines
 * (`direction`, orthonormal) and the given voxel spacing (millimetres along i, j, k).
 */
export function zoneCropGeometry(
  applicators: readonly Readonly<ZoneApplicator>[],
  direction: VolumeGeometry['direction'],
  spacingMm: Vec3,
  marginMm = DEFAULT_CROP_MARGIN_MM,
): VolumeGeometry {
  if (applicators.length === 0)
    throw new RangeError('applicators must hold at least one applicator');
  if (!spacingMm.every((h) => h > 0 && Number.isFinite(h))) {
    throw new RangeError('spacingMm must be 3 positive numbers');
  }
  if (!(marginMm >= 0) || !Number.isFinite(marginMm)) {
    throw new RangeError('marginMm must be 0 or more');
  }
  checkOrthonormalGrid({ dimensions: [1, 1, 1], spacingMm, originLps: [0, 0, 0], direction });
  const low: Vec3 = [Infinity, Infinity, Infinity];
  const high: Vec3 = [-Infinity, -Infinity, -Infinity];
  applicators.forEach((applicator, index) => {
    checkZoneApplicator(applicator, `applicators[${index}]`);
    const axis = normalize(subtract(applicator.entryLps, applicator.tipLps));
    const startMm = applicator.segmentOffsetMm ?? 0;
    const front = addScaled(applicator.tipLps, axis, startMm);
    const back = addScaled(applicator.tipLps, axis, startMm + applicator.activeLengthMm);
    for (const point of [front, back]) {
      for (let axisIndex = 0; axisIndex < 3; axisIndex++) {
        const coordinate = dot(point, direction[axisIndex]);
        low[axisIndex] = Math.min(low[axisIndex], coordinate - marginMm);
        high[axisIndex] = Math.max(high[axisIndex], coordinate + marginMm);
      }
    }
  });
  const dimensions = [0, 1, 2].map(
    (axis) => Math.ceil((high[axis] - low[axis]) / spacingMm[axis]) + 1,
  ) as GridDimensions;
  // Centre the grid on the box: the rounding up spreads evenly on both sides.
  const originInGrid = [0, 1, 2].map(
    (axis) => (low[axis] + high[axis]) / 2 - ((dimensions[axis] - 1) * spacingMm[axis]) / 2,
  );
  let originLps: Vec3 = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    originLps = addScaled(originLps, direction[axis], originInGrid[axis]);
  }
  return { dimensions, spacingMm: [...spacingMm], originLps, direction };
}
