/**
 * Gathers an assessment's inputs from the database and the file store, and the hash that says
 * whether two requests would compute the same thing (plan, series, structures, profiles,
 * engine version).
 */
import { createHash } from 'node:crypto';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { SafetyProfileBody } from '@emberline/shared';
import { ConflictError, NotFoundError } from '../../common/errors';
import type { FileStore } from '../imaging/file-store';
import { LabelMap } from '../structures/label-map.entity';
import { Structure } from '../structures/structure.entity';
import { ApplicatorProfile } from '../plans/applicator-profile.entity';
import type { NeedlePlan } from '../plans/needle-plan.entity';
import type { SafetyProfile } from '../plans/safety-profile.entity';
import type { AssessmentTaskInput } from './assessment-task-protocol';

export interface GatheredInputs {
  task: Omit<AssessmentTaskInput, 'labelMap' | 'seriesKey'> & {
    labelMapKey: string;
    labelMapType: 'uint8' | 'uint16';
  };
  hash: string;
}

export function safetyProfileBody(profile: SafetyProfile): SafetyProfileBody {
  return {
    name: profile.name,
    structureRules: profile.structureRules,
    marginTargetMm: profile.marginTargetMm,
    marginTargetSource: profile.marginTargetSource,
    marginMinimumMm: profile.marginMinimumMm,
    marginMinimumSource: profile.marginMinimumSource,
    heatSinkDiameterMm: profile.heatSinkDiameterMm,
    heatSinkDistanceMm: profile.heatSinkDistanceMm,
    heatSinkKinds: profile.heatSinkKinds,
    heatSinkSource: profile.heatSinkSource,
    maximumAngulationDeg: profile.maximumAngulationDeg,
    angulationSource: profile.angulationSource,
    minimumParenchymaBeforeTumourMm: profile.minimumParenchymaBeforeTumourMm,
    parenchymaSource: profile.parenchymaSource,
    maximumCapsuleCrossings: profile.maximumCapsuleCrossings,
    capsuleSource: profile.capsuleSource,
  };
}

/** Everything the engine needs but the label map's bytes (read by the worker side). */
export async function gatherInputs(
  em: EntityManager,
  plan: NeedlePlan,
  safetyProfile: SafetyProfile,
  engineVersion: string,
  isBioheatRequested: boolean,
): Promise<GatheredInputs> {
  const series = plan.series.getEntity();
  const labelMap = await em.findOne(LabelMap, { series: series.id });
  if (!labelMap) {
    throw new ConflictError(
      'The plan’s series has no structures yet: import its label map before an assessment.',
    );
  }
  const structures = await em.find(
    Structure,
    { series: series.id },
    { orderBy: { labelValue: 'asc' } },
  );
  const profileIds = [...new Set(plan.applicators.map((applicator) => applicator.profileId))];
  const profiles = new Map(
    (await em.find(ApplicatorProfile, { id: { $in: profileIds } })).map((profile) => [
      profile.id,
      profile,
    ]),
  );
  const applicators = plan.applicators.map((applicator) => {
    const profile = profiles.get(applicator.profileId);
    if (!profile) throw new NotFoundError('An applicator profile of the plan');
    return {
      entry: applicator.entry,
      target: applicator.target,
      profile: {
        id: profile.id,
        workingLengthMm: profile.workingLengthMm,
        activeLengthMm: profile.activeLengthMm,
        zoneTable: profile.zoneTable,
      },
      powerW: applicator.powerW,
      timeS: applicator.timeS,
    };
  });
  const task: GatheredInputs['task'] = {
    geometry: {
      dimensions: series.dimensions,
      spacingMm: series.spacingMm,
      originLps: series.originLps,
      direction: series.direction,
    },
    labelMapKey: labelMap.storageKey,
    labelMapType: labelMap.dataType,
    structures: structures.map((structure) => ({
      id: structure.id,
      labelValue: structure.labelValue,
      kind: structure.kind,
    })),
    applicators,
    safetyProfile: safetyProfileBody(safetyProfile),
    isBioheatRequested,
  };
  const hash = createHash('sha256')
    .update(
      JSON.stringify({
        engineVersion,
        planId: plan.id,
        seriesId: series.id,
        labelMap: labelMap.storageKey,
        ...task,
        labelMapKey: undefined,
      }),
    )
    .digest('hex');
  return { task, hash };
}

/** The task input with the label map read from the store. */
export async function loadTaskInput(
  gathered: GatheredInputs['task'],
  store: FileStore,
): Promise<{ input: AssessmentTaskInput; transfer: ArrayBuffer[] }> {
  const bytes = await store.readWhole(gathered.labelMapKey);
  // A buffer of its own (Node may pool small reads), so that it can be transferred.
  const buffer = new ArrayBuffer(bytes.byteLength);
  new Uint8Array(buffer).set(bytes);
  const { labelMapKey, labelMapType, ...rest } = gathered;
  return {
    input: { ...rest, seriesKey: labelMapKey, labelMap: { dataType: labelMapType, buffer } },
    transfer: [buffer],
  };
}
