/**
 * Trajectory safety of one applicator: along the straight path from entry to
 * tip, sampled every ≤ 0.5 mm, the nearest distance to every structure kind and where it lies,
 * the structures traversed (critical or not, by the safety profile), the path length against
 * the working length, the angle from the axial plane, liver capsule crossings and the
 * parenchyma crossed before the tumour. Positions LPS, millimetres.
 *
 * Clearances are exact distances from the segment to the faces of the kind's voxels (the
 * union of their cells, geometry/cell-distance.ts), each with its conservative bound: the
 * distance to those cells widened by a voxel on every side. They are measured on the crop
 * first; where a result is too large to rule out a nearer voxel beyond the crop (see
 * `croppedClearanceLimitMm`), or the crop holds none of the kind, against the kind's boundary
 * voxels on the whole series (segment-distance.ts).
 */
import type { ApplicatorSafety, KindClearance, TraversedStructure } from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import type { StructureKind } from '../api/structures';
import { segmentApproachToCells, type CellApproach } from '../geometry/cell-distance';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { distance, dot, type Vec3 } from '../geometry/vector';
import { boundaryCellsOnCrop, type CropContext } from './kind-fields';
import { kindCode, kindOfCode } from './label-inventory';
import {
  capsuleCrossings,
  lengthsInsideKinds,
  parenchymaBeforeTumourMm,
  pathProfile,
  type PathProfile,
} from './path-profile';
import { boundaryCellsOfKind, segmentOnGrid } from './segment-distance';

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
 * Largest clearance (mm) measured on a crop reaching `pathMarginMm` beyond the path that is
 * certainly the clearance on the whole series: a voxel left out of the crop has its centre at
 * least the margin from every point of the path along some grid axis, so its cell lies at
 * least margin − ½ spacing away, and widened by a voxel, margin − 1½ spacings.
 */
export function croppedClearanceLimitMm(
  pathMarginMm: number,
  spacingMm: Readonly<Vec3>,
  isWidened: boolean,
): number {
  return pathMarginMm - (isWidened ? 1.5 : 0.5) * Math.max(...spacingMm);
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
    .map((kind) => clearanceTo(context, kind, profile, entryLps, tipLps))
    .filter((clearance): clearance is KindClearance => clearance !== null);
  const parenchymaMm = parenchymaBeforeTumourMm(profile);
  return {
    safety: {
      pathLengthMm: lengthMm,
      workingLengthMm: applicator.workingLengthMm,
      angulationDeg: angulationFromAxialDeg(entryLps, tipLps),
      clearances,
      traversed,
      capsuleCrossings: capsuleCrossings(profile),
      parenchymaBeforeTumourMm: parenchymaMm,
      parenchymaBeforeTumourLowerMm:
        parenchymaMm === null
          ? null
          : Math.max(
              0,
              parenchymaMm -
                2 * voxelExtentAlongMm(context.seriesGeometry, entryLps, tipLps) -
                profile.sampling.stepMm,
            ),
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

/**
 * Extent of one voxel along the path, mm: Σ |uₐ|·wₐ for the path's unit direction u in the
 * grid's axes (a box of sides wₐ spans that much along u). Each end of a length read along the
 * path (a surface crossed) may lie that far from where the labels put it.
 */
export function voxelExtentAlongMm(
  geometry: VolumeGeometry,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
): number {
  const lengthMm = distance(entryLps, tipLps);
  if (lengthMm === 0) return Math.max(...geometry.spacingMm);
  const unit: Vec3 = [
    (tipLps[0] - entryLps[0]) / lengthMm,
    (tipLps[1] - entryLps[1]) / lengthMm,
    (tipLps[2] - entryLps[2]) / lengthMm,
  ];
  return [0, 1, 2].reduce(
    (sum, axis) => sum + Math.abs(dot(unit, geometry.direction[axis])) * geometry.spacingMm[axis],
    0,
  );
}

function clearanceTo(
  context: TrajectoryContext,
  kind: StructureKind,
  profile: PathProfile,
  entryLps: Vec3,
  tipLps: Vec3,
): KindClearance | null {
  const { crop } = context;
  const onGrid = segmentOnGrid(context.seriesGeometry, entryLps, tipLps);
  if (onGrid === null) return null;
  // A sample inside the kind: the path enters it (also where it never crosses a boundary voxel,
  // running wholly inside).
  const firstInside = profile.codes.indexOf(kindCode(kind));
  if (firstInside >= 0) {
    return { kind, minDistanceMm: 0, lowerBoundMm: 0, atMm: firstInside * profile.sampling.stepMm };
  }
  if (context.cropVoxelsPerKindCode[kindCode(kind)] > 0) {
    const approach = segmentApproachToCells(
      crop.geometry,
      boundaryCellsOnCrop(crop, kind),
      entryLps,
      tipLps,
    );
    const spacingMm = crop.geometry.spacingMm;
    if (
      approach !== null &&
      approach.distanceMm < croppedClearanceLimitMm(context.pathMarginMm, spacingMm, false) &&
      approach.lowerBoundMm < croppedClearanceLimitMm(context.pathMarginMm, spacingMm, true)
    ) {
      return clearanceOf(kind, approach);
    }
  }
  const cells = boundaryCellsOfKind(
    context.labelMap,
    context.seriesGeometry,
    crop.inventory,
    kind,
    crop.cache,
    crop.seriesKey,
  );
  const approach = segmentApproachToCells(context.seriesGeometry, cells, entryLps, tipLps);
  return approach === null ? null : clearanceOf(kind, approach);
}

function clearanceOf(kind: StructureKind, approach: CellApproach): KindClearance {
  return {
    kind,
    minDistanceMm: approach.distanceMm,
    lowerBoundMm: approach.lowerBoundMm,
    atMm: approach.atMm,
  };
}
