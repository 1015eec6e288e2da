/**
 * The error every scoring module throws for input a person can fix (weights, control points,
 * judgements, windows, arrays of the wrong size). Routes turn it into a 4xx carrying `message`;
 * nothing has been computed or saved when it is thrown. `field` names the offending input where
 * there is one (a control point, a factor, a matrix cell), so a form can point at it.
 */
export class ScoringInputError extends Error {
  readonly field?: string;
  constructor(message: string, field?: string) {
    super(message);
    this.name = "ScoringInputError";
    this.field = field;
  }
}
