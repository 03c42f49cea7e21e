/**
 * The pool thread's input, built from an assessment's frozen snapshot and the label map it
 * names. A label map replaced after the request is gone from the store: the assessment then
 * fails with a reason instead of running on other structures.
 */
import {
  tumourLabelOf,
  type ApplicatorCalibration,
  type AssessmentSnapshot,
} from '@emberline/shared';
import type { FileStore } from '../imaging/file-store';
import type { AssessmentTaskInput } from './assessment-task-protocol';

export class LabelMapGoneError extends Error {
  constructor() {
    super(
      'The structures’ label map was replaced after this assessment was requested; ' +
        'request a new assessment on the current structures.',
    );
    this.name = 'LabelMapGoneError';
  }
}

export async function taskInputFromSnapshot(
  snapshot: AssessmentSnapshot,
  store: FileStore,
  storedCalibrations: ReadonlyMap<string, ApplicatorCalibration>,
): Promise<{ input: AssessmentTaskInput; transfer: ArrayBuffer[] }> {
  const bytes = await store.readWhole(snapshot.labelMap.storageKey).catch((error: unknown) => {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') throw new LabelMapGoneError();
    throw error;
  });
  // A buffer of its own (Node may pool small reads), so that it can be transferred.
  const buffer = new ArrayBuffer(bytes.byteLength);
  new Uint8Array(buffer).set(bytes);
  const profiles = new Map(snapshot.applicatorProfiles.map((profile) => [profile.id, profile]));
  const input: AssessmentTaskInput = {
    geometry: snapshot.series.geometry,
    labelMap: { dataType: snapshot.labelMap.dataType, buffer },
    // A tumour is named by the lesion its link was confirmed to (the snapshot holds only
    // confirmed links), else as not linked: never by its label number alone.
    structures: snapshot.structures.map((structure) => ({
      id: structure.id,
      labelValue: structure.labelValue,
      kind: structure.kind,
      ...(structure.kind === 'tumour'
        ? { label: tumourLabelOf({ ...structure, label: structure.lesionLabel ?? undefined }) }
        : {}),
    })),
    applicators: snapshot.plan.applicators.map((applicator) => {
      const profile = profiles.get(applicator.profileId);
      if (!profile) throw new Error('The snapshot lacks a profile its plan names.');
      const stored = storedCalibrations.get(profile.id);
      return {
        entry: applicator.entry,
        target: applicator.target,
        profile: {
          id: profile.id,
          workingLengthMm: profile.workingLengthMm,
          activeLengthMm: profile.activeLengthMm,
          zoneTable: profile.zoneTable,
          ...(stored ? { storedCalibration: stored } : {}),
        },
        powerW: applicator.powerW,
        timeS: applicator.timeS,
      };
    }),
    safetyProfile: snapshot.safetyProfile.body,
    seriesKey: snapshot.labelMap.storageKey,
    isBioheatRequested: snapshot.isBioheatRequested,
    rehearsal: snapshot.rehearsal ?? null,
  };
  return { input, transfer: [buffer] };
}
