/**
 * The plan assessment: trajectory safety of every applicator, the ablation zone
 * from the zone table (and from physics when asked), coverage of the tumours treated, heat-sink
 * vessels and the verdict of the safety profile — pure computation, the same in the browser and
 * in a server worker. Positions LPS, millimetres; volumes millilitres.
 *
 * Everything is computed on one crop of the series grid around the plan (plan-crop.ts); the
 * figures of the zone the verdict uses come from the bioheat model when it ran and its
 * calibrations passed their leave-one-out test (physics-acceptance.ts), else from the table.
 * What it shows is decision support: the treating team, local protocols and licensed practice
 * decide (`clinicalCaution`).
 */
import type { AssessmentResult, RehearsalReplay, ZoneModel } from '../api/assessments';
import { RehearsalStopped } from '../rehearsal/insertion/rehearse-freehand';
import { clinicalCaution } from '../api/caution';
import { halfVoxelDiagonalMm } from '../geometry/path-clearance';
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import type { VoxelBox } from '../geometry/voxel-box';
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
import type { ApplicatorCalibration } from '../bioheat/calibration';
import { runBioheatZone, type BioheatZoneModel } from './bioheat-zone';
import { assessCoverage, type TumourMarginSamples } from './coverage';
import type { DistanceFieldCache } from './distance-field-cache';
import {
  isEllipsoidInsideGrid,
  rasteriseEllipsoids,
  tableZoneEllipsoid,
  type EllipsoidZone,
} from './ellipsoid-zone';
import { EngineRefusal } from './engine-refusal';
import { findHeatSinks } from './heat-sinks';
import {
  boundaryCellsOnCrop,
  insideDistanceOfKind,
  maskOfCode,
  voxelsPerKindCode,
  type CropContext,
} from './kind-fields';
import { kindCode, takeLabelInventory } from './label-inventory';
import { judgePhysicsZone, physicsToleranceMm } from './physics-acceptance';
import { planCrops } from './plan-crops';
import { rehearseApplicators, type RehearsalStageOutput } from './rehearsal-stage';
import { assessTrajectory, type TrajectoryFigures } from './trajectory-safety';
import { treatedTumours } from './treated-tumours';
import { vesselCalibre } from './vessel-calibre';
import { judgePlan } from './verdict';
import type { VoxelExtent } from './voxel-extent';
import { zoneDisplay, type ZoneDisplay } from './zone-display';
import { maskExtent, zoneSignedField } from './zone-field';
import { ellipsoidZoneSurface, maskZoneSurface } from './zone-surface';
import { interpolateZoneTable } from './zone-table';

/** Version of the engine, stored with every result. */
export const ENGINE_VERSION = '1.2.0';

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
  /** The insertion rehearsal's replays for the viewer (empty when it did not run). */
  replays: RehearsalReplay[];
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
  const rehearsalRequest = input.options.rehearsal ?? null;
  const shares = stageShares(withBioheat, rehearsalRequest !== null);
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
  const plan = stage('crop', () =>
    planCrops(input, inventory, ellipsoids, withBioheat, options.cache),
  );
  const pathCrop = plan.path.context;
  const zoneCrop = plan.zone.context;
  const pathVoxelsPerKindCode = voxelsPerKindCode(pathCrop.kindCodes);
  const zoneVoxelsPerKindCode = voxelsPerKindCode(zoneCrop.kindCodes);

  stage('distance-fields', () => {
    for (const kind of inventory.kindsPresent) {
      if (pathVoxelsPerKindCode[kindCode(kind)] > 0) boundaryCellsOnCrop(pathCrop, kind);
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
        // Centre lines the coarse reading cannot place on either side of the heat-sink calibre
        // (it is within a voxel diagonal) are read again from their cross-section.
        const refineBelowMm = safetyProfile.heatSinkDiameterMm + 4 * halfVoxelDiagonalMm(spacingMm);
        const calibre = vesselCalibre(mask, inside, dimensions, spacingMm, refineBelowMm);
        return { kind, diametersMm: calibre.diametersMm, calibre };
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
    const damage = await runBioheatZone(
      input,
      zoneCrop.geometry,
      plan.bioheatBox,
      vessels,
      calibrationsOf(input.applicators).map((calibration) => calibration.parameters),
      {
        model: options.bioheat,
        onProgress: onFraction,
        shouldAbort: options.shouldAbort,
        timeLimitMs: options.bioheatTimeLimitMs,
      },
    );
    zoneMasks.set('bioheat', damage.mask);
    if (damage.isCut) cutZoneModels.push('bioheat');
    timingsMs['bioheat-zone'] = monotonicMs() - startedAt;
    doneShare += shares['bioheat-zone'];
    report('bioheat-zone', doneShare);
  }
  // The physics zone decides only when its calibrations passed their leave-one-out test.
  const physics = withBioheat
    ? judgePhysicsZone(calibrationsOf(input.applicators), physicsToleranceMm(safetyProfile))
    : null;
  const primaryZoneModel: ZoneModel =
    zoneMasks.has('bioheat') && physics?.isAccepted ? 'bioheat' : 'table';

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
  const maskField = (mask: Uint8Array) => {
    const { dimensions } = zoneCrop.geometry;
    const measured = maskExtent(mask, dimensions) ? mask : tipsMask(input, zoneCrop.geometry);
    const zoneExtent = maskExtent(measured, dimensions) as VoxelExtent;
    return zoneSignedField(
      measured,
      zoneCrop.geometry,
      [zoneExtent, ...treated.map((tumour) => tumour.extent)],
      paddingMm,
    );
  };
  const coverage = stage('coverage', () =>
    [...zoneMasks].map(([model, mask]) => {
      // The table zone is read from its spheroids, exactly: no boundary error. A zone given as
      // a mask is read from its voxels, whose surface lies within half a voxel diagonal of the
      // model's (the physics model's own error is added where the model reports one).
      const surface =
        model === 'table'
          ? { reader: ellipsoidZoneSurface(ellipsoids, zoneCrop.geometry), boundaryErrorMm: 0 }
          : {
              reader: maskZoneSurface(maskField(mask)),
              // …and the physics model's own (leave-one-out, Ω read-back: physics-acceptance.ts).
              boundaryErrorMm:
                halfVoxelDiagonalMm(zoneCrop.geometry.spacingMm) + (physics?.boundaryErrorMm ?? 0),
            };
      const figures = assessCoverage({
        model,
        cropGeometry: zoneCrop.geometry,
        cropLabels: plan.zone.labels,
        kindCodes: zoneCrop.kindCodes,
        zoneMask: mask,
        zoneSurface: surface.reader,
        boundaryErrorMm: surface.boundaryErrorMm,
        tumours: treated,
        marginTargetMm: safetyProfile.marginTargetMm,
      });
      return { model, mask, surface, figures };
    }),
  );
  const primary = coverage.find((entry) => entry.model === primaryZoneModel) ?? coverage[0];
  const heatSinks = stage('heat-sinks', () =>
    findHeatSinks({
      cropGeometry: zoneCrop.geometry,
      kindCodes: zoneCrop.kindCodes,
      zoneSurface: primary.surface.reader,
      boundaryErrorMm: primary.surface.boundaryErrorMm,
      vessels,
      heatSinkDiameterMm: safetyProfile.heatSinkDiameterMm,
      heatSinkDistanceMm: safetyProfile.heatSinkDistanceMm,
    }),
  );
  let rehearsed: RehearsalStageOutput | null = null;
  if (rehearsalRequest) {
    checkAbort();
    report('rehearsal', doneShare);
    const startedAt = monotonicMs();
    const shareBefore = doneShare;
    try {
      rehearsed = rehearseApplicators(
        {
          geometry,
          labelMap,
          structures: input.structures,
          applicators: input.applicators,
          settings: rehearsalRequest.settings,
          timeLimitMs: rehearsalRequest.timeLimitMs,
        },
        {
          onFraction: (fraction) =>
            report(
              'rehearsal',
              shareBefore + shares.rehearsal * Math.min(1, Math.max(0, fraction)),
            ),
          shouldAbort: options.shouldAbort,
        },
      );
    } catch (error) {
      if (error instanceof RehearsalStopped)
        throw new AssessmentAborted('The assessment was stopped.');
      if (!(error instanceof EngineRefusal)) throw error;
      rehearsed = { rehearsal: [], replays: [], note: `Not rehearsed: ${error.message}` };
    }
    timingsMs.rehearsal = monotonicMs() - startedAt;
    doneShare += shares.rehearsal;
    report('rehearsal', doneShare);
  }
  const applicators = trajectories.map((trajectory) => trajectory.safety);
  const verdict = stage('verdict', () =>
    judgePlan(
      {
        applicators,
        samplesOutsideSeries: trajectories.map((trajectory) => trajectory.samplesOutsideSeries),
        zone: primary.figures.zone,
        heatSinks,
        cutZoneModels,
        rehearsal: rehearsed?.rehearsal ?? [],
      },
      safetyProfile,
    ),
  );
  const cropView = (context: CropContext) => ({ box: context.box, geometry: context.geometry });
  return {
    result: {
      engineVersion: ENGINE_VERSION,
      applicators,
      zones: coverage.map((entry) =>
        entry.model === 'bioheat' && physics
          ? {
              ...entry.figures.zone,
              boundaryErrorMm: entry.figures.zone.boundaryErrorMm ?? physics.boundaryErrorMm,
              ...(physics.isAccepted
                ? {}
                : { isAdvisory: true, advisoryReason: physics.advisoryReason }),
            }
          : entry.figures.zone,
      ),
      primaryZoneModel,
      heatSinks,
      verdict,
      ...(rehearsed ? { rehearsal: rehearsed.rehearsal } : {}),
      ...(rehearsed?.note ? { rehearsalNote: rehearsed.note } : {}),
      ...(rehearsalRequest ? {} : { rehearsalNote: 'The insertion rehearsal was switched off.' }),
    },
    replays: rehearsed?.replays ?? [],
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
function calibrationsOf(applicators: readonly AssessmentApplicator[]): ApplicatorCalibration[] {
  return applicators.map((applicator, index) => {
    if (applicator.calibration === undefined) {
      throw new EngineRefusal(
        'invalid-input',
        `applicators[${index}].calibration`,
        `Applicator ${index + 1}: the bioheat zone needs the heating model calibrated to ` +
          'its profile (calibration); none was given.',
      );
    }
    return applicator.calibration;
  });
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
