/**
 * The pool thread's task: decode the label map, take each applicator profile's heating-model
 * calibration as stored with its version (fitting it when none of the current model version is
 * stored, and handing those back for the server to store), run the engine, encode the display
 * data. Progress goes back through the task's MessagePort.
 */
import type { MessagePort } from 'node:worker_threads';
import {
  type ApplicatorCalibration,
  type ProfileCalibration,
  CALIBRATION_MODEL_VERSION,
  EngineRefusal,
  assessPlan,
  calibrateApplicatorProfile,
  physicsToleranceMm,
  profileCalibrationSummary,
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

/**
 * Calibrations this thread fitted, by profile content: a fallback for a calibration the server
 * has not stored yet (another job of the same profile version may still be running).
 */
const calibrations = new Map<string, ApplicatorCalibration>();
/** Distance fields of the series this thread assessed lately (an LRU of crops). */
const distanceFields = createDistanceFieldCache();

type TaskProfile = AssessmentTaskInput['applicators'][number]['profile'];

/** Whether the profile carries a stored calibration of the current model version. */
function hasCurrentCalibration(profile: TaskProfile): boolean {
  return profile.storedCalibration?.modelVersion === CALIBRATION_MODEL_VERSION;
}

/** The stored calibration when current, else one fitted here (`isNew`: the server stores it). */
function calibrationOf(
  profile: TaskProfile,
  onProgress: (fraction: number) => void,
): { calibration: ApplicatorCalibration; isNew: boolean } {
  if (profile.storedCalibration && hasCurrentCalibration(profile)) {
    return { calibration: profile.storedCalibration, isNew: false };
  }
  const key = JSON.stringify([profile.activeLengthMm, profile.zoneTable]);
  let calibration = calibrations.get(key);
  if (calibration === undefined) {
    calibration = calibrateApplicatorProfile(
      { activeLengthMm: profile.activeLengthMm, zoneTable: profile.zoneTable },
      { onProgress },
    );
    calibrations.set(key, calibration);
  }
  return { calibration, isNew: true };
}

/**
 * Wall-clock limit of the insertion rehearsal, ms: `ASSESSMENT_REHEARSAL_SECONDS` (default 120,
 * below the task's own limit `ASSESSMENT_TIMEOUT_SECONDS`, 240, so the rest still finishes).
 */
function rehearsalTimeLimitMs(): number {
  const seconds = Number(process.env.ASSESSMENT_REHEARSAL_SECONDS ?? 120);
  return (Number.isFinite(seconds) && seconds > 0 ? seconds : 120) * 1000;
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
  // A calibration to fit takes a few seconds, longer than the rest of the assessment.
  const mustFit = input.applicators.some(
    (applicator) => !hasCurrentCalibration(applicator.profile),
  );
  const calibrationShare = input.isBioheatRequested ? (mustFit ? 0.6 : 0.02) : 0;
  report({ fraction: 0.01, stage: taskStageLabels['reading-structures'] });
  const toleranceMm = physicsToleranceMm(input.safetyProfile);
  const used = new Map<string, ProfileCalibration>();
  const fittedHere = new Map<string, ApplicatorCalibration>();
  const applicators = input.applicators.map((applicator, index) => {
    const stage = taskStageLabels['calibrating-heating'];
    const share = (fraction: number) =>
      report({
        fraction: (calibrationShare * (index + fraction)) / input.applicators.length,
        stage,
      });
    const { id } = applicator.profile;
    const found = input.isBioheatRequested ? calibrationOf(applicator.profile, share) : undefined;
    if (found) {
      used.set(id, profileCalibrationSummary(id, found.calibration, toleranceMm));
      if (found.isNew) fittedHere.set(id, found.calibration);
    }
    const calibration = found?.calibration;
    share(1);
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
        rehearsal: input.rehearsal
          ? { settings: input.rehearsal, timeLimitMs: rehearsalTimeLimitMs() }
          : null,
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
    ...(fittedHere.size
      ? {
          newCalibrations: [...fittedHere].map(([profileId, calibration]) => ({
            profileId,
            calibration,
          })),
        }
      : {}),
    timingsMs: run.timingsMs,
    replays: run.replays,
    display: display.buffer.slice(
      display.byteOffset,
      display.byteOffset + display.byteLength,
    ) as ArrayBuffer,
  };
}
