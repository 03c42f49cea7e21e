/**
 * The content of a profile that an assessment depends on: what its frozen versions hold and what
 * decides whether an edit makes a new version.
 */
import type { SafetyProfileBody, SnapshotApplicatorProfile } from '@emberline/shared';
import type { ApplicatorProfile } from './applicator-profile.entity';
import type { SafetyProfile } from './safety-profile.entity';

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
    physicsToleranceMm: profile.physicsToleranceMm,
    physicsToleranceSource: profile.physicsToleranceSource,
    rehearsalToleranceMm: profile.rehearsalToleranceMm,
    rehearsalToleranceSource: profile.rehearsalToleranceSource,
  };
}

export function snapshotApplicatorProfile(profile: ApplicatorProfile): SnapshotApplicatorProfile {
  return {
    id: profile.id,
    version: profile.version,
    name: profile.name,
    modality: profile.modality,
    gaugeG: profile.gaugeG,
    workingLengthMm: profile.workingLengthMm,
    activeLengthMm: profile.activeLengthMm,
    zoneTable: profile.zoneTable,
    zoneTableSource: profile.zoneTableSource,
    zoneTableReference: profile.zoneTableReference,
  };
}
