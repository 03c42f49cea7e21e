/**
 * Plan assessments: the queued job and its result. The result shape is what the engine in
 * `shared/src/assessment` returns and what the plan comparison shows; structure kinds use the
 * identifiers of `structureKinds` (DEVELOPERS.md, "Structure kinds").
 */
import type { StructureKind } from './structures';

export const assessmentStatuses = ['queued', 'running', 'done', 'failed'] as const;
export type AssessmentStatus = (typeof assessmentStatuses)[number];

export const verdictLevels = ['acceptable', 'acceptable-with-cautions', 'not-acceptable'] as const;
export type VerdictLevel = (typeof verdictLevels)[number];
export const verdictLevelLabels: Record<VerdictLevel, string> = {
  acceptable: 'Acceptable',
  'acceptable-with-cautions': 'Acceptable with cautions',
  'not-acceptable': 'Not acceptable',
};

export const zoneModels = ['table', 'bioheat'] as const;
export type ZoneModel = (typeof zoneModels)[number];

export interface KindClearance {
  kind: StructureKind;
  /** Nearest distance from the path (entry to tip) to the structure's surface, mm; 0 inside. */
  minDistanceMm: number;
  /** Where along the path (mm from the entry) the nearest distance occurs. */
  atMm: number;
}

export interface TraversedStructure {
  kind: StructureKind;
  /** Length of the path inside the structure, mm. */
  lengthMm: number;
  /** Whether the safety profile calls the kind critical. */
  critical: boolean;
}

export interface ApplicatorSafety {
  /** Entry-to-tip distance, mm. */
  pathLengthMm: number;
  workingLengthMm: number;
  /** Angle between the path and the axial plane, degrees (0 in-plane, 90 cranio-caudal). */
  angulationDeg: number;
  clearances: KindClearance[];
  traversed: TraversedStructure[];
  /** How often the path crosses the liver surface. */
  capsuleCrossings: number;
  /** Liver parenchyma (liver, not tumour) crossed before the path first enters a tumour, mm. */
  parenchymaBeforeTumourMm: number | null;
}

export interface TumourCoverage {
  structureId: string;
  volumeMl: number;
  coveredPercent: number;
  /** Smallest distance from the tumour surface to the zone surface, mm; negative when uncovered. */
  minimalMarginMm: number;
  /** Share of the tumour surface whose local margin is under the profile's target, percent. */
  surfaceBelowTargetPercent: number;
}

export interface CollateralVolume {
  kind: StructureKind;
  volumeMl: number;
}

export interface ZoneAssessment {
  model: ZoneModel;
  volumeMl: number;
  tumours: TumourCoverage[];
  collateral: CollateralVolume[];
}

export interface HeatSinkVessel {
  kind: StructureKind;
  /** Local vessel diameter, mm. */
  diameterMm: number;
  /** Distance from the vessel wall to the zone surface, mm (0: touching or inside). */
  distanceMm: number;
}

export type VerdictSeverity = 'caution' | 'refusal';

export interface VerdictReason {
  /** Identifier of the rule, e.g. `clearance`, `critical-traversal`, `margin-minimum`. */
  rule: string;
  kind: StructureKind | null;
  value: number;
  threshold: number;
  severity: VerdictSeverity;
  /** The reason in words, units included. */
  message: string;
}

export interface Verdict {
  level: VerdictLevel;
  reasons: VerdictReason[];
}

/**
 * How the bioheat model was calibrated for one applicator profile: the coupling efficiency η
 * fitted so that, in homogeneous liver, the physics zone matches the profile's zone table, and
 * the residual of each table row (model − table, mm).
 */
export interface ProfileCalibration {
  profileId: string;
  parameter: number;
  rmsResidualMm: number;
  isAtRangeLimit: boolean;
  rows: {
    powerW: number;
    timeS: number;
    residualLengthMm: number;
    residualWidthMm: number;
  }[];
}

export interface AssessmentResult {
  engineVersion: string;
  /** Present when the bioheat model ran: one entry per applicator profile of the plan. */
  calibrations?: ProfileCalibration[];
  applicators: ApplicatorSafety[];
  zones: ZoneAssessment[];
  /** The zone model the coverage figures of the verdict use. */
  primaryZoneModel: ZoneModel;
  heatSinks: HeatSinkVessel[];
  verdict: Verdict;
}

export interface AssessmentView {
  id: string;
  planId: string;
  status: AssessmentStatus;
  /** 0–1. */
  progress: number;
  result?: AssessmentResult;
  error?: string;
  createdAt: string;
  updatedAt: string;
}
