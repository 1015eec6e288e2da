/**
 * Occupation over a period: combining the per-age occupation scores of a reconstruction into one
 * score for a user-defined age window (a cultural phase). Our own rule, the time-weighted mean
 * (decision 401, docs/decisions/401-period-rule.md); common practice, no source.
 *
 * Each age stands for the stretch of time closer to it than to its neighbours: with the ages sorted
 * a₁ < a₂ < … < aₘ (ka BP) and midpoints mₖ = (aₖ + aₖ₊₁)/2, age aₖ stands for [mₖ₋₁, mₖ]; the
 * youngest reaches half a gap younger (m₀ = a₁ − (a₂ − a₁)/2), the oldest half a gap older. Its weight
 * in the window [young, old] is the length of that stretch inside the window:
 *
 *   wₖ = max(0, min(mₖ, old) − max(mₖ₋₁, young))
 *
 * and a cell's period score is the time-weighted mean of its per-age scores sₖ:
 *
 *   P = Σₖ wₖ·sₖ* / Σₖ wₖ
 *
 * with sₖ* = sₖ where the cell had a score at that age, and (rule "zero", the default) 0 where it
 * did not — it was sea or lake then, so nobody lived there: P is the expected occupation score over
 * the period. Rule "skip" leaves those ages out of both sums: P is the mean while the cell was
 * occupiable. Either way a cell with no score at any age inside the window is NaN.
 */
import { ScoringInputError } from "./errors.ts";

export interface PeriodWindow {
  /** young end of the window, ka BP */
  youngKa: number;
  /** old end of the window, ka BP (> youngKa) */
  oldKa: number;
}

/** How ages without a score (sea, lake — NaN in the per-age occupation) count inside a period. */
export type NotOccupiableRule = "zero" | "skip";

export interface PeriodAgeWeights {
  /** per age, in the order the ages were given: the time it stands for inside the window, as a share (sums to 1) */
  weights: Float64Array;
  /** the part of the window the ages cover, ka BP */
  coveredYoungKa: number;
  coveredOldKa: number;
  /** covered length / window length: below 1 when the window reaches past the reconstruction's ages */
  coveredShare: number;
}

/**
 * Our own rule: decision 401 (docs/decisions/401-period-rule.md); common practice, no source.
 *
 * The weight of each age in a period (the wₖ of the module comment, normalised to sum 1), and how much
 * of the window the ages cover.
 *
 * Preconditions: ages in ka BP, finite and distinct, in any order; a window with finite
 * youngKa < oldKa that overlaps the ages' span (a single age: the window must contain it, and it
 * gets the whole weight, and `coveredShare` is 0 since one age spans no time). The part of a window
 * beyond the span is left out and reported through `coveredShare`. Throws {@link ScoringInputError}. O(m log m) for m ages.
 */
export function periodAgeWeights(agesKa: readonly number[], window: PeriodWindow): PeriodAgeWeights {
  const m = agesKa.length;
  if (m === 0) throw new ScoringInputError("A period needs a reconstruction with at least one age.");
  const { youngKa, oldKa } = window;
  if (!Number.isFinite(youngKa) || !Number.isFinite(oldKa))
    throw new ScoringInputError("A period's window needs finite young and old ages (ka BP).", "youngKa");
  if (!(oldKa > youngKa))
    throw new ScoringInputError(`A period's old end (${oldKa} ka) must be older than its young end (${youngKa} ka).`, "oldKa");
  for (const a of agesKa)
    if (!Number.isFinite(a)) throw new ScoringInputError(`The reconstruction's ages must be finite numbers (got ${a}).`);
  const order = Array.from(agesKa.keys()).sort((i, j) => agesKa[i] - agesKa[j]);
  for (let k = 1; k < m; k++)
    if (agesKa[order[k]] === agesKa[order[k - 1]])
      throw new ScoringInputError(`The age ${agesKa[order[k]]} ka appears twice in the reconstruction's ages.`);

  const weights = new Float64Array(m);
  if (m === 1) {
    const a = agesKa[0];
    if (a < youngKa || a > oldKa)
      throw new ScoringInputError(`The period ${youngKa}–${oldKa} ka does not contain the reconstruction's only age (${a} ka).`);
    weights[0] = 1;
    return { weights, coveredYoungKa: a, coveredOldKa: a, coveredShare: 0 };
  }
  const first = agesKa[order[0]];
  const last = agesKa[order[m - 1]];
  const spanYoung = first - (agesKa[order[1]] - first) / 2;
  const spanOld = last + (last - agesKa[order[m - 2]]) / 2;
  const coveredYoungKa = Math.max(youngKa, spanYoung);
  const coveredOldKa = Math.min(oldKa, spanOld);
  if (!(coveredOldKa > coveredYoungKa))
    throw new ScoringInputError(
      `The period ${youngKa}–${oldKa} ka lies outside the reconstruction's ages, which cover ${spanYoung}–${spanOld} ka.`,
    );
  let total = 0;
  for (let k = 0; k < m; k++) {
    const a = agesKa[order[k]];
    const lo = k === 0 ? spanYoung : (agesKa[order[k - 1]] + a) / 2;
    const hi = k === m - 1 ? spanOld : (a + agesKa[order[k + 1]]) / 2;
    const w = Math.max(0, Math.min(hi, oldKa) - Math.max(lo, youngKa));
    weights[order[k]] = w;
    total += w;
  }
  for (let k = 0; k < m; k++) weights[k] /= total;
  return { weights, coveredYoungKa, coveredOldKa, coveredShare: (coveredOldKa - coveredYoungKa) / (oldKa - youngKa) };
}

/**
 * Our own rule: decision 401 (docs/decisions/401-period-rule.md); common practice, no source.
 *
 * A period's occupation score per cell: the time-weighted mean P = Σₖ wₖ·sₖ* / Σₖ wₖ of the per-age
 * scores (module comment).
 *
 * Preconditions: `perAge[k]` is the occupation score (0–1, NaN where not occupiable or nodata) at
 * `agesKa[k]`, all the same length; window as {@link periodAgeWeights}. `rule` "zero" (default)
 * counts an age without a score as 0, "skip" leaves it out; a cell without a score at every age of
 * positive weight is NaN. Because every layer has nodata wherever the analysis surface does
 * (docs/layers.md), NaN on a valid cell means sea or lake, not a missing factor.
 *
 * Complexity: O(n·m') for n cells and the m' ages with positive weight; two Float64 arrays of n
 * beside the output.
 */
export function combinePeriod(
  perAge: readonly Float32Array[],
  agesKa: readonly number[],
  window: PeriodWindow,
  rule: NotOccupiableRule = "zero",
  out?: Float32Array,
): Float32Array {
  if (perAge.length !== agesKa.length)
    throw new ScoringInputError(`There are ${perAge.length} per-age layers for ${agesKa.length} ages.`);
  if (rule !== "zero" && rule !== "skip")
    throw new ScoringInputError(`The rule for ages without a score must be "zero" or "skip" (got "${String(rule)}").`, "rule");
  const { weights } = periodAgeWeights(agesKa, window);
  const n = perAge[0].length;
  for (let k = 0; k < perAge.length; k++)
    if (perAge[k].length !== n)
      throw new ScoringInputError(`The layer for ${agesKa[k]} ka has ${perAge[k].length} cells; the first has ${n}.`);
  if (out !== undefined && out.length !== n)
    throw new ScoringInputError(`The output array has ${out.length} cells; the layers have ${n}.`);
  // One pass gathers Σ w·s and Σ w over the ages with a score; the rules differ only at the end.
  const sum = new Float64Array(n);
  const wsum = new Float64Array(n);
  for (let k = 0; k < perAge.length; k++) {
    const w = weights[k];
    if (w === 0) continue;
    const s = perAge[k];
    for (let i = 0; i < n; i++) {
      const v = s[i];
      if (v === v) {
        sum[i] += w * v;
        wsum[i] += w;
      }
    }
  }
  const res = out ?? new Float32Array(n);
  // "zero": unscored ages add 0 and the weights already sum to 1; "skip": divide by the scored weight.
  if (rule === "zero") for (let i = 0; i < n; i++) res[i] = wsum[i] > 0 ? sum[i] : NaN;
  else for (let i = 0; i < n; i++) res[i] = wsum[i] > 0 ? sum[i] / wsum[i] : NaN;
  return res;
}
