/**
 * What the server hands a pool thread and gets back. Everything is plain data (structured
 * clone), the label map's buffer transferred rather than copied.
 */
import type {
  ApplicatorCalibration,
  AssessmentResult,
  RehearsalReplay,
  RehearsalSettings,
  SafetyProfileBody,
  StructureKind,
  VolumeGeometry,
  ZoneTableRow,
} from '@emberline/shared';

export interface TaskApplicator {
  entry: [number, number, number];
  target: [number, number, number];
  profile: {
    id: string;
    workingLengthMm: number;
    activeLengthMm: number;
    zoneTable: ZoneTableRow[];
    /** The heating model fitted to this profile version before, when one is stored. */
    storedCalibration?: ApplicatorCalibration;
  };
  powerW: number;
  timeS: number;
}

export interface AssessmentTaskInput {
  geometry: VolumeGeometry;
  labelMap: { dataType: 'uint8' | 'uint16'; buffer: ArrayBuffer };
  /** `label`: how the board names a tumour ("segment VIII, 24 mm"), for the figures and verdict. */
  structures: { id: string; labelValue: number; kind: StructureKind | null; label?: string }[];
  applicators: TaskApplicator[];
  safetyProfile: SafetyProfileBody;
  /** Names the series' label map as stored, so a thread may keep its distance fields. */
  seriesKey: string;
  /** Whether to run the bioheat model beside the table model. */
  isBioheatRequested: boolean;
  /** The insertion rehearsal's settings, null when switched off. */
  rehearsal: RehearsalSettings | null;
}

export interface TaskProgress {
  /** 0–1 over the whole assessment. */
  fraction: number;
  stage: string;
}

/**
 * A refusal of the engine, returned rather than thrown: an Error crossing a worker-thread
 * boundary keeps only standard names (structured clone), so a thrown `EngineRefusal` would
 * arrive as a plain Error.
 */
export interface AssessmentTaskRefusal {
  refusal: { problem: string; field: string; message: string };
}

export interface AssessmentTaskOutput {
  result: AssessmentResult;
  timingsMs: Record<string, number>;
  /** Binary display data for the client (zones and margins), already encoded. */
  display: ArrayBuffer | null;
  /** The insertion rehearsal's replays for the viewer (empty when it did not run). */
  replays: RehearsalReplay[];
  /** Calibrations the run had to fit (none was stored): the server stores them per version. */
  newCalibrations?: { profileId: string; calibration: ApplicatorCalibration }[];
}
