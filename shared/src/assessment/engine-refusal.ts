/**
 * The one error the assessment engine throws for input it will not assess: a plan, a profile or
 * a zone table it cannot read, never a fault of the engine. Its message is fit to show to the
 * user and names the field concerned.
 */

/** What kind of input was refused. */
export type EngineRefusalProblem = 'invalid-input' | 'zone-table-range' | 'plan-outside-series';

/**
 * Thrown for input the engine refuses. `name` stays `EngineRefusal` in every subclass: an error
 * crossing a worker-thread boundary keeps its name and message but not its class, and the
 * server tells a refusal (answered to the user) from a failure (retried, logged) by the name.
 */
export class EngineRefusal extends Error {
  override readonly name = 'EngineRefusal';

  constructor(
    readonly problem: EngineRefusalProblem,
    /** Path of the offending field in the assessment input, e.g. `applicators[1].powerW`. */
    readonly field: string,
    message: string,
  ) {
    super(message);
  }
}
