/**
 * Analytic Hierarchy Process: weights from pairwise comparisons on Saaty's 1–9 scale, with the
 * consistency ratio. Saaty, T.L. (1980) The Analytic Hierarchy Process: Planning, Priority Setting,
 * Resource Allocation, McGraw-Hill, New York. Group judgements aggregate by element-wise geometric
 * mean: Aczél, J. & Saaty, T.L. (1983) "Procedures for synthesizing ratio judgements", Journal of
 * Mathematical Psychology 27(1), 93–102.
 *
 * A matrix is given in full, row by row: a[i][j] = how much more important factor i is than factor j
 * (1 equal … 9 extreme; 1/3 = j moderately more important than i); a[j][i] = 1/a[i][j]; a[i][i] = 1.
 */
import { ScoringInputError } from "./errors.ts";

/** Saaty's (1980) random consistency index RI by matrix size n (n = 1, 2: 0 — see {@link ahpWeights}). */
export const SAATY_RANDOM_INDEX: Readonly<Record<number, number>> = Object.freeze({
  1: 0, 2: 0, 3: 0.58, 4: 0.9, 5: 1.12, 6: 1.24, 7: 1.32, 8: 1.41, 9: 1.45, 10: 1.49,
});

/** Saaty (1980): a consistency ratio up to 0.10 is acceptable; above it the judgements should be revised. */
export const CONSISTENCY_RATIO_LIMIT = 0.1;

/** Power iteration stops when no weight changes by more than this between iterations. */
export const POWER_ITERATION_TOLERANCE = 1e-12;
const MAX_ITERATIONS = 10_000;
/** Relative tolerance for a[i][j]·a[j][i] = 1, the diagonal and the 1/9–9 range (rounded input such as 0.1111111). */
export const RECIPROCAL_TOLERANCE = 1e-6;

export interface AhpResult {
  /** principal-eigenvector weights, summing to 1, in the matrix's order */
  weights: Float64Array;
  /** principal eigenvalue λmax (= n for a perfectly consistent matrix) */
  lambdaMax: number;
  /** CI = (λmax − n)/(n − 1), clamped at 0 against rounding; 0 for n ≤ 2 */
  consistencyIndex: number;
  /** RI for this n (Saaty 1980); 0 for n ≤ 2 */
  randomIndex: number;
  /** CR = CI/RI; 0 for n ≤ 2 by definition */
  consistencyRatio: number;
  /** CR ≤ 0.10 */
  acceptable: boolean;
  /** power iterations used */
  iterations: number;
}

function label(names: readonly string[] | undefined, i: number): string {
  return names?.[i] !== undefined ? `"${names[i]}"` : `factor ${i + 1}`;
}

/**
 * Saaty, T.L. (1980) The Analytic Hierarchy Process: Planning, Priority Setting, Resource
 * Allocation, McGraw-Hill, New York.
 *
 * Check a pairwise comparison matrix: square, 1 ≤ n ≤ 10 (Saaty's random index is tabulated here up
 * to 10; group more factors into criteria), ones on the diagonal, every judgement a finite number in
 * 1/9…9, and a[j][i] = 1/a[i][j] (relative tolerance {@link RECIPROCAL_TOLERANCE}). Throws
 * {@link ScoringInputError} naming the pair (by `names` where given). O(n²).
 */
export function validatePairwiseMatrix(matrix: readonly (readonly number[])[], names?: readonly string[]): void {
  const n = matrix.length;
  if (n === 0) throw new ScoringInputError("A pairwise comparison needs at least one factor.");
  if (n > 10)
    throw new ScoringInputError(
      `A pairwise comparison of ${n} factors is too large: Saaty's random index is tabulated here for up to 10; group the factors into criteria of at most 10.`,
    );
  if (names !== undefined && names.length !== n)
    throw new ScoringInputError(`The comparison has ${n} rows but ${names.length} factor names.`);
  const lo = (1 / 9) * (1 - RECIPROCAL_TOLERANCE);
  const hi = 9 * (1 + RECIPROCAL_TOLERANCE);
  for (let i = 0; i < n; i++) {
    if (matrix[i].length !== n)
      throw new ScoringInputError(`Row ${i + 1} (${label(names, i)}) of the comparison has ${matrix[i].length} entries; it needs ${n}.`);
    for (let j = 0; j < n; j++) {
      const a = matrix[i][j];
      const pair = `${label(names, i)} against ${label(names, j)}`;
      if (typeof a !== "number" || !Number.isFinite(a))
        throw new ScoringInputError(`The judgement of ${pair} is not a finite number.`, `${i},${j}`);
      if (i === j) {
        if (Math.abs(a - 1) > RECIPROCAL_TOLERANCE)
          throw new ScoringInputError(`${label(names, i)} compared with itself must be 1 (got ${a}).`, `${i},${j}`);
        continue;
      }
      if (a < lo || a > hi)
        throw new ScoringInputError(`The judgement of ${pair} (${a}) lies outside Saaty's scale 1/9 to 9.`, `${i},${j}`);
      if (j > i && Math.abs(a * matrix[j][i] - 1) > RECIPROCAL_TOLERANCE)
        throw new ScoringInputError(
          `The comparison is not reciprocal: ${pair} is ${a}, so ${label(names, j)} against ${label(names, i)} must be 1/${a} (got ${matrix[j][i]}).`,
          `${j},${i}`,
        );
    }
  }
}

/**
 * Common practice, no source.
 *
 * A full reciprocal matrix from the judgements above the diagonal, row by row:
 * (a12, a13, …, a1n, a23, …, a(n−1)n). O(n²). Validates the result.
 */
export function matrixFromUpperTriangle(n: number, upper: readonly number[], names?: readonly string[]): number[][] {
  if (!Number.isInteger(n) || n < 1) throw new ScoringInputError(`A pairwise comparison needs at least one factor (got ${n}).`);
  if (upper.length !== (n * (n - 1)) / 2)
    throw new ScoringInputError(`${n} factors need ${(n * (n - 1)) / 2} judgements above the diagonal (got ${upper.length}).`);
  const m: number[][] = [];
  for (let i = 0; i < n; i++) m.push(new Array<number>(n).fill(1));
  let k = 0;
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      m[i][j] = upper[k++];
      m[j][i] = 1 / m[i][j];
    }
  validatePairwiseMatrix(m, names);
  return m;
}

/**
 * Saaty, T.L. (1980) The Analytic Hierarchy Process: Planning, Priority Setting, Resource
 * Allocation, McGraw-Hill, New York.
 *
 * AHP weights: the principal right eigenvector of the pairwise comparison matrix, normalised to sum
 * 1, with λmax, CI = (λmax − n)/(n − 1) and CR = CI/RI (Saaty's random index RI for n = 3…10: 0.58,
 * 0.90, 1.12, 1.24, 1.32, 1.41, 1.45, 1.49; CR ≤ 0.10 acceptable).
 *
 * Method: power iteration from equal weights, w ← A·w / Σ(A·w), until no weight changes by more than
 * {@link POWER_ITERATION_TOLERANCE} (a positive matrix has a simple dominant eigenvalue — Perron —
 * so it converges); λmax = Σᵢ(A·w)ᵢ with Σw = 1. For n = 1 and 2 every reciprocal matrix is
 * consistent: CI = CR = 0 by definition (Saaty gives RI = 0 there).
 *
 * Preconditions: as {@link validatePairwiseMatrix} (throws {@link ScoringInputError}). An
 * inconsistent matrix is not refused here: `acceptable` says whether CR ≤ 0.10, and the caller warns.
 * Complexity O(n²) per iteration; iterations grow with the ratio of the second to the first
 * eigenvalue (a few dozen for n ≤ 10 in practice).
 */
export function ahpWeights(matrix: readonly (readonly number[])[], names?: readonly string[]): AhpResult {
  validatePairwiseMatrix(matrix, names);
  const n = matrix.length;
  let w = new Float64Array(n).fill(1 / n);
  let next = new Float64Array(n);
  let iterations = 0;
  for (;;) {
    iterations++;
    let sum = 0;
    for (let i = 0; i < n; i++) {
      let s = 0;
      const row = matrix[i];
      for (let j = 0; j < n; j++) s += row[j] * w[j];
      next[i] = s;
      sum += s;
    }
    let change = 0;
    for (let i = 0; i < n; i++) {
      next[i] /= sum;
      const d = Math.abs(next[i] - w[i]);
      if (d > change) change = d;
    }
    const t = w;
    w = next;
    next = t;
    if (change <= POWER_ITERATION_TOLERANCE || iterations >= MAX_ITERATIONS) break;
  }
  // λmax from the converged vector
  let lambdaMax = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += matrix[i][j] * w[j];
    lambdaMax += s;
  }
  const randomIndex = SAATY_RANDOM_INDEX[n];
  const consistencyIndex = n <= 2 ? 0 : Math.max(0, (lambdaMax - n) / (n - 1));
  const consistencyRatio = n <= 2 ? 0 : consistencyIndex / randomIndex;
  return {
    weights: w,
    lambdaMax,
    consistencyIndex,
    randomIndex,
    consistencyRatio,
    acceptable: consistencyRatio <= CONSISTENCY_RATIO_LIMIT,
    iterations,
  };
}

/**
 * Aczél, J. & Saaty, T.L. (1983) "Procedures for synthesizing ratio judgements", Journal of
 * Mathematical Psychology 27(1), 93–102.
 *
 * Group judgements: the element-wise geometric mean of several people's matrices,
 * a[i][j] = (Π_k a_k[i][j])^(1/m) — the geometric mean is the rule that keeps the result
 * reciprocal. Each matrix is validated ({@link validatePairwiseMatrix}); all must
 * be the same size. Computed through logarithms. O(m·n²).
 */
export function aggregateJudgements(
  matrices: readonly (readonly (readonly number[])[])[],
  names?: readonly string[],
): number[][] {
  if (matrices.length === 0) throw new ScoringInputError("Aggregating judgements needs at least one person's comparison.");
  const n = matrices[0].length;
  matrices.forEach((m, k) => {
    if (m.length !== n)
      throw new ScoringInputError(`Comparison ${k + 1} has ${m.length} factors; the first has ${n}. Everyone must compare the same factors.`);
    validatePairwiseMatrix(m, names);
  });
  const out: number[][] = [];
  for (let i = 0; i < n; i++) {
    const row = new Array<number>(n);
    for (let j = 0; j < n; j++) {
      if (i === j) { row[j] = 1; continue; }
      let logSum = 0;
      for (const m of matrices) logSum += Math.log(m[i][j]);
      row[j] = Math.exp(logSum / matrices.length);
    }
    out.push(row);
  }
  return out;
}
