/**
 * Group weights for a weighing session (design §4): several members' proposals become one weight
 * set. Direct weights: each proposal normalised to sum 1, then the arithmetic mean per factor. AHP:
 * the element-wise geometric mean of the members' judgement matrices (Aczél & Saaty 1983), whose
 * principal eigenvector gives the group weights and whose consistency ratio is the group's
 * (Saaty 1980). Pure: shared by the server (adoption) and the session page (live result).
 */
import { ScoringInputError } from "./errors.ts";
import { aggregateJudgements, ahpWeights, matrixFromUpperTriangle, type AhpResult } from "./ahp.ts";
import { factorDef, type FactorId } from "./factors.ts";
import { normaliseWeights } from "./weighted-sum.ts";
import type { WeightSetContent } from "./weight-set.ts";

export interface DirectGroup {
  /** per factor, the mean of the members' normalised weights (sums to 1) */
  mean: Float64Array;
  /** each member's weights normalised to sum 1, in the input order */
  normalised: Float64Array[];
  /** per factor: smallest and largest normalised weight, and the population standard deviation */
  min: Float64Array;
  max: Float64Array;
  sd: Float64Array;
}

/**
 * Common practice, no source (the arithmetic mean of normalised weights, as for pooled expert weights).
 *
 * Group direct weights: each member's weights (same factor order for all) normalised to sum 1 with
 * `normaliseWeights` (negative, non-finite or all-zero weights are refused naming the member), then
 * per factor the arithmetic mean, with the spread (min, max, population SD) across members.
 * Preconditions: at least one member; every row the length of `names`. O(m·k).
 */
export function meanOfDirectWeights(weights: readonly (readonly number[])[], names: readonly string[], members?: readonly string[]): DirectGroup {
  const m = weights.length;
  const k = names.length;
  if (m === 0) throw new ScoringInputError("The group result needs at least one proposal.");
  const normalised = weights.map((row, p) => {
    if (row.length !== k) throw new ScoringInputError(`Proposal ${members?.[p] ?? p + 1} weighs ${row.length} factors; the session has ${k}.`);
    try {
      return normaliseWeights(row.map((w, i) => ({ name: names[i], weight: w })));
    } catch (e) {
      if (e instanceof ScoringInputError) throw new ScoringInputError(`Proposal of ${members?.[p] ?? `member ${p + 1}`}: ${e.message}`, e.field);
      throw e;
    }
  });
  const mean = new Float64Array(k);
  const min = new Float64Array(k).fill(Infinity);
  const max = new Float64Array(k).fill(-Infinity);
  const sd = new Float64Array(k);
  for (const row of normalised)
    for (let i = 0; i < k; i++) {
      mean[i] += row[i] / m;
      if (row[i] < min[i]) min[i] = row[i];
      if (row[i] > max[i]) max[i] = row[i];
    }
  for (const row of normalised) for (let i = 0; i < k; i++) sd[i] += (row[i] - mean[i]) ** 2 / m;
  for (let i = 0; i < k; i++) sd[i] = Math.sqrt(sd[i]);
  return { mean, normalised, min, max, sd };
}

export interface AhpGroup extends AhpResult {
  /** the group matrix: the element-wise geometric mean of the members' matrices */
  matrix: number[][];
  /** the group matrix's upper triangle, row by row (as stored in a weight set's `ahp.upper`) */
  upper: number[];
  /** each member's own AHP result, in the input order */
  members: AhpResult[];
}

/**
 * Aczél, J. & Saaty, T.L. (1983) "Procedures for synthesizing ratio judgements", Journal of
 * Mathematical Psychology 27(1), 93–102; Saaty, T.L. (1980) The Analytic Hierarchy Process.
 *
 * Group AHP: every member's judgements (upper triangles over the same `factors`, Saaty's 1/9–9)
 * become full reciprocal matrices, aggregate by element-wise geometric mean
 * (`aggregateJudgements`), and the group weights and group consistency ratio are those of that
 * matrix (`ahpWeights`); each member's own weights and CR come back too. Throws
 * {@link ScoringInputError} for an empty group or a malformed judgement, naming the member. O(m·n²)
 * plus the power iterations.
 */
export function groupAhp(uppers: readonly (readonly number[])[], factors: readonly string[], members?: readonly string[]): AhpGroup {
  if (uppers.length === 0) throw new ScoringInputError("The group result needs at least one member's judgements.");
  const n = factors.length;
  const matrices = uppers.map((u, p) => {
    try {
      return matrixFromUpperTriangle(n, u, factors);
    } catch (e) {
      if (e instanceof ScoringInputError) throw new ScoringInputError(`Judgements of ${members?.[p] ?? `member ${p + 1}`}: ${e.message}`, e.field);
      throw e;
    }
  });
  const matrix = aggregateJudgements(matrices, factors);
  const upper: number[] = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) upper.push(matrix[i][j]);
  return { ...ahpWeights(matrix, factors), matrix, upper, members: matrices.map((x) => ahpWeights(x, factors)) };
}

/**
 * Common practice, no source.
 *
 * A proposal's content with its weights taken from its AHP judgements: the compared factors get
 * their principal-eigenvector weights, every other factor weight 0 (the comparison is the whole
 * say). Throws {@link ScoringInputError} when the content has no judgements. O(k + n²).
 */
export function weightsFromJudgements(content: WeightSetContent): WeightSetContent {
  if (!content.ahp) throw new ScoringInputError("This proposal has no pairwise judgements.");
  const labels = content.ahp.factors.map((f) => factorDef(f)?.label ?? f);
  const w = ahpWeights(matrixFromUpperTriangle(content.ahp.factors.length, content.ahp.upper, labels), labels).weights;
  const at = new Map(content.ahp.factors.map((f, i) => [f, w[i]]));
  return { ...content, factors: content.factors.map((f) => ({ ...f, weight: at.get(f.factor) ?? 0 })) };
}

export interface GroupResult {
  /** the group's weight set: the base content's curves and settings with the group weights */
  content: WeightSetContent;
  /** factors in the order of the base content */
  factors: FactorId[];
  /** per proposal (input order), its normalised weight per factor */
  normalised: Float64Array[];
  /** per factor: group weight, min, max, SD across proposals */
  weight: Float64Array;
  min: Float64Array;
  max: Float64Array;
  sd: Float64Array;
  /** AHP sessions: the group matrix's consistency ratio and each member's */
  ahp: null | { consistencyRatio: number; acceptable: boolean; lambdaMax: number; members: { consistencyRatio: number; acceptable: boolean }[] };
}

/**
 * Common practice (direct) / Aczél & Saaty (1983) (AHP), as in {@link meanOfDirectWeights} and
 * {@link groupAhp}.
 *
 * The session's group result over the base content's factors. Direct: the mean of the proposals'
 * normalised weights. AHP: the group judgements over `ahpFactors` give those factors' weights, all
 * other factors 0, and the content carries the group judgements. Curves, preservation, periods and
 * the shelter radius are the base content's (a proposal's own curves enter only when that proposal
 * is adopted). Proposals list factors in any order; a factor a proposal leaves out counts as weight
 * 0 there. O(m·k + m·n²).
 */
export function groupResult(
  base: WeightSetContent,
  method: "direct" | "ahp",
  proposals: readonly WeightSetContent[],
  ahpFactors: readonly FactorId[] = [],
  members?: readonly string[],
): GroupResult {
  const factors = base.factors.map((f) => f.factor);
  const labels = factors.map((f) => factorDef(f)?.label ?? f);
  if (method === "direct") {
    const rows = proposals.map((p) => {
      const at = new Map(p.factors.map((f) => [f.factor, f.weight]));
      return factors.map((f) => at.get(f) ?? 0);
    });
    const g = meanOfDirectWeights(rows, labels, members);
    return {
      content: { ...structuredClone(base), factors: base.factors.map((f, i) => ({ ...structuredClone(f), weight: g.mean[i] })), ahp: null },
      factors,
      normalised: g.normalised,
      weight: g.mean,
      min: g.min,
      max: g.max,
      sd: g.sd,
      ahp: null,
    };
  }
  const n = ahpFactors.length;
  if (n < 2) throw new ScoringInputError("An AHP session compares at least two factors.");
  const uppers = proposals.map((p, k) => {
    if (!p.ahp || p.ahp.factors.length !== n || p.ahp.factors.some((f, i) => f !== ahpFactors[i]))
      throw new ScoringInputError(`The proposal of ${members?.[k] ?? `member ${k + 1}`} does not compare the session's factors in the session's order.`);
    return p.ahp.upper;
  });
  const ahpLabels = ahpFactors.map((f) => factorDef(f)?.label ?? f);
  const g = groupAhp(uppers, ahpLabels, members);
  const index = new Map(ahpFactors.map((f, i) => [f, i]));
  const spread = (pick: (i: number) => number) => Float64Array.from(factors, (f) => (index.has(f) ? pick(index.get(f)!) : 0));
  const normalised = g.members.map((r) => spread((i) => r.weights[i]));
  const weight = spread((i) => g.weights[i]);
  const min = new Float64Array(factors.length);
  const max = new Float64Array(factors.length);
  const sd = new Float64Array(factors.length);
  for (let i = 0; i < factors.length; i++) {
    let lo = Infinity, hi = -Infinity, mean = 0;
    for (const row of normalised) {
      lo = Math.min(lo, row[i]);
      hi = Math.max(hi, row[i]);
      mean += row[i] / normalised.length;
    }
    let v = 0;
    for (const row of normalised) v += (row[i] - mean) ** 2 / normalised.length;
    min[i] = lo;
    max[i] = hi;
    sd[i] = Math.sqrt(v);
  }
  return {
    content: {
      ...structuredClone(base),
      factors: base.factors.map((f, i) => ({ ...structuredClone(f), weight: weight[i] })),
      ahp: { factors: [...ahpFactors], upper: g.upper },
    },
    factors,
    normalised,
    weight,
    min,
    max,
    sd,
    ahp: {
      consistencyRatio: g.consistencyRatio,
      acceptable: g.acceptable,
      lambdaMax: g.lambdaMax,
      members: g.members.map((r) => ({ consistencyRatio: r.consistencyRatio, acceptable: r.acceptable })),
    },
  };
}
