/**
 * The frozen record an assessment runs on (`AssessmentSnapshot` of shared/): taken when the
 * assessment is requested, hashed to decide reuse, and the only thing the worker computes from.
 *
 * Profiles are versioned: the snapshot names the version each profile is at, and freezing it
 * writes that version's content to `applicator_profile_version` / `safety_profile_version` the
 * first time an assessment uses it (an administrator's later edit then makes a new version).
 */
import { createHash } from 'node:crypto';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  lesionLabel,
  stableJson,
  type AssessmentSnapshot,
  type RehearsalSettings,
  type SnapshotApplicatorProfile,
} from '@emberline/shared';
import { ConflictError, NotFoundError } from '../../common/errors';
import { LabelMap } from '../structures/label-map.entity';
import { Structure } from '../structures/structure.entity';
import { ApplicatorProfile } from '../plans/applicator-profile.entity';
import { ApplicatorProfileVersion } from '../plans/applicator-profile-version.entity';
import type { NeedlePlan } from '../plans/needle-plan.entity';
import type { SafetyProfile } from '../plans/safety-profile.entity';
import { SafetyProfileVersion } from '../plans/safety-profile-version.entity';
import { safetyProfileBody, snapshotApplicatorProfile } from '../plans/profile-content';

/** SHA-256 of the snapshot's canonical JSON: equal inputs, equal hash. */
export function hashSnapshot(snapshot: AssessmentSnapshot): string {
  return createHash('sha256').update(stableJson(snapshot)).digest('hex');
}

/**
 * Reads the plan's inputs as they are now (no writes). The plan's series must be loaded.
 * Throws a ConflictError when the series has no label map yet.
 */
export async function takeSnapshot(
  em: EntityManager,
  plan: NeedlePlan,
  safetyProfile: SafetyProfile,
  engineVersion: string,
  isBioheatRequested: boolean,
  rehearsal: RehearsalSettings | null,
): Promise<{ snapshot: AssessmentSnapshot; hash: string }> {
  const series = await plan.series.load();
  if (!series) throw new NotFoundError('The plan’s series');
  const labelMap = await em.findOne(LabelMap, { series: series.id });
  if (!labelMap) {
    throw new ConflictError(
      'The plan’s series has no structures yet: import its label map before an assessment.',
    );
  }
  const structures = await em.find(
    Structure,
    { series: series.id },
    { orderBy: { labelValue: 'asc' }, populate: ['lesion'] },
  );
  const profileIds = [...new Set(plan.applicators.map((applicator) => applicator.profileId))];
  const profiles = await em.find(ApplicatorProfile, { id: { $in: profileIds } });
  for (const id of profileIds) {
    if (!profiles.some((profile) => profile.id === id)) {
      throw new NotFoundError('An applicator profile of the plan');
    }
  }
  const snapshot: AssessmentSnapshot = {
    engineVersion,
    isBioheatRequested,
    rehearsal,
    plan: {
      id: plan.id,
      name: plan.name,
      applicators: plan.applicators.map((applicator) => ({
        entry: applicator.entry,
        target: applicator.target,
        profileId: applicator.profileId,
        powerW: applicator.powerW,
        timeS: applicator.timeS,
      })),
    },
    series: {
      id: series.id,
      geometry: {
        dimensions: series.dimensions,
        spacingMm: series.spacingMm,
        originLps: series.originLps,
        direction: series.direction,
      },
    },
    labelMap: { id: labelMap.id, storageKey: labelMap.storageKey, dataType: labelMap.dataType },
    structures: structures.map((structure) => {
      const lesion = structure.isLesionConfirmed ? structure.lesion?.getEntity() : undefined;
      return {
        id: structure.id,
        labelValue: structure.labelValue,
        kind: structure.kind,
        ...(lesion ? { lesionLabel: lesionLabel(lesion) } : {}),
      };
    }),
    applicatorProfiles: profiles
      .map(snapshotApplicatorProfile)
      .sort((a, b) => (a.id < b.id ? -1 : 1)),
    safetyProfile: {
      id: safetyProfile.id,
      version: safetyProfile.version,
      body: safetyProfileBody(safetyProfile),
    },
  };
  return { snapshot, hash: hashSnapshot(snapshot) };
}

/**
 * Writes the profile versions the snapshot names (once per version; a concurrent request may
 * have written them first) and checks that what is stored under each version is what the
 * snapshot holds: an administrator's edit between taking the snapshot and freezing it would
 * otherwise put a result under content it was not computed on. Run inside the request's
 * transaction.
 */
export async function freezeProfileVersions(
  em: EntityManager,
  snapshot: AssessmentSnapshot,
): Promise<void> {
  const connection = em.getConnection();
  for (const profile of snapshot.applicatorProfiles) {
    await connection.execute(
      `insert into applicator_profile_version
         (id, created_at, updated_at, profile_id, version, name, modality, gauge_g,
          working_length_mm, active_length_mm, zone_table, zone_table_source, zone_table_reference)
       values (gen_random_uuid(), now(), now(), ?, ?, ?, ?, ?, ?, ?, ?::jsonb, ?, ?)
       on conflict (profile_id, version) do nothing`,
      [
        profile.id,
        profile.version,
        profile.name,
        profile.modality,
        profile.gaugeG,
        profile.workingLengthMm,
        profile.activeLengthMm,
        JSON.stringify(profile.zoneTable),
        profile.zoneTableSource,
        profile.zoneTableReference,
      ],
      'run',
      em.getTransactionContext(),
    );
    const stored = await em.findOneOrFail(ApplicatorProfileVersion, {
      profile: profile.id,
      version: profile.version,
    });
    if (stableJson(versionContent(stored)) !== stableJson(profile)) throw profileMovedError();
  }
  const safety = snapshot.safetyProfile;
  await connection.execute(
    `insert into safety_profile_version (id, created_at, updated_at, profile_id, version, body)
     values (gen_random_uuid(), now(), now(), ?, ?, ?::jsonb)
     on conflict (profile_id, version) do nothing`,
    [safety.id, safety.version, JSON.stringify(safety.body)],
    'run',
    em.getTransactionContext(),
  );
  const stored = await em.findOneOrFail(SafetyProfileVersion, {
    profile: safety.id,
    version: safety.version,
  });
  if (stableJson(stored.body) !== stableJson(safety.body)) throw profileMovedError();
}

function versionContent(version: ApplicatorProfileVersion): SnapshotApplicatorProfile {
  return {
    id: version.profile.id,
    version: version.version,
    name: version.name,
    modality: version.modality,
    gaugeG: version.gaugeG,
    workingLengthMm: version.workingLengthMm,
    activeLengthMm: version.activeLengthMm,
    zoneTable: version.zoneTable,
    zoneTableSource: version.zoneTableSource,
    zoneTableReference: version.zoneTableReference,
  };
}

function profileMovedError(): ConflictError {
  return new ConflictError(
    'A profile of this plan was changed while the assessment was being requested; request it again.',
  );
}
