/**
 * What the assessment engine reads: one series' grid and label map, what its labels stand for,
 * the plan's applicators with their profiles, the safety profile and the run's options.
 * Positions LPS, millimetres (DICOM PS3.3 C.7.6.2.1.1); the label map lies on the series grid.
 */
import { zoneTableSchema, type ZoneTableRow } from '../api/applicator-profiles';
import type { ApplicatorCalibration } from '../bioheat/calibration';
import { checkHeatingParameters } from '../bioheat/heating-parameters';
import { zoneModels, type ZoneModel } from '../api/assessments';
import type { RehearsalSettings } from '../api/rehearsal-settings';
import { maximumApplicatorsPerPlan, minimumApplicatorPathMm } from '../api/plans';
import { safetyProfileBodySchema, type SafetyProfileBody } from '../api/safety-profiles';
import { maxLabelValue, structureKinds, type StructureKind } from '../api/structures';
import { voxelCount, type VolumeGeometry } from '../geometry/patient-geometry';
import { distance, dot, type Vec3 } from '../geometry/vector';
import { EngineRefusal } from './engine-refusal';

/** One labelled structure: the voxels of `labelValue` in the label map are of `kind`. */
export interface AssessmentStructure {
  id: string;
  labelValue: number;
  /** Null while nobody has said what the label stands for: such labels are ignored. */
  kind: StructureKind | null;
  /**
   * How the board names a tumour in coverage figures and verdict messages: its confirmed lesion
   * of the case ("segment VIII, 24 mm", `lesionLabel`). Without one the engine says
   * "label N, not linked to a lesion" (`tumourLabelOf`), never the label number alone.
   */
  label?: string;
}

/** What the engine needs of an applicator profile. */
export interface AssessmentApplicatorProfile {
  /** Usable shaft length from hub to tip, mm. */
  workingLengthMm: number;
  /** Length of the radiating (active) part behind the tip, mm. */
  activeLengthMm: number;
  zoneTable: readonly ZoneTableRow[];
}

/** One applicator of the plan; its tip is placed at `target`. */
export interface AssessmentApplicator {
  /** Skin entry point, LPS, millimetres. */
  entry: Vec3;
  /** Where the tip goes, LPS, millimetres. */
  target: Vec3;
  profile: AssessmentApplicatorProfile;
  powerW: number;
  timeS: number;
  /**
   * The heating model calibrated to this applicator's profile (`calibrateApplicatorProfile`):
   * needed for the physics zone, which it heats and judges (`physics-acceptance.ts`). The zone
   * table ignores it.
   */
  calibration?: ApplicatorCalibration;
}

/** Options of one run. */
export interface AssessmentOptions {
  /** `['table']`, or `['table', 'bioheat']` to add the physics zone. */
  zoneModels: readonly ZoneModel[];
  /**
   * Padding of the crop around the applicator paths on which distance fields are computed, mm
   * (`DEFAULT_ASSESSMENT_CROP_MARGIN_MM`). Clearances beyond it are still exact, found another way.
   */
  cropMarginMm: number;
  /**
   * The insertion rehearsal (rehearsal-stage.ts): its settings and wall-clock limit; absent or
   * null when switched off.
   */
  rehearsal?: { settings: RehearsalSettings; timeLimitMs: number } | null;
}

export interface AssessmentInput {
  /** The series grid, LPS, millimetres; its directions orthonormal. */
  geometry: VolumeGeometry;
  /** Label values on the series grid, index i + nx·(j + ny·k); 0 is background. */
  labelMap: Uint8Array | Uint16Array;
  structures: readonly AssessmentStructure[];
  applicators: readonly AssessmentApplicator[];
  safetyProfile: SafetyProfileBody;
  options: AssessmentOptions;
  /**
   * Names this series and label map (e.g. series id and label-map version) so that distance
   * fields can be kept between runs in a cache; without it nothing is cached.
   */
  seriesKey?: string;
}

export const DEFAULT_ASSESSMENT_CROP_MARGIN_MM = 20;
/** Largest crop margin accepted, mm. */
export const MAXIMUM_CROP_MARGIN_MM = 200;

/** Largest departure of the series directions from an orthonormal frame (no unit). */
const ORTHONORMAL_TOLERANCE = 1e-4;

/**
 * Checks everything the engine relies on and throws an `EngineRefusal` (problem
 * `invalid-input`) naming the first offending field, e.g. `applicators[0].target`.
 */
export function checkAssessmentInput(input: AssessmentInput): void {
  checkGeometry(input.geometry);
  const voxels = voxelCount(input.geometry.dimensions);
  if (input.labelMap.length !== voxels) {
    refuse(
      'labelMap',
      `The label map holds ${input.labelMap.length} voxels; the series grid ` +
        `(${input.geometry.dimensions.join(' × ')}) has ${voxels}.`,
    );
  }
  checkStructures(input.structures);
  checkApplicators(input.applicators);
  const profile = safetyProfileBodySchema.safeParse(input.safetyProfile);
  if (!profile.success) {
    const issue = profile.error.issues[0];
    refuse(fieldOf('safetyProfile', issue.path), `Safety profile: ${issue.message}.`);
  }
  checkOptions(input.options);
}

function refuse(field: string, message: string): never {
  throw new EngineRefusal('invalid-input', field, message);
}

function fieldOf(prefix: string, path: readonly PropertyKey[]): string {
  return path.reduce<string>(
    (field, key) => (typeof key === 'number' ? `${field}[${key}]` : `${field}.${String(key)}`),
    prefix,
  );
}

const isFinitePoint = (point: unknown): point is Vec3 =>
  Array.isArray(point) && point.length === 3 && point.every((value) => Number.isFinite(value));

function checkGeometry(geometry: VolumeGeometry): void {
  const { dimensions, spacingMm, originLps, direction } = geometry;
  if (!dimensions.every((extent) => Number.isInteger(extent) && extent >= 1)) {
    refuse('geometry.dimensions', 'The grid dimensions must be 3 positive whole numbers.');
  }
  if (!spacingMm.every((spacing) => spacing > 0 && Number.isFinite(spacing))) {
    refuse('geometry.spacingMm', 'The voxel spacing must be 3 positive finite numbers (mm).');
  }
  if (!isFinitePoint(originLps)) {
    refuse('geometry.originLps', 'The grid origin must be 3 finite numbers (LPS, mm).');
  }
  if (direction.length !== 3 || !direction.every(isFinitePoint)) {
    refuse('geometry.direction', 'The grid directions must be 3 vectors of 3 finite numbers.');
  }
  for (let a = 0; a < 3; a++) {
    for (let b = a; b < 3; b++) {
      const expected = a === b ? 1 : 0;
      if (Math.abs(dot(direction[a], direction[b]) - expected) > ORTHONORMAL_TOLERANCE) {
        refuse(
          'geometry.direction',
          'The grid directions must be perpendicular unit vectors (an orthonormal frame).',
        );
      }
    }
  }
}

function checkStructures(structures: readonly AssessmentStructure[]): void {
  const ids = new Set<string>();
  const labels = new Map<number, number>();
  structures.forEach((structure, index) => {
    const field = `structures[${index}]`;
    if (typeof structure.id !== 'string' || structure.id.length === 0) {
      refuse(`${field}.id`, `Structure ${index + 1} needs an id.`);
    }
    if (ids.has(structure.id)) {
      refuse(`${field}.id`, `Structure id ${structure.id} appears twice.`);
    }
    ids.add(structure.id);
    const { labelValue } = structure;
    if (!Number.isInteger(labelValue) || labelValue < 1 || labelValue > maxLabelValue) {
      refuse(
        `${field}.labelValue`,
        `Structure ${structure.id}: a label value is a whole number from 1 to ${maxLabelValue}.`,
      );
    }
    const other = labels.get(labelValue);
    if (other !== undefined) {
      refuse(
        `${field}.labelValue`,
        `Structures ${structures[other].id} and ${structure.id} share label value ${labelValue}.`,
      );
    }
    labels.set(labelValue, index);
    if (structure.kind !== null && !structureKinds.includes(structure.kind)) {
      refuse(`${field}.kind`, `Structure ${structure.id}: ${String(structure.kind)} is no kind.`);
    }
    if (structure.label !== undefined && typeof structure.label !== 'string') {
      refuse(`${field}.label`, `Structure ${structure.id}: a label is text.`);
    }
  });
}

function checkApplicators(applicators: readonly AssessmentApplicator[]): void {
  if (applicators.length < 1 || applicators.length > maximumApplicatorsPerPlan) {
    refuse(
      'applicators',
      `A plan holds 1 to ${maximumApplicatorsPerPlan} applicators; this one has ` +
        `${applicators.length}.`,
    );
  }
  applicators.forEach((applicator, index) => {
    const field = `applicators[${index}]`;
    const name = `Applicator ${index + 1}`;
    if (!isFinitePoint(applicator.entry)) {
      refuse(`${field}.entry`, `${name}: the entry must be 3 finite numbers (LPS, mm).`);
    }
    if (!isFinitePoint(applicator.target)) {
      refuse(`${field}.target`, `${name}: the target must be 3 finite numbers (LPS, mm).`);
    }
    const lengthMm = distance(applicator.entry, applicator.target);
    if (lengthMm < minimumApplicatorPathMm) {
      refuse(
        `${field}.target`,
        `${name}: the target lies ${lengthMm.toFixed(2)} mm from the entry; it must lie at ` +
          `least ${minimumApplicatorPathMm} mm away.`,
      );
    }
    const positive = (value: number) => value > 0 && Number.isFinite(value);
    if (!positive(applicator.powerW)) {
      refuse(`${field}.powerW`, `${name}: the power must be a positive number of watts.`);
    }
    if (!positive(applicator.timeS)) {
      refuse(`${field}.timeS`, `${name}: the time must be a positive number of seconds.`);
    }
    if (applicator.calibration !== undefined) {
      try {
        checkHeatingParameters(applicator.calibration.parameters, 'parameters');
      } catch (error) {
        const reason = error instanceof Error ? error.message : String(error);
        refuse(`${field}.calibration`, `${name}: the calibration is malformed (${reason}).`);
      }
    }
    const { profile } = applicator;
    if (!positive(profile.workingLengthMm)) {
      refuse(`${field}.profile.workingLengthMm`, `${name}: the working length must be > 0 mm.`);
    }
    if (!positive(profile.activeLengthMm)) {
      refuse(`${field}.profile.activeLengthMm`, `${name}: the active length must be > 0 mm.`);
    }
    const table = zoneTableSchema.safeParse(profile.zoneTable);
    if (!table.success) {
      const issue = table.error.issues[0];
      refuse(fieldOf(`${field}.profile.zoneTable`, issue.path), `${name}: ${issue.message}.`);
    }
  });
}

function checkOptions(options: AssessmentOptions): void {
  const models = options.zoneModels;
  const isKnown = (model: ZoneModel) => zoneModels.includes(model);
  if (
    !Array.isArray(models) ||
    !models.includes('table') ||
    !models.every(isKnown) ||
    new Set(models).size !== models.length
  ) {
    refuse(
      'options.zoneModels',
      "The zone models must be ['table'] or ['table', 'bioheat'] (the table zone is always " +
        'computed).',
    );
  }
  const marginMm = options.cropMarginMm;
  if (!(marginMm >= 0 && marginMm <= MAXIMUM_CROP_MARGIN_MM)) {
    refuse(
      'options.cropMarginMm',
      `The crop margin must be 0 to ${MAXIMUM_CROP_MARGIN_MM} mm; got ${marginMm}.`,
    );
  }
}
