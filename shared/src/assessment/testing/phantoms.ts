/**
 * Analytic phantoms for the engine's tests: axial grids of a given slice thickness placed so
 * that a chosen height falls on a slice centre, shapes painted by voxel centres (a voxel is
 * labelled when its centre lies inside, as a segmentation thresholded at half a voxel
 * would), and the few pieces a test needs to run the engine's stages on them. Every truth is
 * the shape's own geometry; nothing here is an expected result.
 *
 * Test support only (imported by spec files). Positions LPS, millimetres.
 */
import type {
  ApplicatorSafety,
  HeatSinkVessel,
  KindClearance,
  ZoneAssessment,
} from '../../api/assessments';
import { safetyProfileBodySchema, type SafetyProfileBody } from '../../api/safety-profiles';
import { voxelCount, type VolumeGeometry } from '../../geometry/patient-geometry';
import { dot, subtract, type Vec3 } from '../../geometry/vector';
import { boxGeometry } from '../../geometry/voxel-box';
import type { AssessmentStructure } from '../assessment-input';
import { voxelsPerKindCode, type CropContext } from '../kind-fields';
import { takeLabelInventory } from '../label-inventory';
import { cropBoxAround, cropLabels, kindCodesOf } from '../plan-crop';
import { assessTrajectory, type TrajectoryFigures } from '../trajectory-safety';
import type { VerdictFigures } from '../verdict';
import { extentOfLpsPoints } from '../voxel-extent';

/** In-plane pixel spacing of the phantoms, mm (a 400 mm field of view on 512 pixels). */
export const IN_PLANE_MM = 0.78;

/** The slice thicknesses the phantoms are built at, mm. */
export const SLICE_THICKNESSES_MM = [0.5, 2.5, 5] as const;

/**
 * An axial grid (LPS axes) of spacing IN_PLANE_MM × IN_PLANE_MM × `sliceMm` covering the box
 * `[low, high]` (mm), shifted so that one voxel centre lies exactly at `anchor`.
 */
export function axialGrid(
  sliceMm: number,
  low: Readonly<Vec3>,
  high: Readonly<Vec3>,
  anchor: Readonly<Vec3> = [0, 0, 0],
): VolumeGeometry {
  const spacingMm: Vec3 = [IN_PLANE_MM, IN_PLANE_MM, sliceMm];
  const origin: Vec3 = [0, 0, 0];
  const dimensions: [number, number, number] = [0, 0, 0];
  for (let axis = 0; axis < 3; axis++) {
    const w = spacingMm[axis];
    const first = Math.floor((low[axis] - anchor[axis]) / w);
    const last = Math.ceil((high[axis] - anchor[axis]) / w);
    origin[axis] = anchor[axis] + first * w;
    dimensions[axis] = last - first + 1;
  }
  return {
    dimensions,
    spacingMm,
    originLps: origin,
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
  };
}

/** A shape as a test of points (LPS, millimetres). */
export type Shape = (pointLps: Readonly<Vec3>) => boolean;

/** A solid ball. */
export function ball(centreLps: Readonly<Vec3>, radiusMm: number): Shape {
  return (point) =>
    Math.hypot(point[0] - centreLps[0], point[1] - centreLps[1], point[2] - centreLps[2]) <=
    radiusMm;
}

/** A solid round cylinder of infinite length about the line through `throughLps` along a unit axis. */
export function cylinder(
  throughLps: Readonly<Vec3>,
  unitAxis: Readonly<Vec3>,
  radiusMm: number,
): Shape {
  return (point) => distanceToLine(point, throughLps, unitAxis) <= radiusMm;
}

/** Distance from a point to the line through `throughLps` along the unit `unitAxis`, mm. */
export function distanceToLine(
  pointLps: Readonly<Vec3>,
  throughLps: Readonly<Vec3>,
  unitAxis: Readonly<Vec3>,
): number {
  const offset = subtract(pointLps, throughLps);
  const along = dot(offset, unitAxis);
  return Math.sqrt(Math.max(0, dot(offset, offset) - along * along));
}

/** Sets `value` on every voxel of `labels` whose centre lies inside the shape. */
export function paint(
  labels: Uint8Array,
  geometry: VolumeGeometry,
  value: number,
  shape: Shape,
): Uint8Array {
  const [nx, ny, nz] = geometry.dimensions;
  const [wx, wy, wz] = geometry.spacingMm;
  const [ox, oy, oz] = geometry.originLps;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        if (shape([ox + i * wx, oy + j * wy, oz + k * wz])) labels[index] = value;
      }
    }
  }
  return labels;
}

/** An empty label map of the grid. */
export function emptyLabels(geometry: VolumeGeometry): Uint8Array {
  return new Uint8Array(voxelCount(geometry.dimensions));
}

/**
 * A safety profile for the phantoms: the schema's defaults, a clearance rule per kind given,
 * and the other thresholds as the test sets them (invented for the tests, not advice).
 */
export function phantomSafetyProfile(settings: {
  clearances?: { kind: KindClearance['kind']; minimumClearanceMm: number; isCritical: boolean }[];
  marginTargetMm?: number;
  marginMinimumMm?: number;
  heatSinkDiameterMm?: number;
  heatSinkDistanceMm?: number;
}): SafetyProfileBody {
  return safetyProfileBodySchema.parse({
    name: 'Phantom profile',
    structureRules: (settings.clearances ?? []).map((rule) => ({ ...rule, source: 'test rule' })),
    marginTargetMm: settings.marginTargetMm ?? 5,
    marginTargetSource: 'test target',
    marginMinimumMm: settings.marginMinimumMm ?? 0,
    marginMinimumSource: 'test minimum',
    heatSinkDiameterMm: settings.heatSinkDiameterMm ?? 3,
    heatSinkDistanceMm: settings.heatSinkDistanceMm ?? 10,
    heatSinkKinds: ['portal-vein', 'hepatic-vein'],
    heatSinkSource: 'test heat sink',
    maximumAngulationDeg: 90,
    angulationSource: 'test',
    minimumParenchymaBeforeTumourMm: 0,
    parenchymaSource: 'test',
    maximumCapsuleCrossings: 5,
    capsuleSource: 'test',
  });
}

/**
 * What the verdict weighs, every figure within any rule of `phantomSafetyProfile` except those
 * the test gives: one applicator (its clearances), one zone, the heat sinks.
 */
export function phantomVerdictFigures(given: {
  clearances?: KindClearance[];
  zone?: ZoneAssessment;
  heatSinks?: HeatSinkVessel[];
}): VerdictFigures {
  const applicator: ApplicatorSafety = {
    pathLengthMm: 60,
    workingLengthMm: 150,
    angulationDeg: 0,
    clearances: given.clearances ?? [],
    traversed: [],
    capsuleCrossings: 0,
    parenchymaBeforeTumourMm: null,
    parenchymaBeforeTumourLowerMm: null,
  };
  return {
    applicators: [applicator],
    samplesOutsideSeries: [0],
    zone: given.zone ?? {
      model: 'table',
      boundaryErrorMm: 0,
      volumeMl: 10,
      tumours: [
        {
          structureId: 'phantom',
          volumeMl: 1,
          coveredPercent: 100,
          minimalMarginMm: 20,
          minimalMarginLowerMm: 20,
          surfaceBelowTargetPercent: 0,
        },
      ],
      collateral: [],
    },
    heatSinks: given.heatSinks ?? [],
    cutZoneModels: [],
  };
}

/**
 * The trajectory figures of a path on a phantom, as the assessment computes them: on a crop
 * reaching `cropMarginMm` beyond the path, falling back to the whole grid.
 */
export function phantomTrajectory(
  geometry: VolumeGeometry,
  labels: Uint8Array,
  structures: readonly AssessmentStructure[],
  entryLps: Vec3,
  tipLps: Vec3,
  profile: SafetyProfileBody,
  cropMarginMm = 20,
): TrajectoryFigures {
  const inventory = takeLabelInventory(labels, geometry.dimensions, structures);
  const box = cropBoxAround(geometry, [
    { extent: extentOfLpsPoints(geometry, [entryLps, tipLps]), marginMm: cropMarginMm },
  ]);
  if (!box) throw new Error('the path lies off the phantom grid');
  const crop: CropContext = {
    seriesKey: null,
    geometry: boxGeometry(geometry, box),
    box,
    kindCodes: kindCodesOf(cropLabels(labels, geometry, box), inventory.kindCodeOfLabel),
    inventory,
  };
  return assessTrajectory(
    {
      crop,
      seriesGeometry: geometry,
      labelMap: labels,
      pathMarginMm: cropMarginMm,
      cropVoxelsPerKindCode: voxelsPerKindCode(crop.kindCodes),
    },
    { entryLps, tipLps, workingLengthMm: 150 },
    profile,
  );
}
