/**
 * Plan assessments: the queued job and its result. The result shape is what the engine in
 * `shared/src/assessment` returns and what the plan comparison shows; structure kinds use the
 * identifiers of `structureKinds` (DEVELOPERS.md, "Structure kinds").
 */
import type { AssessmentInputsView, InputChange } from './assessment-snapshot';
import type { HeatingParameters } from '../bioheat/heating-parameters';
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
  /**
   * Nearest distance from the path (entry to tip) to the structure as labelled: to the faces of
   * its voxels (the boundary of the union of their cells), mm; 0 where the path touches or
   * enters one.
   */
  minDistanceMm: number;
  /**
   * Conservative bound on the clearance, mm: the distance to the structure's voxels each
   * widened by one voxel on every side, as if its true surface lay up to a voxel beyond the
   * labelled one (along an axis: `minDistanceMm` less the spacing along it); never below 0.
   * Absent in results of engine versions before 1.1.0.
   */
  lowerBoundMm?: number;
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
  /**
   * Conservative bound on `parenchymaBeforeTumourMm`, mm: less one voxel's extent along the
   * path at each of its two ends (liver surface, tumour surface) and the sampling step; null
   * with it. Absent in results of engine versions before 1.1.0.
   */
  parenchymaBeforeTumourLowerMm?: number | null;
}

export interface TumourCoverage {
  structureId: string;
  /**
   * How the board names the tumour: its confirmed lesion ("segment VIII, 24 mm"), else
   * "label N, not linked to a lesion". Absent in results computed before tumours were named.
   */
  label?: string;
  volumeMl: number;
  coveredPercent: number;
  /**
   * Smallest distance from the tumour surface (the faces of its labelled voxels) to the zone
   * surface, mm; negative when part of the tumour lies outside the zone.
   */
  minimalMarginMm: number;
  /**
   * Conservative bound on the minimal margin, mm: as if the tumour's true surface lay up to a
   * voxel beyond its labelled voxels, less the zone model's own `boundaryErrorMm`. Absent in
   * results of engine versions before 1.1.0.
   */
  minimalMarginLowerMm?: number;
  /**
   * Share of the tumour surface area whose local margin is under the profile's target, percent
   * (faces of the labelled voxels, each weighted by its area).
   */
  surfaceBelowTargetPercent: number;
}

export interface CollateralVolume {
  kind: StructureKind;
  volumeMl: number;
}

export interface ZoneAssessment {
  model: ZoneModel;
  /**
   * How far the model's zone surface may lie from where it is read, mm: taken off every
   * conservative margin bound. 0 for the table zone, which is read analytically (an exact
   * point-to-spheroid distance, no grid). For the physics zone: how well the heating model
   * predicted its profiles' zone table rows it was not fitted to (leave-one-out), with the error
   * of reading its damage field onto the crop grid (`assessment/physics-acceptance.ts`).
   * Absent in results of engine versions before 1.1.0.
   */
  boundaryErrorMm?: number;
  volumeMl: number;
  tumours: TumourCoverage[];
  collateral: CollateralVolume[];
  /** The zone is shown for information only: the verdict does not use it. */
  isAdvisory?: boolean;
  /** Why it is advisory, in clinical words. */
  advisoryReason?: string;
}

export interface HeatSinkVessel {
  kind: StructureKind;
  /**
   * Local vessel diameter, mm: near the heat-sink calibre from the cross-section area across
   * the vessel's axis; for clearly wider vessels, twice the largest inscribed radius.
   */
  diameterMm: number;
  /**
   * The diameters of a round vessel that could give the same reading on this grid, mm: the
   * calibre band. Absent in results of engine versions before 1.1.0.
   */
  diameterLowerMm?: number;
  diameterUpperMm?: number;
  /**
   * Distance from the vessel wall (the faces of its voxels) to the zone surface, mm (0:
   * touching or inside).
   */
  distanceMm: number;
  /**
   * Conservative bound on the distance, mm: as if the wall lay up to a voxel nearer, less the
   * zone model's boundary error. Absent in results of engine versions before 1.1.0.
   */
  distanceLowerMm?: number;
  /**
   * True when the nominal calibre or distance misses the safety profile's heat-sink rule and
   * only their bands reach it: a possible heat sink, which the verdict names as unconfirmed.
   */
  isPossible?: boolean;
}

export type VerdictSeverity = 'caution' | 'refusal';

export interface VerdictReason {
  /** Identifier of the rule, e.g. `clearance`, `critical-traversal`, `margin-minimum`. */
  rule: string;
  kind: StructureKind | null;
  value: number;
  /**
   * The conservative value of the figure (its bound on the unsafe side), in the unit of
   * `value`, where the figure carries one.
   */
  bound?: number;
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
 * How the bioheat model was calibrated for one applicator profile (`bioheat/calibration.ts`):
 * the heating parameters fitted so that, in homogeneous liver, the physics zone matches the
 * profile's zone table; the residual of each row (model − table, mm); the leave-one-out error
 * (each row predicted by the model fitted without it); and whether the physics zone may decide
 * the verdict with this profile. Fields marked optional are absent from results stored before
 * the leave-one-out check (engine 1.1.0).
 */
export interface ProfileCalibration {
  profileId: string;
  /** The profile version calibrated and its name (filled in by the server). */
  profileVersion?: number;
  profileName?: string;
  /** Coupling efficiency η at the reference power (no unit). */
  parameter: number;
  /** Every fitted parameter by name. */
  parameters?: HeatingParameters;
  /** Root mean square and largest residual (length, width, centre), mm. */
  rmsResidualMm: number;
  maxResidualMm?: number;
  /** Root mean square and largest leave-one-out error, mm; null: too few rows to tell. */
  leaveOneOutRmsMm?: number | null;
  leaveOneOutMaxMm?: number | null;
  isAtRangeLimit: boolean;
  isImplausible?: boolean;
  implausibleReason?: string;
  /** The safety profile's tolerance on the leave-one-out error, mm, and whether it is met. */
  toleranceMm?: number;
  isWithinTolerance?: boolean;
  /** Why the physics zone is for information only with this profile, in clinical words. */
  advisoryReason?: string;
  rows: {
    powerW: number;
    timeS: number;
    residualLengthMm: number;
    residualWidthMm: number;
    residualTipOffsetMm?: number;
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
  /**
   * The insertion rehearsal, one entry per applicator (absent on assessments stored before it
   * existed, or when it was switched off or stopped; `rehearsalNote` then says why).
   */
  rehearsal?: ApplicatorRehearsal[];
  /** Why the rehearsal is missing or incomplete, in words (switched off, time limit, refused). */
  rehearsalNote?: string;
}

/**
 * How the robot-assisted rehearsal finds the Jacobian of the tip's error with respect to the
 * needle base's six degrees of freedom (shared/src/rehearsal/assisted/README.md):
 * 'full-step' a whole simulation step per perturbation; 'resolve-constraints' the step's free
 * motion reused, the constraint solve and correction repeated; 'pseudo-constraints' the error
 * read from the constraint-space solve alone; 'factorised' all perturbations as right-hand sides
 * of one factorised constraint-space system with the active set held.
 */
export const rehearsalStrategies = [
  'full-step',
  'resolve-constraints',
  'pseudo-constraints',
  'factorised',
] as const;
export type RehearsalStrategy = (typeof rehearsalStrategies)[number];

export const rehearsalMeshResolutions = ['coarse', 'medium', 'fine'] as const;
export type RehearsalMeshResolution = (typeof rehearsalMeshResolutions)[number];

/** The tip's error at one insertion depth, free-hand and robot-assisted. */
export interface RehearsalPathSample {
  /** Insertion depth from the needle's start outside the liver, mm. */
  depthMm: number;
  freehandMm: number;
  /** Null where the assisted run had stopped (it could not go on). */
  assistedMm: number | null;
}

/** The insertion rehearsal of one applicator: a simulation estimate, not a measurement. */
export interface ApplicatorRehearsal {
  applicatorIndex: number;
  /** |tip − target| at the planned depth, straight along the plan without correction, mm. */
  freehandTipErrorMm: number;
  /** The same with the base steered every step by inverse simulation, mm (null: not reached). */
  assistedTipErrorMm: number | null;
  /** Whether the assisted insertion reached the planned depth with the target in reach. */
  reached: boolean;
  /** Why not, in words (absent when reached). */
  notReachedReason?: string;
  /** Largest displacement of the target from where it was imaged over one breath, mm. */
  targetMotionMm: number;
  /** The target's superior–inferior range over one breath, mm. */
  targetSiRangeMm: number;
  errorAlongPath: RehearsalPathSample[];
  meshNodes: number;
  meshResolution: RehearsalMeshResolution;
  /** The mesh's quality: smallest dihedral angle (degrees) and largest aspect ratio. */
  meshQuality?: { minDihedralDeg: number; maxAspectRatio: number };
  /** Breathing the rehearsal ran with (Lujan's model): amplitude, period, shape n. */
  breathing: { amplitudeMm: number; periodS: number; shapeN: number };
  strategy: RehearsalStrategy;
  /** Median wall time of an assisted control step (Jacobian and update included), ms. */
  stepMs: number;
}

/** One moment of a rehearsal replay. */
export interface RehearsalFrame {
  timeS: number;
  depthMm: number;
  /** Positions of the surface's nodes, x y z per node, LPS mm rounded to 0.1 mm. */
  surfaceMm: number[];
  baseMm: [number, number, number];
  tipMm: [number, number, number];
  targetMm: [number, number, number];
  /**
   * Points of the tumours and vessels embedded in the mesh (barycentric) as they move, x y z
   * per point, LPS mm rounded to 0.1 mm, by kind (absent on replays made before they were).
   */
  structures?: { kind: StructureKind; pointsMm: number[] }[];
}

/** The replay of one applicator's rehearsal, for the viewer (GET /api/assessments/:id/rehearsal). */
export interface RehearsalReplay {
  applicatorIndex: number;
  mode: 'freehand' | 'assisted';
  /** The liver's surface triangles: three indices per triangle into a frame's surface nodes. */
  triangles: number[];
  frames: RehearsalFrame[];
}

export interface RehearsalReplayView {
  /** The caution every rehearsal display carries. */
  caution: string;
  replays: RehearsalReplay[];
}

export interface AssessmentView {
  id: string;
  planId: string;
  status: AssessmentStatus;
  /** 0–1. */
  progress: number;
  /**
   * The profile versions and engine the assessment ran on (its frozen snapshot); null on an
   * assessment stored before snapshots were kept.
   */
  inputs: AssessmentInputsView | null;
  /**
   * On the plan's newest assessment only: what changed since it ran ("assessed on earlier
   * inputs"); absent when nothing did.
   */
  inputChanges?: InputChange[];
  result?: AssessmentResult;
  error?: string;
  createdAt: string;
  updatedAt: string;
}
