/**
 * Trajectory safety of one applicator: along the straight path from entry to
 * tip, sampled every ≤ 0.5 mm, the nearest distance to every structure kind and where it lies,
 * the structures traversed (critical or not, by the safety profile), the path length against
 * the working length, the angle from the axial plane, liver capsule crossings and the
 * parenchyma crossed before the tumour. Positions LPS, millimetres.
 *
 * Clearances come from the crop's distance fields (kind-fields.ts) by trilinear interpolation,
 * within half a voxel diagonal of the distance to the kind's voxel centres (path-clearance.ts).
 * A crop field only sees the crop; where its smallest value along the path is too large to be
 * trusted (see `exactClearanceLimitMm`), or the crop holds none of the kind, the clearance is
 * measured exactly against the kind's boundary voxels on the whole series (segment-distance.ts).
 */
import type { ApplicatorSafety, KindClearance, TraversedStructure } from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import type { StructureKind } from '../api/structures';
import { halfVoxelDiagonalMm, pathClearance } from '../geometry/path-clearance';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { distance, type Vec3 } from '../geometry/vector';
import { outsideDistanceOfKind, type CropContext } from './kind-fields';
import { kindCode, kindOfCode } from './label-inventory';
import {
  capsuleCrossings,
  lengthsInsideKinds,
  parenchymaBeforeTumourMm,
  pathProfile,
} from './path-profile';
import { boundaryVoxelsOfKind, nearestApproachToVoxels, segmentOnGrid } from './segment-distance';

/** What the trajectory check reads besides the applicator. */
export interface TrajectoryContext {
  crop: CropContext;
  /** The series grid and its label map. */
  seriesGeometry: VolumeGeometry;
  labelMap: Uint8Array | Uint16Array;
  /**
   * The crop reaches at least this far beyond every point of the applicator paths (mm), except
   * where it stops at the edge of the series grid.
   */
  pathMarginMm: number;
  /** Crop voxels of each kind code (kind-fields.ts `voxelsPerKindCode`). */
  cropVoxelsPerKindCode: Float64Array;
}

/** An applicator as the trajectory check sees it. */
export interface TrajectoryApplicator {
  entryLps: Vec3;
  tipLps: Vec3;
  workingLengthMm: number;
}

/** The figures of one path and what the verdict needs to know about their reach. */
export interface TrajectoryFigures {
  safety: ApplicatorSafety;
  /** Path samples beyond the series grid: nothing is known of what lies there. */
  samplesOutsideSeries: number;
}

/**
 * Smallest crop-field clearance (mm) that is certainly the clearance on the whole series, for
 * a crop reaching `pathMarginMm` beyond the path: a voxel centre used by the interpolation lies
 * within one spacing of the path, so its crop value is exact below margin − largest spacing;
 * where it is not, its true value is at least that, and the interpolated value at least that
 * minus a voxel diagonal (the field is 1-Lipschitz).
 */
export function exactClearanceLimitMm(pathMarginMm: number, spacingMm: Readonly<Vec3>): number {
  return pathMarginMm - Math.max(...spacingMm) - 2 * halfVoxelDiagonalMm(spacingMm);
}

/** The trajectory figures of one applicator. */
export function assessTrajectory(
  context: TrajectoryContext,
  applicator: TrajectoryApplicator,
  safetyProfile: SafetyProfileBody,
): TrajectoryFigures {
  const { entryLps, tipLps } = applicator;
  const lengthMm = distance(entryLps, tipLps);
  const profile = pathProfile(
    context.labelMap,
    context.seriesGeometry,
    context.crop.inventory.kindCodeOfLabel,
    entryLps,
    tipLps,
  );
  const criticalKinds = new Set(
    safetyProfile.structureRules.filter((rule) => rule.isCritical).map((rule) => rule.kind),
  );
  const traversed: TraversedStructure[] = [...lengthsInsideKinds(profile)]
    .sort(([a], [b]) => a - b)
    .map(([code, lengthMm]) => {
      const kind = kindOfCode(code);
      return { kind, lengthMm, critical: criticalKinds.has(kind) };
    });
  const clearances = context.crop.inventory.kindsPresent
    .map((kind) => clearanceTo(context, kind, entryLps, tipLps))
    .filter((clearance): clearance is KindClearance => clearance !== null);
  return {
    safety: {
      pathLengthMm: lengthMm,
      workingLengthMm: applicator.workingLengthMm,
      angulationDeg: angulationFromAxialDeg(entryLps, tipLps),
      clearances,
      traversed,
      capsuleCrossings: capsuleCrossings(profile),
      parenchymaBeforeTumourMm: parenchymaBeforeTumourMm(profile),
    },
    samplesOutsideSeries: profile.samplesOutsideSeries,
  };
}

/**
 * Angle between the path and the axial plane (the plane normal to LPS z), degrees: 0 for a
 * path within an axial slice, 90 for a cranio-caudal one.
 */
export function angulationFromAxialDeg(entryLps: Readonly<Vec3>, tipLps: Readonly<Vec3>): number {
  const lengthMm = distance(entryLps, tipLps);
  if (lengthMm === 0) return 0;
  const sine = Math.min(1, Math.abs(tipLps[2] - entryLps[2]) / lengthMm);
  return (Math.asin(sine) * 180) / Math.PI;
}

function clearanceTo(
  context: TrajectoryContext,
  kind: StructureKind,
  entryLps: Vec3,
  tipLps: Vec3,
): KindClearance | null {
  const { crop } = context;
  if (context.cropVoxelsPerKindCode[kindCode(kind)] > 0) {
    const field = { valuesMm: outsideDistanceOfKind(crop, kind), geometry: crop.geometry };
    const clearance = pathClearance(field, entryLps, tipLps);
    const limitMm = exactClearanceLimitMm(context.pathMarginMm, crop.geometry.spacingMm);
    if (clearance.minimumDistanceMm !== null && clearance.minimumDistanceMm < limitMm) {
      return {
        kind,
        minDistanceMm: clearance.minimumDistanceMm,
        atMm: clearance.minimumFromEntryMm ?? 0,
      };
    }
  }
  const onGrid = segmentOnGrid(context.seriesGeometry, entryLps, tipLps);
  if (onGrid === null) return null;
  const boundary = boundaryVoxelsOfKind(
    context.labelMap,
    context.seriesGeometry,
    crop.inventory,
    kind,
    crop.cache,
    crop.seriesKey,
  );
  const approach = nearestApproachToVoxels(
    context.seriesGeometry,
    boundary,
    entryLps,
    tipLps,
    onGrid,
  );
  return approach === null
    ? null
    : { kind, minDistanceMm: approach.distanceMm, atMm: approach.atMm };
}
