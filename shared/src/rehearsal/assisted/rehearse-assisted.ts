/**
 * The robot-assisted insertion: the same run as the free-hand one (same breathing, start phase,
 * speed and depth schedule; ../insertion/rehearse-freehand.ts) with the needle's base steered
 * every step by the inverse-simulation controller (assisted-controller.ts).
 *
 * > A rehearsal model, not a prediction for a patient: the treating team, local protocols and
 * > licensed practice decide how a needle is placed.
 */
import {
  runInsertions,
  type FreehandOptions,
  type FreehandResult,
  type Steering,
} from '../insertion/rehearse-freehand';
import type { InsertionSimulation } from '../insertion/insertion-simulation';
import type { NeedlePose } from '../insertion/needle';
import {
  AssistedController,
  type AssistedControlOptions,
  type ControlStepRecord,
} from './assisted-controller';
import { pathObjective } from './path-objective';

export interface AssistedOptions extends FreehandOptions {
  control?: AssistedControlOptions;
  /** Called after every control step with what the controller did. */
  onControlStep?: (step: ControlStepRecord) => void;
}

export interface AssistedResult extends FreehandResult {
  /** Median wall time of the Jacobian within a control step, ms. */
  jacobianMedianMs: number;
  strategy: NonNullable<AssistedControlOptions['strategy']>;
  /** The base's pose at the end. */
  finalPose: NeedlePose;
}

const median = (values: number[]): number =>
  values.length === 0 ? 0 : [...values].sort((a, b) => a - b)[values.length >> 1];

/** Runs a robot-assisted insertion along the plan. Refuses bad options (EngineRefusal). */
export function rehearseAssisted(options: AssistedOptions): AssistedResult {
  return runWithController(options, false).assisted;
}

/**
 * The free-hand and the robot-assisted insertion from one shared warm-up (the same breathing
 * state when the needle starts): what the assessment shows side by side.
 */
export function rehearseFreehandAndAssisted(options: AssistedOptions): {
  freehand: FreehandResult;
  assisted: AssistedResult;
} {
  const { freehand, assisted } = runWithController(options, true);
  return { freehand: freehand as FreehandResult, assisted };
}

function runWithController(
  options: AssistedOptions,
  withFreehand: boolean,
): { freehand: FreehandResult | null; assisted: AssistedResult } {
  const jacobianMs: number[] = [];
  let controller: AssistedController | null = null;
  let finalPose: NeedlePose | null = null;
  const steered = (simulation: InsertionSimulation): Steering => {
    const objective = pathObjective(simulation.mesh, options.plan, simulation.capsuleEntryMm);
    const made = new AssistedController(simulation, objective, options.control);
    controller = made;
    return {
      step(pose, depthMm) {
        const step = made.step(pose, depthMm);
        jacobianMs.push(step.jacobianMs);
        finalPose = step.pose;
        options.onControlStep?.(step);
        return { record: step.record, pose: step.pose };
      },
    };
  };
  const results = runInsertions(options, withFreehand ? [null, steered] : [steered]);
  const result = results[results.length - 1];
  return {
    freehand: withFreehand ? results[0] : null,
    assisted: {
      ...result,
      jacobianMedianMs: median(jacobianMs),
      strategy: (controller as AssistedController | null)?.strategy ?? 'pseudo-constraints',
      finalPose: finalPose ?? {
        baseMm: [...options.plan.startMm],
        direction: [0, 0, 1],
        rollRad: 0,
      },
    },
  };
}
