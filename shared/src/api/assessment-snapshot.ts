/**
 * The frozen record an assessment runs on. The server writes it when the assessment is
 * requested; the worker computes from it alone, never from what the database holds at run
 * time; its hash decides whether a stored result may be reused. Positions LPS, millimetres.
 */
import { z } from 'zod';
import type { AblationModality, ZoneTableRow, ZoneTableSource } from './applicator-profiles';
import type { SafetyProfileBody } from './safety-profiles';
import type { StructureKind } from './structures';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import type { RehearsalSettings } from './rehearsal-settings';

export interface SnapshotApplicatorProfile {
  id: string;
  version: number;
  name: string;
  modality: AblationModality;
  gaugeG: number;
  workingLengthMm: number;
  activeLengthMm: number;
  zoneTable: ZoneTableRow[];
  zoneTableSource: ZoneTableSource;
  zoneTableReference: string | null;
}

export interface AssessmentSnapshot {
  engineVersion: string;
  isBioheatRequested: boolean;
  /**
   * The insertion rehearsal's settings (the case's, else the defaults); null when the request
   * switched it off; absent on snapshots taken before it existed.
   */
  rehearsal?: RehearsalSettings | null;
  plan: {
    id: string;
    name: string;
    applicators: {
      entry: Vec3;
      target: Vec3;
      profileId: string;
      powerW: number;
      timeS: number;
    }[];
  };
  series: { id: string; geometry: VolumeGeometry };
  /** The label map as stored when requested; a replaced map has another storage key. */
  labelMap: { id: string; storageKey: string; dataType: 'uint8' | 'uint16' };
  structures: {
    id: string;
    labelValue: number;
    kind: StructureKind | null;
    /** How the board names a tumour ("segment VIII, 24 mm"), when linked to a lesion. */
    lesionLabel?: string | null;
  }[];
  applicatorProfiles: SnapshotApplicatorProfile[];
  safetyProfile: { id: string; version: number; body: SafetyProfileBody };
}

/** POST /api/plans/:id/assessments: the default safety profile unless one is named. */
export const requestAssessmentSchema = z.strictObject({
  safetyProfileId: z.uuid('The safety profile id must be a uuid').optional(),
  /** false switches the insertion rehearsal off for this request (default on). */
  rehearsal: z.boolean('rehearsal must be true or false').optional(),
});
export type RequestAssessment = z.infer<typeof requestAssessmentSchema>;

/** The named, versioned inputs an assessment ran on, as the plan comparison shows them. */
export interface AssessmentInputsView {
  /** The safety profile version, with the thresholds the verdict was judged by. */
  safetyProfile: {
    id: string;
    name: string;
    version: number;
    /** Minimum path clearance by kind, mm; kinds without a clearance rule are absent. */
    minimumClearanceMm: Partial<Record<StructureKind, number>>;
    marginTargetMm: number;
    marginMinimumMm: number;
    /**
     * Largest robot-assisted tip error (mm) of the insertion rehearsal the verdict accepts
     * without a caution; absent on assessments of profiles from before the rehearsal.
     */
    rehearsalToleranceMm?: number;
  };
  applicatorProfiles: {
    id: string;
    name: string;
    version: number;
    zoneTableSource: ZoneTableSource;
    zoneTableReference: string | null;
  }[];
  engineVersion: string;
}

/** What changed between the snapshot an assessment ran on and the plan's inputs today. */
export interface InputChange {
  /** `engine`, `plan`, `label-map`, `structures`, `applicator-profile`, `safety-profile`. */
  kind:
    | 'engine'
    | 'plan'
    | 'label-map'
    | 'structures'
    | 'applicator-profile'
    | 'safety-profile'
    | 'rehearsal';
  /** The change in words, e.g. "Applicator profile “Probe A” is at version 3 (assessed on 2)". */
  message: string;
}

/**
 * Lists what differs between two snapshots, in the words a presenter reads; empty when the
 * inputs are the same.
 */
export function snapshotChanges(
  assessed: AssessmentSnapshot,
  current: AssessmentSnapshot,
): InputChange[] {
  const changes: InputChange[] = [];
  if (assessed.engineVersion !== current.engineVersion) {
    changes.push({
      kind: 'engine',
      message: `The assessment engine is at ${current.engineVersion} (assessed with ${assessed.engineVersion}).`,
    });
  }
  if (stableJson(assessed.plan.applicators) !== stableJson(current.plan.applicators)) {
    changes.push({ kind: 'plan', message: 'The plan’s applicators have changed.' });
  }
  if (
    assessed.labelMap.storageKey !== current.labelMap.storageKey ||
    assessed.series.id !== current.series.id
  ) {
    changes.push({
      kind: 'label-map',
      message: 'The structures’ label map has been replaced since the assessment.',
    });
  } else if (stableJson(assessed.structures) !== stableJson(current.structures)) {
    changes.push({
      kind: 'structures',
      message: 'What the structures stand for (kinds or lesion links) has changed.',
    });
  }
  const before = new Map(assessed.applicatorProfiles.map((profile) => [profile.id, profile]));
  for (const profile of current.applicatorProfiles) {
    const old = before.get(profile.id);
    if (old && old.version !== profile.version) {
      changes.push({
        kind: 'applicator-profile',
        message: `Applicator profile “${profile.name}” is at version ${profile.version} (assessed on version ${old.version}).`,
      });
    }
  }
  if (assessed.safetyProfile.id !== current.safetyProfile.id) {
    changes.push({
      kind: 'safety-profile',
      message: `The safety profile is now “${current.safetyProfile.body.name}” (assessed with “${assessed.safetyProfile.body.name}”).`,
    });
  } else if (assessed.safetyProfile.version !== current.safetyProfile.version) {
    changes.push({
      kind: 'safety-profile',
      message: `Safety profile “${current.safetyProfile.body.name}” is at version ${current.safetyProfile.version} (assessed on version ${assessed.safetyProfile.version}).`,
    });
  }
  // A rehearsal switched off stays off in the comparison; settings changed since are named.
  if (
    assessed.rehearsal &&
    current.rehearsal &&
    stableJson(assessed.rehearsal) !== stableJson(current.rehearsal)
  ) {
    changes.push({
      kind: 'rehearsal',
      message: 'The case’s insertion-rehearsal settings have changed since the assessment.',
    });
  }
  return changes;
}

/** JSON with object keys sorted, so that equal content always gives equal text (and hash). */
export function stableJson(value: unknown): string {
  return JSON.stringify(value, (_key, item: unknown) =>
    item && typeof item === 'object' && !Array.isArray(item)
      ? Object.fromEntries(
          Object.entries(item as Record<string, unknown>).sort(([a], [b]) => (a < b ? -1 : 1)),
        )
      : item,
  );
}
