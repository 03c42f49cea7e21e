/**
 * The two crops of one assessment (plan-crop.ts): the path crop around every applicator path,
 * and the zone crop around the table zones, the tumours they may treat, the vessels beside them
 * and the physics model's grid; and which tumours are candidates for the coverage.
 * Series grid; positions LPS, millimetres.
 */
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { addScaled, normalize, subtract, type Vec3 } from '../geometry/vector';
import type { VoxelBox } from '../geometry/voxel-box';
import type { AssessmentApplicator, AssessmentInput } from './assessment-input';
import { BIOHEAT_GRID_MARGIN_MM } from './bioheat-zone';
import { runCache, type DistanceFieldCache } from './distance-field-cache';
import { ellipsoidVoxelExtent, type EllipsoidZone } from './ellipsoid-zone';
import { EngineRefusal } from './engine-refusal';
import { statisticsOf, type LabelInventory } from './label-inventory';
import { cropBoxAround, prepareCrop, type PreparedCrop } from './plan-crop';
import { segmentOnGrid } from './segment-distance';
import { extentOfLabel, nearestTumourLabel, tumourLabelsMeeting } from './treated-tumours';
import { extentOfLpsPoints, type VoxelExtent } from './voxel-extent';

/**
 * How far the zone crop reaches beyond the heat-sink distance, mm: at least this, and at least
 * the heat-sink diameter, so that a vessel beside the zone is seen across twice the width that
 * makes it a heat sink and its calibre is read at the threshold, however the profile sets it.
 */
export const VESSEL_ALLOWANCE_MM = 10;

export interface PlannedCrops {
  path: PreparedCrop;
  zone: PreparedCrop;
  /** Tumour labels nearest each tip, and those a zone may reach. */
  nearestTumours: number[];
  candidateTumours: number[];
  /** The physics model's grid within the zone crop (its voxel indices), when it runs. */
  bioheatBox: VoxelBox | null;
}

/**
 * The path crop: every path padded by the crop margin. The zone crop: the zones padded by the
 * heat-sink distance and the widest vessel radius read, the tumours they may treat padded by
 * two voxels (for their surface), and the physics model's grid when it runs.
 */
export function planCrops(
  input: AssessmentInput,
  inventory: LabelInventory,
  ellipsoids: readonly EllipsoidZone[],
  withBioheat: boolean,
  externalCache?: DistanceFieldCache,
): PlannedCrops {
  const { geometry, safetyProfile } = input;
  const onGrid = input.applicators.filter(
    (applicator) => segmentOnGrid(geometry, applicator.entry, applicator.target) !== null,
  );
  if (onGrid.length === 0) {
    throw new EngineRefusal(
      'plan-outside-series',
      'applicators',
      'Every applicator path lies wholly outside the series grid: there is nothing to assess ' +
        'the plan against.',
    );
  }
  const pathBox = cropBoxAround(
    geometry,
    onGrid.map((applicator) => ({
      extent: extentOfLpsPoints(geometry, [applicator.entry, applicator.target]),
      marginMm: input.options.cropMarginMm,
    })),
  );
  const zoneExtents = ellipsoids.map((zone) => ellipsoidVoxelExtent(zone, geometry));
  const heatingExtents = withBioheat
    ? input.applicators.map((applicator) => heatingSegmentExtent(geometry, applicator))
    : [];
  const reach = (extent: VoxelExtent, reachMm: number): VoxelExtent => ({
    min: extent.min.map((value, axis) => value - reachMm / geometry.spacingMm[axis]) as Vec3,
    max: extent.max.map((value, axis) => value + reachMm / geometry.spacingMm[axis]) as Vec3,
  });
  const nearestTumours = [
    ...new Set(
      input.applicators
        .map((applicator) =>
          nearestTumourLabel(input.labelMap, geometry, inventory, applicator.target),
        )
        .filter((label): label is number => label !== null),
    ),
  ];
  const candidateTumours = [
    ...new Set([
      ...nearestTumours,
      ...tumourLabelsMeeting(inventory, [
        ...zoneExtents,
        ...heatingExtents.map((extent) => reach(extent, BIOHEAT_GRID_MARGIN_MM)),
      ]),
    ]),
  ];
  const zoneMarginMm =
    safetyProfile.heatSinkDistanceMm +
    Math.max(VESSEL_ALLOWANCE_MM, safetyProfile.heatSinkDiameterMm);
  const tumourMarginMm = 2 * Math.max(...geometry.spacingMm);
  const zoneBox = cropBoxAround(geometry, [
    ...zoneExtents.map((extent) => ({ extent, marginMm: zoneMarginMm })),
    ...heatingExtents.map((extent) => ({ extent, marginMm: BIOHEAT_GRID_MARGIN_MM })),
    ...candidateTumours.map((label) => ({
      extent: extentOfLabel(statisticsOf(inventory, label)),
      marginMm: tumourMarginMm,
    })),
  ]);
  if (pathBox === null || zoneBox === null) {
    throw new EngineRefusal(
      'plan-outside-series',
      'applicators',
      'The ablation zones lie wholly outside the series grid: there is nothing to assess them ' +
        'against.',
    );
  }
  const cache = runCache(input.seriesKey === undefined ? undefined : externalCache);
  const seriesKey = input.seriesKey ?? 'this-run';
  const prepare = (box: VoxelBox) =>
    prepareCrop(input.labelMap, geometry, box, inventory, cache, seriesKey);
  const zone = prepare(zoneBox);
  let bioheatBox: VoxelBox | null = null;
  if (withBioheat) {
    const inZoneCrop = heatingExtents.map((extent) => ({
      min: extent.min.map((value, axis) => value - zoneBox.start[axis]) as Vec3,
      max: extent.max.map((value, axis) => value - zoneBox.start[axis]) as Vec3,
    }));
    bioheatBox = cropBoxAround(
      zone.context.geometry,
      inZoneCrop.map((extent) => ({ extent, marginMm: BIOHEAT_GRID_MARGIN_MM })),
      1,
    );
  }
  return { path: prepare(pathBox), zone, nearestTumours, candidateTumours, bioheatBox };
}

/** Extent (series voxel indices) of an applicator's heating segment: tip to active length. */
function heatingSegmentExtent(
  geometry: VolumeGeometry,
  applicator: AssessmentApplicator,
): VoxelExtent {
  const back = addScaled(
    applicator.target,
    normalize(subtract(applicator.entry, applicator.target)),
    applicator.profile.activeLengthMm,
  );
  return extentOfLpsPoints(geometry, [applicator.target, back]);
}
