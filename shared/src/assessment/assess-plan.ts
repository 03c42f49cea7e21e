/**
 * The plan assessment (DESIGN.md §7): trajectory safety of every applicator, the ablation zone
 * from the zone table (and from physics when asked), coverage of the tumours treated, heat-sink
 * vessels and the verdict of the safety profile — pure computation, the same in the browser and
 * in a server worker. Positions LPS, millimetres; volumes millilitres.
 *
 * Everything is computed on one crop of the series grid around the plan (plan-crop.ts); the
 * figures of the zone the verdict uses come from the bioheat model when it ran, else from the
 * table. What it shows is decision support: the treating team, local protocols and licensed
 * practice decide (`clinicalCaution`).
 */
import type { AssessmentResult, ZoneModel } from '../api/assessments';
import { clinicalCaution } from '../api/caution';
import { halfVoxelDiagonalMm } from '../geometry/path-clearance';
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import { addScaled, normalize, subtract, type Vec3 } from '../geometry/vector';
import { boxGeometry, type VoxelBox } from '../geometry/voxel-box';
import {
  checkAssessmentInput,
  type AssessmentApplicator,
  type AssessmentInput,
} from './assessment-input';
import {
  assessmentStageLabels,
  monotonicMs,
  stageShares,
  type AssessmentProgress,
  type AssessmentStage,
} from './assessment-stages';
import {
  BIOHEAT_GRID_MARGIN_MM,
  damageOnCrop,
  defaultBioheatZoneModel,
  type BioheatZoneModel,
} from './bioheat-zone';
import { assessCoverage, type TumourMarginSamples } from './coverage';
import { runCache, type DistanceFieldCache } from './distance-field-cache';
import {
  ellipsoidVoxelExtent,
  isEllipsoidInsideGrid,
  rasteriseEllipsoids,
  tableZoneEllipsoid,
  type EllipsoidZone,
} from './ellipsoid-zone';
import { EngineRefusal } from './engine-refusal';
import { findHeatSinks } from './heat-sinks';
import {
  insideDistanceOfKind,
  maskOfCode,
  outsideDistanceOfKind,
  voxelsPerKindCode,
  type CropContext,
} from './kind-fields';
import { kindCode, statisticsOf, takeLabelInventory, type LabelInventory } from './label-inventory';
import { cropBoxAround, prepareCrop, type PreparedCrop } from './plan-crop';
import { segmentOnGrid } from './segment-distance';
import { assessTrajectory, type TrajectoryFigures } from './trajectory-safety';
import {
  extentOfLabel,
  nearestTumourLabel,
  treatedTumours,
  tumourLabelsMeeting,
} from './treated-tumours';
import { vesselDiameters } from './vessel-calibre';
import { judgePlan } from './verdict';
import { extentOfLpsPoints, type VoxelExtent } from './voxel-extent';
import { maskExtent, zoneSignedField } from './zone-field';
import { interpolateZoneTable } from './zone-table';

/** Version of the engine, stored with every result. */
export const ENGINE_VERSION = '1.0.0';

/**
 * How far the zone crop reaches beyond the heat-sink distance, mm: at least this, and at least
 * the heat-sink diameter, so that a vessel beside the zone is seen across twice the width that
 * makes it a heat sink and its calibre is read at the threshold, however the profile sets it.
 */
export const VESSEL_ALLOWANCE_MM = 10;

export interface AssessPlanOptions {
  /** Hears each stage start and end, and the bioheat model's own progress. */
  onProgress?: (progress: AssessmentProgress) => void;
  /** The physics model (default `simulateAblationZone`), used when `zoneModels` asks for it. */
  bioheat?: BioheatZoneModel;
  /** Wall-clock limit handed to the physics model, milliseconds. */
  bioheatTimeLimitMs?: number;
  /** Answering true stops the run between stages (and inside the physics model). */
  shouldAbort?: () => boolean;
  /** Keeps distance fields between runs of the same series (`input.seriesKey`). */
  cache?: DistanceFieldCache;
}

/** A zone for drawing: its mask on its own tight box of the series grid. */
export interface ZoneDisplay {
  model: ZoneModel;
  /** The box's grid: series spacing and axes, LPS, millimetres. */
  geometry: VolumeGeometry;
  /** 1 inside the zone (i fastest on `geometry`). */
  mask: Uint8Array;
  volumeMl: number;
}

export interface AssessPlanOutput {
  result: AssessmentResult;
  zones: ZoneDisplay[];
  /** Local margins on the surface of each tumour assessed, for each zone model. */
  marginSamples: TumourMarginSamples[];
  /** Wall time of each stage that ran, milliseconds. */
  timingsMs: Partial<Record<AssessmentStage, number>>;
  /**
   * The crops of the series grid the figures were computed on: around the paths (clearances)
   * and around the zones (zones, coverage, vessels).
   */
  crops: {
    path: { box: VoxelBox; geometry: VolumeGeometry };
    zone: { box: VoxelBox; geometry: VolumeGeometry };
  };
  /** To show beside the verdict. */
  caution: string;
}

/** Thrown when `shouldAbort` answers true. */
export class AssessmentAborted extends Error {
  override readonly name = 'AssessmentAborted';
}

/**
 * Assesses a plan. Throws an `EngineRefusal` naming the field for input it cannot assess (see
 * `checkAssessmentInput`; a power or time outside the zone table; a plan outside the series),
 * and `AssessmentAborted` when stopped.
 */
export async function assessPlan(
  input: AssessmentInput,
  options: AssessPlanOptions = {},
): Promise<AssessPlanOutput> {
  const withBioheat = input.options.zoneModels.includes('bioheat');
  const shares = stageShares(withBioheat);
  const timingsMs: Partial<Record<AssessmentStage, number>> = {};
  let doneShare = 0;
  const report = (stage: AssessmentStage, fraction: number) =>
    options.onProgress?.({ stage, label: assessmentStageLabels[stage], fraction });
  const checkAbort = () => {
    if (options.shouldAbort?.()) throw new AssessmentAborted('The assessment was stopped.');
  };
  const stage = <T>(name: AssessmentStage, work: () => T): T => {
    checkAbort();
    report(name, doneShare);
    const startedAt = monotonicMs();
    const value = work();
    timingsMs[name] = monotonicMs() - startedAt;
    doneShare = Math.min(1, doneShare + shares[name]);
    report(name, doneShare);
    return value;
  };

  const { geometry, labelMap, safetyProfile } = input;
  const inventory = stage('inventory', () => {
    checkAssessmentInput(input);
    if (withBioheat) calibrationsOf(input.applicators);
    return takeLabelInventory(labelMap, geometry.dimensions, input.structures);
  });
  const ellipsoids = stage('zone-table', () => input.applicators.map(tableZoneOf));
  const plan = stage('crop', () => planCrops(input, inventory, ellipsoids, withBioheat, options));
  const pathCrop = plan.path.context;
  const zoneCrop = plan.zone.context;
  const pathVoxelsPerKindCode = voxelsPerKindCode(pathCrop.kindCodes);
  const zoneVoxelsPerKindCode = voxelsPerKindCode(zoneCrop.kindCodes);

  stage('distance-fields', () => {
    for (const kind of inventory.kindsPresent) {
      if (pathVoxelsPerKindCode[kindCode(kind)] > 0) outsideDistanceOfKind(pathCrop, kind);
    }
  });
  const trajectories: TrajectoryFigures[] = stage('trajectory', () =>
    input.applicators.map((applicator) =>
      assessTrajectory(
        {
          crop: pathCrop,
          seriesGeometry: geometry,
          labelMap,
          pathMarginMm: input.options.cropMarginMm,
          cropVoxelsPerKindCode: pathVoxelsPerKindCode,
        },
        {
          entryLps: applicator.entry,
          tipLps: applicator.target,
          workingLengthMm: applicator.profile.workingLengthMm,
        },
        safetyProfile,
      ),
    ),
  );

  const zoneMasks = new Map<ZoneModel, Uint8Array>();
  const cutZoneModels: ZoneModel[] = [];
  stage('table-zone', () => {
    zoneMasks.set('table', rasteriseEllipsoids(ellipsoids, zoneCrop.geometry));
    if (!ellipsoids.every((zone) => isEllipsoidInsideGrid(zone, geometry))) {
      cutZoneModels.push('table');
    }
  });

  const vessels = stage('vessels', () =>
    safetyProfile.heatSinkKinds
      .filter((kind) => zoneVoxelsPerKindCode[kindCode(kind)] > 0)
      .map((kind) => {
        const mask = maskOfCode(zoneCrop.kindCodes, kindCode(kind));
        const inside = insideDistanceOfKind(zoneCrop, kind);
        const { dimensions, spacingMm } = zoneCrop.geometry;
        return { kind, diametersMm: vesselDiameters(mask, inside, dimensions, spacingMm) };
      }),
  );

  if (withBioheat && plan.bioheatBox) {
    checkAbort();
    report('bioheat-zone', doneShare);
    const startedAt = monotonicMs();
    const shareBefore = doneShare;
    const onFraction = (fraction: number) =>
      report(
        'bioheat-zone',
        shareBefore + shares['bioheat-zone'] * Math.min(1, Math.max(0, fraction)),
      );
    const damage = await runBioheat(input, zoneCrop.geometry, plan.bioheatBox, vessels, {
      ...options,
      onFraction,
    });
    zoneMasks.set('bioheat', damage.mask);
    if (damage.isCut) cutZoneModels.push('bioheat');
    timingsMs['bioheat-zone'] = monotonicMs() - startedAt;
    doneShare += shares['bioheat-zone'];
    report('bioheat-zone', doneShare);
  }
  const primaryZoneModel: ZoneModel = zoneMasks.has('bioheat') ? 'bioheat' : 'table';

  const treated = treatedTumours(
    input.structures,
    inventory,
    plan.nearestTumours,
    plan.candidateTumours,
    zoneMasks.values(),
    { labels: plan.zone.labels, box: zoneCrop.box },
  );
  const paddingMm =
    safetyProfile.heatSinkDistanceMm + 4 * halfVoxelDiagonalMm(zoneCrop.geometry.spacingMm);
  const coverage = stage('coverage', () =>
    [...zoneMasks].map(([model, mask]) => {
      const { dimensions } = zoneCrop.geometry;
      const measured = maskExtent(mask, dimensions) ? mask : tipsMask(input, zoneCrop.geometry);
      const zoneExtent = maskExtent(measured, dimensions) as VoxelExtent;
      const field = zoneSignedField(
        measured,
        zoneCrop.geometry,
        [zoneExtent, ...treated.map((tumour) => tumour.extent)],
        paddingMm,
      );
      const figures = assessCoverage({
        model,
        cropGeometry: zoneCrop.geometry,
        cropLabels: plan.zone.labels,
        kindCodes: zoneCrop.kindCodes,
        zoneMask: mask,
        zoneField: field,
        tumours: treated,
        marginTargetMm: safetyProfile.marginTargetMm,
      });
      return { model, mask, field, figures };
    }),
  );
  const primary = coverage.find((entry) => entry.model === primaryZoneModel) ?? coverage[0];
  const heatSinks = stage('heat-sinks', () =>
    findHeatSinks({
      cropGeometry: zoneCrop.geometry,
      kindCodes: zoneCrop.kindCodes,
      zoneField: primary.field,
      vessels,
      heatSinkDiameterMm: safetyProfile.heatSinkDiameterMm,
      heatSinkDistanceMm: safetyProfile.heatSinkDistanceMm,
    }),
  );
  const applicators = trajectories.map((trajectory) => trajectory.safety);
  const verdict = stage('verdict', () =>
    judgePlan(
      {
        applicators,
        samplesOutsideSeries: trajectories.map((trajectory) => trajectory.samplesOutsideSeries),
        zone: primary.figures.zone,
        heatSinks,
        cutZoneModels,
      },
      safetyProfile,
    ),
  );
  const cropView = (context: CropContext) => ({ box: context.box, geometry: context.geometry });
  return {
    result: {
      engineVersion: ENGINE_VERSION,
      applicators,
      zones: coverage.map((entry) => entry.figures.zone),
      primaryZoneModel,
      heatSinks,
      verdict,
    },
    zones: coverage.map((entry) =>
      zoneDisplay(entry.model, entry.mask, zoneCrop.geometry, entry.figures.zone.volumeMl),
    ),
    marginSamples: coverage.flatMap((entry) => entry.figures.marginSamples),
    timingsMs,
    crops: { path: cropView(pathCrop), zone: cropView(zoneCrop) },
    caution: clinicalCaution,
  };
}

function tableZoneOf(applicator: AssessmentApplicator, index: number): EllipsoidZone {
  const dimensions = interpolateZoneTable(
    applicator.profile.zoneTable,
    applicator.powerW,
    applicator.timeS,
    { fieldPath: `applicators[${index}]`, messagePrefix: `Applicator ${index + 1}: ` },
  );
  return tableZoneEllipsoid(applicator.entry, applicator.target, dimensions);
}

/** Each applicator's calibration; refuses a run of the physics model without one. */
function calibrationsOf(applicators: readonly AssessmentApplicator[]): number[] {
  return applicators.map((applicator, index) => {
    if (applicator.calibration === undefined) {
      throw new EngineRefusal(
        'invalid-input',
        `applicators[${index}].calibration`,
        `Applicator ${index + 1}: the bioheat zone needs the profile's calibrated coupling ` +
          'efficiency (calibration); none was given.',
      );
    }
    return applicator.calibration;
  });
}

interface PlannedCrops {
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
function planCrops(
  input: AssessmentInput,
  inventory: LabelInventory,
  ellipsoids: readonly EllipsoidZone[],
  withBioheat: boolean,
  options: AssessPlanOptions,
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
  const cache = runCache(input.seriesKey === undefined ? undefined : options.cache);
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

/** The physics zone on the zone crop, large vessels of the heat-sink kinds held at 37 °C. */
async function runBioheat(
  input: AssessmentInput,
  cropGeometry: VolumeGeometry,
  box: VoxelBox,
  vessels: readonly { diametersMm: Float32Array }[],
  options: AssessPlanOptions & { onFraction: (fraction: number) => void },
): Promise<{ mask: Uint8Array; isCut: boolean }> {
  const calibrations = calibrationsOf(input.applicators);
  const model = options.bioheat ?? defaultBioheatZoneModel;
  const result = await model({
    geometry: boxGeometry(cropGeometry, box),
    heatSinkMask: wideVesselMask(
      cropGeometry,
      box,
      vessels,
      input.safetyProfile.heatSinkDiameterMm,
    ),
    applicators: input.applicators.map((applicator, index) => ({
      entryLps: applicator.entry,
      tipLps: applicator.target,
      activeLengthMm: applicator.profile.activeLengthMm,
      powerW: applicator.powerW,
      timeS: applicator.timeS,
      calibration: calibrations[index],
    })),
    onProgress: options.onFraction,
    shouldAbort: options.shouldAbort,
    timeLimitMs: options.bioheatTimeLimitMs,
  });
  return damageOnCrop(result, cropGeometry);
}

/** Voxels of the box (crop indices) where a heat-sink vessel is at least `diameterMm` wide. */
function wideVesselMask(
  cropGeometry: VolumeGeometry,
  box: VoxelBox,
  vessels: readonly { diametersMm: Float32Array }[],
  diameterMm: number,
): Uint8Array {
  const [nx, ny] = cropGeometry.dimensions;
  const [bx, by, bz] = box.size;
  const mask = new Uint8Array(bx * by * bz);
  for (let z = 0; z < bz; z++) {
    for (let y = 0; y < by; y++) {
      for (let x = 0; x < bx; x++) {
        const crop = box.start[0] + x + nx * (box.start[1] + y + ny * (box.start[2] + z));
        if (vessels.some((vessel) => vessel.diametersMm[crop] >= diameterMm)) {
          mask[x + bx * (y + by * z)] = 1;
        }
      }
    }
  }
  return mask;
}

/**
 * Stand-in for an empty zone when measuring distances: the voxels of the applicator tips, the
 * limit of a zone shrunk onto them, so that margins stay finite (and negative).
 */
function tipsMask(input: AssessmentInput, cropGeometry: VolumeGeometry): Uint8Array {
  const [nx, ny, nz] = cropGeometry.dimensions;
  const mask = new Uint8Array(nx * ny * nz);
  for (const applicator of input.applicators) {
    const [i, j, k] = lpsToVoxel(cropGeometry, applicator.target).map(Math.round);
    mask[
      Math.min(nx - 1, Math.max(0, i)) +
        nx * (Math.min(ny - 1, Math.max(0, j)) + ny * Math.min(nz - 1, Math.max(0, k)))
    ] = 1;
  }
  return mask;
}

function zoneDisplay(
  model: ZoneModel,
  mask: Uint8Array,
  cropGeometry: VolumeGeometry,
  volumeMl: number,
): ZoneDisplay {
  const extent = maskExtent(mask, cropGeometry.dimensions);
  if (extent === null) {
    return {
      model,
      geometry: boxGeometry(cropGeometry, { start: [0, 0, 0], size: [1, 1, 1] }),
      mask: new Uint8Array(1),
      volumeMl,
    };
  }
  const box: VoxelBox = {
    start: extent.min.map((value) => value) as [number, number, number],
    size: extent.min.map((value, axis) => extent.max[axis] - value + 1) as [number, number, number],
  };
  const [nx, ny] = cropGeometry.dimensions;
  const [bx, by, bz] = box.size;
  const tight = new Uint8Array(bx * by * bz);
  for (let z = 0; z < bz; z++) {
    for (let y = 0; y < by; y++) {
      const from = box.start[0] + nx * (box.start[1] + y + ny * (box.start[2] + z));
      tight.set(mask.subarray(from, from + bx), bx * (y + by * z));
    }
  }
  return { model, geometry: boxGeometry(cropGeometry, box), mask: tight, volumeMl };
}
