/**
 * The robot-assisted insertion: the same run as the free-hand one (same breathing, start phase,
 * speed and depth schedule; ../insertion/rehearse-freehand.ts) with the needle's base steered
 * every step by the inverse-simulation controller (assisted-controller.ts).
 *
 * > A rehearsal model, not a prediction for a patient: the treating team, local protocols and
 * > licensed practice decide how a needle is placed.
 */
import {
  runInsertion,
  type FreehandOptions,
  type FreehandResult,
} from '../insertion/rehearse-freehand';
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
  const jacobianMs: number[] = [];
  let controller: AssistedController | null = null;
  let finalPose: NeedlePose | null = null;
  const result = runInsertion(options, (simulation) => {
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
  });
  return {
    ...result,
    jacobianMedianMs: median(jacobianMs),
    strategy: (controller as AssistedController | null)?.strategy ?? 'factorised',
    finalPose: finalPose ?? {
      baseMm: [...options.plan.startMm],
      direction: [0, 0, 1],
      rollRad: 0,
    },
  };
}
