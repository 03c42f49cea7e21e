/**
 * Errors of the tissue solver. Input errors are the caller's to fix (a bad mesh, a parameter
 * out of range, a node index past the end); numerical errors mean a step went wrong and was
 * not applied, so the state before it is kept.
 */

/** Bad input to the tissue solver: the message says what and where. */
export class FemInputError extends Error {
  override readonly name = 'FemInputError';
}

/** A step or solve produced non-finite numbers; the solver's state was left as it was. */
export class FemNumericalError extends Error {
  override readonly name = 'FemNumericalError';
}
