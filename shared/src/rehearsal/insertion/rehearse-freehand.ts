/**
 * Free-hand insertion: the needle goes straight along the planned line at a set speed, starting
 * at a chosen moment of the breath, and nobody corrects it — what a steady hand does without
 * looking. The tip's error to the (moving, embedded) target at the end, the target's own motion,
 * and the error along the way are what the rehearsal shows (README, "Free-hand insertion").
 *
 * > A rehearsal model, not a prediction for a patient: the treating team, local protocols and
 * > licensed practice decide how a needle is placed.
 */
import { monotonicMs } from '../../assessment/assessment-stages';
import { distance, norm, type Vec3 } from '../../geometry/vector';
import { pathObjective, tipPathErrorMm } from '../assisted/path-objective';
import { embeddedPosition } from '../mesh/embedding';
import { resolveBreathing, timeAtPhase } from './breathing';
import type { ComplianceStats } from './compliance';
import { checkNumber, refuse } from './insertion-input';
import {
  InsertionSimulation,
  type InsertionSimulationOptions,
  type StepRecord,
} from './insertion-simulation';
import type { NeedlePose } from './needle';

/** A free-hand run: the simulation's options plus when and how fast the needle goes in. */
export interface FreehandOptions extends Omit<InsertionSimulationOptions, 'startTimeS'> {
  /**
   * Moment of the breath at which the needle starts moving, as a fraction of the breath from the
   * peak of inhalation (0) through mid-exhalation's rest (0.5); default 0.5.
   */
  startPhase?: number;
  /** Whole breaths simulated before the needle moves, to settle the tissue (default 1; 0 still). */
  warmUpCycles?: number;
  /** Insertion speed along the shaft, mm/s (default 10). */
  speedMmPerS?: number;
  /** The tip starts this far before the planned entry into the organ, mm (default 3). */
  startGapMm?: number;
  /** Hold the breath from the moment the needle starts (default false: free breathing). */
  breathHold?: boolean;
  /** Called after every step (for progress or drawing), with the needle's pose (null before). */
  onStep?: (
    record: StepRecord,
    simulation: InsertionSimulation,
    pose: NeedlePose | null,
    run: number,
  ) => void;
  /**
   * Asked before every step: a reason in words stops the run with `RehearsalStopped` (a time
   * limit, a cancelled job); null goes on.
   */
  shouldStop?: () => string | null;
}

/** A run stopped from outside (`shouldStop`): the message says why. */
export class RehearsalStopped extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RehearsalStopped';
  }
}

/**
 * How the needle is moved during the insertion: free-hand keeps the planned pose; a controller
 * (../assisted) chooses a new one every step. `step` begins, solves and commits one step.
 */
export interface Steering {
  step(pose: NeedlePose, depthMm: number): { record: StepRecord; pose: NeedlePose };
}

/** One sample of the error along the path. */
export interface PathSample {
  timeS: number;
  depthMm: number;
  /** |tip − target|, mm. */
  tipErrorMm: number;
  /** Distance of the target from the needle's line, mm. */
  lateralErrorMm: number;
  /**
   * Distance of the tip from where it should be on the planned path at this depth, the path's
   * ends (entry into the organ, target) moving with the tissue (../assisted/path-objective.ts),
   * mm: what the robot-assisted controller drives to zero; at the planned depth, the tip error.
   */
  pathErrorMm: number;
}

/** What a free-hand run found. */
export interface FreehandResult {
  /** |tip − target| when the needle reached the planned depth, mm. */
  finalTipErrorMm: number;
  /** The target's distance from the needle's line then, mm. */
  finalLateralErrorMm: number;
  finalTipMm: Vec3;
  finalTargetMm: Vec3;
  plannedDepthMm: number;
  target: {
    imagedMm: Vec3;
    /** Superior–inferior range of the target over the last warm-up breath, mm (0 without one). */
    breathingSiRangeMm: number;
    /** Largest distance of the target from where it was imaged over that breath, mm. */
    breathingMaxDisplacementMm: number;
    /** Superior–inferior range of the target while the needle went in, mm. */
    insertionSiRangeMm: number;
    /** Largest distance of the target from where it was imaged during the insertion, mm. */
    insertionMaxDisplacementMm: number;
  };
  /** The diaphragm's superior–inferior range over the run, mm (for scale). */
  diaphragmSiRangeMm: number;
  path: PathSample[];
  /** Depth and force at which the capsule gave way (null if it did not). */
  puncture: { depthMm: number; forceN: number } | null;
  timing: {
    /** Building the compliance table, ms. */
    precomputeMs: number;
    /** Medians over the insertion's steps, ms. */
    freeMotionMedianMs: number;
    constraintMedianMs: number;
    /** Median wall time of a whole insertion step (for a controller: its control step), ms. */
    stepMedianMs: number;
    steps: number;
    nodes: number;
  };
  compliance: ComplianceStats | null;
}

const median = (values: number[]): number =>
  values.length === 0 ? 0 : [...values].sort((a, b) => a - b)[values.length >> 1];

/** Runs a free-hand insertion along the plan. Refuses bad options (EngineRefusal). */
export function rehearseFreehand(options: FreehandOptions): FreehandResult {
  return runInsertion(options, null);
}

/**
 * The insertion run shared by free-hand and steered rehearsals: set-up, warm-up breaths, then
 * the needle from just before the capsule to the planned depth at the set speed. `steering`
 * (made once the simulation exists) moves the needle; null keeps the planned pose.
 */
export function runInsertion(
  options: FreehandOptions,
  makeSteering: ((simulation: InsertionSimulation) => Steering) | null,
): FreehandResult {
  return runInsertions(options, [makeSteering])[0];
}

/**
 * Several insertions after one shared warm-up: the simulation is warmed up once, its state kept,
 * and each run (free-hand for null, else steered) starts from that same state — the runs differ
 * only in how the needle is moved. `onStep`'s fourth argument is the run's index (−1 during the
 * warm-up).
 */
export function runInsertions(
  options: FreehandOptions,
  makeSteerings: readonly (((simulation: InsertionSimulation) => Steering) | null)[],
): FreehandResult[] {
  const breathingOff = options.boundary?.breathing === null;
  const parameters = breathingOff
    ? resolveBreathing({ amplitudeMm: 0 })
    : resolveBreathing(options.boundary?.breathing ?? undefined, 'boundary.breathing');
  const startPhase = checkNumber(options.startPhase ?? 0.5, 'startPhase', 0, 1);
  const warmUpCycles = checkNumber(
    options.warmUpCycles ?? (breathingOff ? 0 : 1),
    'warmUpCycles',
    0,
    20,
  );
  const speedMmPerS = checkNumber(options.speedMmPerS ?? 10, 'speedMmPerS', 0.1, 200);
  const startGapMm = checkNumber(options.startGapMm ?? 3, 'startGapMm', 0, 200);
  const h = checkNumber(options.solver?.timeStepS ?? 0.02, 'solver.timeStepS', 0.01, 0.05);

  // Start where the breathing curve is at the imaged state (no jump at the first step).
  const imagedPhase = parameters.imagedAt === 'exhale' ? 0.5 : 0;
  const startTimeS = breathingOff ? 0 : timeAtPhase(imagedPhase, parameters, 0);
  const insertionTimeS = breathingOff
    ? startTimeS + warmUpCycles * parameters.periodS
    : timeAtPhase(startPhase, parameters, startTimeS + warmUpCycles * parameters.periodS);
  const warmUpSteps = Math.round((insertionTimeS - startTimeS) / h);
  const holdFromS = options.breathHold ? startTimeS + warmUpSteps * h : null;

  const simulation = new InsertionSimulation({
    ...options,
    boundary: { ...options.boundary, holdFromS },
    startTimeS,
  });
  const imagedMm = simulation.targetMm();
  const plannedDepthMm = distance(options.plan.startMm, options.plan.targetMm);
  const direction = options.plan.targetMm.map(
    (v, a) => (v - options.plan.startMm[a]) / plannedDepthMm,
  ) as Vec3;
  const objective = pathObjective(simulation.mesh, options.plan, simulation.capsuleEntryMm);
  const checkStop = (): void => {
    const reason = options.shouldStop?.() ?? null;
    if (reason !== null) throw new RehearsalStopped(reason);
  };

  let diaphragmLow = Infinity;
  let diaphragmHigh = -Infinity;
  const trackDiaphragm = (): void => {
    const z = simulation.breathing.offsetMm(simulation.timeS)[2];
    diaphragmLow = Math.min(diaphragmLow, z);
    diaphragmHigh = Math.max(diaphragmHigh, z);
  };
  trackDiaphragm();
  const lastBreathFrom = warmUpSteps - Math.round(parameters.periodS / h);
  let breathLow = Infinity;
  let breathHigh = -Infinity;
  let breathMax = 0;
  for (let step = 0; step < warmUpSteps; step++) {
    checkStop();
    const record = simulation.step(null);
    options.onStep?.(record, simulation, null, -1);
    trackDiaphragm();
    if (warmUpCycles >= 1 && step >= lastBreathFrom) {
      breathLow = Math.min(breathLow, record.targetMm[2]);
      breathHigh = Math.max(breathHigh, record.targetMm[2]);
      breathMax = Math.max(breathMax, distance(record.targetMm, imagedMm));
    }
  }

  const warmedUp = makeSteerings.length > 1 ? simulation.saveState() : null;
  const results: FreehandResult[] = [];
  for (const [run, makeSteering] of makeSteerings.entries()) {
    if (run > 0 && warmedUp) simulation.restoreState(warmedUp);
    let pose: NeedlePose = { baseMm: [...options.plan.startMm], direction, rollRad: 0 };
    const steering = makeSteering ? makeSteering(simulation) : null;
    let depthMm = Math.max(0, simulation.entryDistanceMm - startGapMm);
    if (depthMm >= plannedDepthMm) refuse('startGapMm', 'The tip would start past the target.');
    const path: PathSample[] = [];
    const freeMotionMs: number[] = [];
    const constraintMs: number[] = [];
    const stepMs: number[] = [];
    let insertionLow = Infinity;
    let insertionHigh = -Infinity;
    let insertionMax = 0;
    let puncture: FreehandResult['puncture'] = null;
    let last: StepRecord | null = null;
    const stepLimit = Math.ceil((plannedDepthMm - depthMm) / (speedMmPerS * h)) + 1;
    for (let step = 0; step < stepLimit && (last === null || depthMm < plannedDepthMm); step++) {
      checkStop();
      depthMm = Math.min(plannedDepthMm, depthMm + speedMmPerS * h);
      const stepStart = monotonicMs();
      if (steering) {
        ({ record: last, pose } = steering.step(pose, depthMm));
      } else {
        last = simulation.step(pose, depthMm);
      }
      stepMs.push(monotonicMs() - stepStart);
      options.onStep?.(last, simulation, pose, run);
      trackDiaphragm();
      freeMotionMs.push(last.freeMotionMs);
      constraintMs.push(last.constraintMs);
      insertionLow = Math.min(insertionLow, last.targetMm[2]);
      insertionHigh = Math.max(insertionHigh, last.targetMm[2]);
      insertionMax = Math.max(insertionMax, distance(last.targetMm, imagedMm));
      if (last.needle?.puncturedNow) {
        puncture = { depthMm, forceN: last.needle.contactForceN };
      }
      path.push({
        timeS: last.timeS,
        depthMm,
        tipErrorMm: last.tipErrorMm ?? Number.NaN,
        lateralErrorMm: last.lateralErrorMm ?? Number.NaN,
        pathErrorMm: norm(
          tipPathErrorMm(
            pose,
            depthMm,
            embeddedPosition(simulation.solver.positionsM, simulation.mesh, objective.entry).map(
              (v) => v * 1000,
            ) as Vec3,
            last.targetMm,
            objective.plannedDepthMm,
          ),
        ),
      });
    }
    if (!last || !last.tipMm) refuse('plan', 'The needle never moved: the plan is too short.');
    results.push({
      finalTipErrorMm: last.tipErrorMm ?? Number.NaN,
      finalLateralErrorMm: last.lateralErrorMm ?? Number.NaN,
      finalTipMm: last.tipMm,
      finalTargetMm: last.targetMm,
      plannedDepthMm,
      target: {
        imagedMm,
        breathingSiRangeMm: warmUpCycles >= 1 ? breathHigh - breathLow : 0,
        breathingMaxDisplacementMm: breathMax,
        insertionSiRangeMm: insertionHigh - insertionLow,
        insertionMaxDisplacementMm: insertionMax,
      },
      diaphragmSiRangeMm: diaphragmHigh - diaphragmLow,
      path,
      puncture,
      timing: {
        precomputeMs: simulation.precomputeMs,
        freeMotionMedianMs: median(freeMotionMs),
        constraintMedianMs: median(constraintMs),
        stepMedianMs: median(stepMs),
        steps: warmUpSteps + path.length,
        nodes: simulation.solver.nodeCount,
      },
      compliance: simulation.complianceStats(),
    });
  }
  return results;
}
