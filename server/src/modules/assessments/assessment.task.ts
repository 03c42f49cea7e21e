/**
 * The pool thread's task: decode the label map, calibrate the bioheat model of each applicator
 * profile (kept per thread: a profile's table does not change under the same id and content),
 * run the engine, encode the display data. Progress goes back through the task's MessagePort.
 */
import type { MessagePort } from 'node:worker_threads';
import {
  type ApplicatorCalibration,
  type ProfileCalibration,
  EngineRefusal,
  assessPlan,
  calibrateApplicatorProfile,
  decodeLabelMapFile,
  encodeAssessmentDisplay,
  DEFAULT_ASSESSMENT_CROP_MARGIN_MM,
  createDistanceFieldCache,
  taskStageLabels,
} from '@emberline/shared';
import type {
  AssessmentTaskInput,
  AssessmentTaskOutput,
  AssessmentTaskRefusal,
  TaskProgress,
} from './assessment-task-protocol';

const calibrations = new Map<string, ApplicatorCalibration>();
/** Distance fields of the series this thread assessed lately (an LRU of crops). */
const distanceFields = createDistanceFieldCache();

function calibrationOf(
  profile: AssessmentTaskInput['applicators'][number]['profile'],
): ApplicatorCalibration {
  const key = JSON.stringify([profile.activeLengthMm, profile.zoneTable]);
  let calibration = calibrations.get(key);
  if (calibration === undefined) {
    calibration = calibrateApplicatorProfile({
      activeLengthMm: profile.activeLengthMm,
      zoneTable: profile.zoneTable,
    });
    calibrations.set(key, calibration);
  }
  return calibration;
}

function calibrationSummary(
  profileId: string,
  calibration: ApplicatorCalibration,
): ProfileCalibration {
  return {
    profileId,
    parameter: calibration.parameter,
    rmsResidualMm: calibration.rmsResidualMm,
    isAtRangeLimit: calibration.isAtRangeLimit,
    rows: calibration.rows.map((row) => ({
      powerW: row.powerW,
      timeS: row.timeS,
      residualLengthMm: row.residualLengthMm,
      residualWidthMm: row.residualWidthMm,
    })),
  };
}

export default async function runAssessmentTask(task: {
  input: AssessmentTaskInput;
  port: MessagePort;
}): Promise<AssessmentTaskOutput | AssessmentTaskRefusal> {
  try {
    return await assess(task);
  } catch (error) {
    if (error instanceof EngineRefusal) {
      return { refusal: { problem: error.problem, field: error.field, message: error.message } };
    }
    throw error;
  }
}

async function assess({
  input,
  port,
}: {
  input: AssessmentTaskInput;
  port: MessagePort;
}): Promise<AssessmentTaskOutput> {
  const report = (progress: TaskProgress) => port.postMessage(progress);
  const { labels } = decodeLabelMapFile(input.labelMap.buffer);
  const calibrationShare = input.isBioheatRequested ? 0.15 : 0;
  report({ fraction: 0.01, stage: taskStageLabels['reading-structures'] });
  const used = new Map<string, ProfileCalibration>();
  const applicators = input.applicators.map((applicator, index) => {
    const fitted = input.isBioheatRequested ? calibrationOf(applicator.profile) : undefined;
    if (fitted) used.set(applicator.profile.id, calibrationSummary(applicator.profile.id, fitted));
    const calibration = fitted?.parameter;
    report({
      fraction: (calibrationShare * (index + 1)) / input.applicators.length,
      stage: taskStageLabels['calibrating-heating'],
    });
    return {
      entry: applicator.entry,
      target: applicator.target,
      profile: applicator.profile,
      powerW: applicator.powerW,
      timeS: applicator.timeS,
      ...(calibration === undefined ? {} : { calibration }),
    };
  });
  const run = await assessPlan(
    {
      geometry: input.geometry,
      labelMap: labels,
      structures: input.structures,
      applicators,
      safetyProfile: input.safetyProfile,
      seriesKey: input.seriesKey,
      options: {
        zoneModels: input.isBioheatRequested ? ['table', 'bioheat'] : ['table'],
        cropMarginMm: DEFAULT_ASSESSMENT_CROP_MARGIN_MM,
      },
    },
    {
      cache: distanceFields,
      onProgress: (progress) =>
        report({
          fraction: calibrationShare + (1 - calibrationShare) * progress.fraction,
          stage: progress.label,
        }),
    },
  );
  const display = encodeAssessmentDisplay({
    zones: run.zones.map((zone) => ({
      model: zone.model,
      geometry: zone.geometry,
      mask: zone.mask,
    })),
    margins: run.marginSamples.map((sample) => ({
      structureId: sample.structureId,
      model: sample.model,
      pointsLps: sample.lps,
      marginMm: sample.marginMm,
    })),
  });
  return {
    result: used.size ? { ...run.result, calibrations: [...used.values()] } : run.result,
    timingsMs: run.timingsMs,
    display: display.buffer.slice(
      display.byteOffset,
      display.byteOffset + display.byteLength,
    ) as ArrayBuffer,
  };
}
