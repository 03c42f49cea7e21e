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
import type { AssessmentResult, ZoneAssessment, ZoneModel } from '../api/assessments';
import { clinicalCaution } from '../api/caution';
import type { StructureKind } from '../api/structures';
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
import type { DistanceFieldCache } from './distance-field-cache';
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
import { cropBoxAround, cropLabels, kindCodesOf, type CropRegion } from './plan-crop';
import { assessTrajectory, type TrajectoryFigures } from './trajectory-safety';
import { extentOfLabel, nearestTumourLabel, tumourLabelsMeeting } from './treated-tumours';
import { vesselDiameters } from './vessel-calibre';
import { judgePlan } from './verdict';
import { extentOfLpsPoints, type VoxelExtent } from './voxel-extent';
import { maskExtent, zoneSignedField } from './zone-field';
import { interpolateZoneTable } from './zone-table';

/** Version of the engine, stored with every result. */
export const ENGINE_VERSION = '1.0.0';

/**
 * Widest vessel radius whose calibre is read beside a zone, mm: the crop reaches this much
 * beyond the heat-sink distance so that such a vessel's far wall is seen (portal trunk and
 * inferior vena cava stay under it; from memory).
 */
export const VESSEL_RADIUS_ALLOWANCE_MM = 15;

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
  /** The crop of the series grid everything was computed on. */
  crop: { box: VoxelBox; geometry: VolumeGeometry };
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

  const plan = stage('crop', () => planCrop(input, inventory, ellipsoids, withBioheat, options));
  const { crop } = plan;
  const cropVoxelsPerKindCode = voxelsPerKindCode(crop.kindCodes);
  const isInCrop = (kind: StructureKind) => cropVoxelsPerKindCode[kindCode(kind)] > 0;

  stage('distance-fields', () => {
    for (const kind of inventory.kindsPresent.filter(isInCrop)) outsideDistanceOfKind(crop, kind);
  });
  const trajectories: TrajectoryFigures[] = stage('trajectory', () =>
    input.applicators.map((applicator) =>
      assessTrajectory(
        {
          crop,
          seriesGeometry: geometry,
          labelMap,
          pathMarginMm: input.options.cropMarginMm,
          cropVoxelsPerKindCode,
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
    zoneMasks.set('table', rasteriseEllipsoids(ellipsoids, crop.geometry));
    if (!ellipsoids.every((zone) => isEllipsoidInsideGrid(zone, geometry))) {
      cutZoneModels.push('table');
    }
  });

  const heatSinkKinds = safetyProfile.heatSinkKinds.filter(isInCrop);
  const vessels = stage('vessels', () =>
    heatSinkKinds.map((kind) => {
      const code = kindCode(kind);
      const mask = maskOfCode(crop.kindCodes, code);
      const inside = insideDistanceOfKind(crop, kind);
      const { dimensions, spacingMm } = crop.geometry;
      return { kind, diametersMm: vesselDiameters(mask, inside, dimensions, spacingMm) };
    }),
  );

  if (withBioheat && plan.bioheatBox) {
    const bioheatBox = plan.bioheatBox;
    const calibrations = calibrationsOf(input.applicators);
    checkAbort();
    report('bioheat-zone', doneShare);
    const startedAt = monotonicMs();
    const bioheatGeometry = boxGeometry(crop.geometry, bioheatBox);
    const heatSinkMask = wideVesselMask(
      crop.geometry,
      bioheatBox,
      vessels,
      safetyProfile.heatSinkDiameterMm,
    );
    const model = options.bioheat ?? defaultBioheatZoneModel;
    const shareBefore = doneShare;
    const result = await model({
      geometry: bioheatGeometry,
      heatSinkMask,
      applicators: input.applicators.map((applicator, index) => ({
        entryLps: applicator.entry,
        tipLps: applicator.target,
        activeLengthMm: applicator.profile.activeLengthMm,
        powerW: applicator.powerW,
        timeS: applicator.timeS,
        calibration: calibrations[index],
      })),
      onProgress: (fraction) =>
        report(
          'bioheat-zone',
          shareBefore + shares['bioheat-zone'] * Math.min(1, Math.max(0, fraction)),
        ),
      shouldAbort: options.shouldAbort,
      timeLimitMs: options.bioheatTimeLimitMs,
    });
    const damage = damageOnCrop(result, crop.geometry);
    zoneMasks.set('bioheat', damage.mask);
    if (damage.isCut) cutZoneModels.push('bioheat');
    timingsMs['bioheat-zone'] = monotonicMs() - startedAt;
    doneShare += shares['bioheat-zone'];
    report('bioheat-zone', doneShare);
  }
  const primaryZoneModel: ZoneModel = zoneMasks.has('bioheat') ? 'bioheat' : 'table';

  const treated = treatedTumours(input, inventory, plan, zoneMasks);
  const paddingMm =
    safetyProfile.heatSinkDistanceMm + 4 * halfVoxelDiagonalMm(crop.geometry.spacingMm);
  const coverage = stage('coverage', () =>
    [...zoneMasks].map(([model, mask]) => {
      const forDistances = maskExtent(mask, crop.geometry.dimensions)
        ? mask
        : tipsMask(input, crop);
      const zoneExtent = maskExtent(forDistances, crop.geometry.dimensions) as VoxelExtent;
      const field = zoneSignedField(
        forDistances,
        crop.geometry,
        [zoneExtent, ...treated.map((tumour) => tumour.extent)],
        paddingMm,
      );
      const figures = assessCoverage({
        model,
        cropGeometry: crop.geometry,
        cropLabels: plan.labels,
        kindCodes: crop.kindCodes,
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
      cropGeometry: crop.geometry,
      kindCodes: crop.kindCodes,
      zoneField: primary.field,
      vessels,
      heatSinkDiameterMm: safetyProfile.heatSinkDiameterMm,
      heatSinkDistanceMm: safetyProfile.heatSinkDistanceMm,
    }),
  );
  const zones: ZoneAssessment[] = coverage.map((entry) => entry.figures.zone);
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
  return {
    result: {
      engineVersion: ENGINE_VERSION,
      applicators,
      zones,
      primaryZoneModel,
      heatSinks,
      verdict,
    },
    zones: coverage.map((entry) =>
      zoneDisplay(entry.model, entry.mask, crop.geometry, entry.figures.zone.volumeMl),
    ),
    marginSamples: coverage.flatMap((entry) => entry.figures.marginSamples),
    timingsMs,
    crop: { box: crop.box, geometry: crop.geometry },
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

interface PlanCrop {
  crop: CropContext;
  labels: Uint8Array | Uint16Array;
  /** Tumour labels that may be treated: nearest each tip, or meeting a zone's reach. */
  candidateTumours: number[];
  nearestTumours: number[];
  /** The physics model's grid within the crop (crop voxel indices), when it runs. */
  bioheatBox: VoxelBox | null;
}

function planCrop(
  input: AssessmentInput,
  inventory: LabelInventory,
  ellipsoids: readonly EllipsoidZone[],
  withBioheat: boolean,
  options: AssessPlanOptions,
): PlanCrop {
  const { geometry, safetyProfile } = input;
  const marginMm = input.options.cropMarginMm;
  const zoneMarginMm = Math.max(
    marginMm,
    safetyProfile.heatSinkDistanceMm + VESSEL_RADIUS_ALLOWANCE_MM,
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
  const zoneReach = [
    ...zoneExtents.map((extent) => reach(extent, marginMm)),
    ...heatingExtents.map((extent) => reach(extent, BIOHEAT_GRID_MARGIN_MM)),
  ];
  const candidateTumours = [
    ...new Set([...nearestTumours, ...tumourLabelsMeeting(inventory, zoneReach)]),
  ];
  const tumourMarginMm = Math.max(marginMm, 2 * Math.max(...geometry.spacingMm));
  const regions: CropRegion[] = [
    ...input.applicators.map((applicator) => ({
      extent: extentOfLpsPoints(geometry, [applicator.entry, applicator.target]),
      marginMm,
    })),
    ...zoneExtents.map((extent) => ({ extent, marginMm: zoneMarginMm })),
    ...heatingExtents.map((extent) => ({ extent, marginMm: BIOHEAT_GRID_MARGIN_MM })),
    ...candidateTumours.map((label) => ({
      extent: extentOfLabel(statisticsOf(inventory, label)),
      marginMm: tumourMarginMm,
    })),
  ];
  const box = cropBoxAround(geometry, regions);
  if (box === null) {
    throw new EngineRefusal(
      'plan-outside-series',
      'applicators',
      'The plan lies wholly outside the series grid: there is nothing to assess it against.',
    );
  }
  const cropGeometry = boxGeometry(geometry, box);
  const labels = cropLabels(input.labelMap, geometry, box);
  const crop: CropContext = {
    seriesKey: input.seriesKey ?? null,
    cache: options.cache,
    geometry: cropGeometry,
    box,
    kindCodes: kindCodesOf(labels, inventory.kindCodeOfLabel),
    inventory,
  };
  let bioheatBox: VoxelBox | null = null;
  if (withBioheat) {
    const inCrop = heatingExtents.map((extent) => ({
      min: extent.min.map((value, axis) => value - box.start[axis]) as Vec3,
      max: extent.max.map((value, axis) => value - box.start[axis]) as Vec3,
    }));
    bioheatBox = cropBoxAround(
      cropGeometry,
      inCrop.map((extent) => ({ extent, marginMm: BIOHEAT_GRID_MARGIN_MM })),
      1,
    );
  }
  return { crop, labels, candidateTumours, nearestTumours, bioheatBox };
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

interface TreatedTumour {
  structureId: string;
  labelValue: number;
  extent: VoxelExtent;
}

/** The tumours nearest each tip, and the candidates any zone reaches, in structure order. */
function treatedTumours(
  input: AssessmentInput,
  inventory: LabelInventory,
  plan: PlanCrop,
  zoneMasks: ReadonlyMap<ZoneModel, Uint8Array>,
): TreatedTumour[] {
  const touched = new Set(plan.nearestTumours);
  for (const mask of zoneMasks.values()) {
    for (let index = 0; index < mask.length; index++) {
      if (mask[index] !== 0 && plan.candidateTumours.includes(plan.labels[index])) {
        touched.add(plan.labels[index]);
      }
    }
  }
  const start = plan.crop.box.start;
  return input.structures
    .filter((structure) => structure.kind === 'tumour' && touched.has(structure.labelValue))
    .map((structure) => {
      const { minVoxel, maxVoxel } = statisticsOf(inventory, structure.labelValue);
      return {
        structureId: structure.id,
        labelValue: structure.labelValue,
        extent: {
          min: minVoxel.map((value, axis) => value - start[axis]) as Vec3,
          max: maxVoxel.map((value, axis) => value - start[axis]) as Vec3,
        },
      };
    });
}

/**
 * Stand-in for an empty zone when measuring distances: the voxels of the applicator tips, the
 * limit of a zone shrunk onto them, so that margins stay finite (and negative).
 */
function tipsMask(input: AssessmentInput, crop: CropContext): Uint8Array {
  const mask = new Uint8Array(crop.kindCodes.length);
  const [nx, ny, nz] = crop.geometry.dimensions;
  for (const applicator of input.applicators) {
    const [i, j, k] = lpsToVoxel(crop.geometry, applicator.target).map(Math.round);
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
