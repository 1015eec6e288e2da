/**
 * One-at-a-time (OAT) weight sensitivity of a weighted linear combination: each weight in turn is
 * changed from −20 % to +20 % in 1 % steps, the others rescaled so the weights still sum to 1, and the
 * score map recomputed. Chen, Y., Yu, J. & Khan, S. (2010) "Spatial sensitivity analysis of
 * multi-criteria weights in GIS-based land suitability evaluation", Environmental Modelling &
 * Software 25(12), 1582–1591. (For Monte Carlo and variance-based global sensitivity see
 * Ligmann-Zielinska, A. & Jankowski, P. (2014) Environmental Modelling & Software 57 — not
 * here.) The regulator's tornado chart uses fixed thresholds: with quantile classes the high-class
 * area is constant by construction (design §7).
 */
import { ScoringInputError } from "./errors.ts";
import { normaliseWeights, weightedLinearCombination, type WeightedFactor } from "./weighted-sum.ts";

/**
 * Chen, Y., Yu, J. & Khan, S. (2010) "Spatial sensitivity analysis of multi-criteria weights in
 * GIS-based land suitability evaluation", Environmental Modelling & Software 25(12), 1582–1591.
 *
 * Their one-at-a-time steps: relative changes −0.20 … +0.20 in steps of 0.01 (41 values). O(1).
 */
export function defaultWeightChanges(): Float64Array {
  const out = new Float64Array(41);
  for (let k = 0; k < 41; k++) out[k] = (k - 20) / 100;
  return out;
}

/**
 * Chen, Y., Yu, J. & Khan, S. (2010) "Spatial sensitivity analysis of multi-criteria weights in
 * GIS-based land suitability evaluation", Environmental Modelling & Software 25(12), 1582–1591.
 *
 * Weights after changing weight `index` by the relative amount `change` (−0.2 = −20 %):
 * w′ᵢ = wᵢ·(1 + change), w′ⱼ = wⱼ·(1 − w′ᵢ)/(1 − wᵢ) for j ≠ i, so Σw′ = 1 and the others keep their
 * ratios.
 * Preconditions: `weights` normalised (sum 1, ≥ 0); change > −1. Returns null where the change is
 * impossible: w′ᵢ > 1, or wᵢ = 1 and change ≠ 0 (no other weight to take up the difference). A zero
 * weight stays zero (a relative change of 0 is 0). O(k).
 */
export function perturbWeights(weights: ArrayLike<number>, index: number, change: number): Float64Array | null {
  const k = weights.length;
  if (!Number.isInteger(index) || index < 0 || index >= k)
    throw new ScoringInputError(`There is no factor ${index + 1} among ${k}.`);
  if (!Number.isFinite(change) || change <= -1)
    throw new ScoringInputError(`A relative weight change must be a finite number above −100 % (got ${change}).`);
  const wi = weights[index];
  const wNew = wi * (1 + change);
  if (wNew > 1 + 1e-12) return null;
  const out = new Float64Array(k);
  if (wi >= 1) {
    if (change !== 0) return null;
    out[index] = 1;
    return out;
  }
  const scale = (1 - wNew) / (1 - wi);
  for (let j = 0; j < k; j++) out[j] = j === index ? wNew : weights[j] * scale;
  return out;
}

export interface SensitivityOptions {
  /** relative changes to apply (default −0.20 … +0.20 in 0.01 steps) */
  changes?: ArrayLike<number>;
  /** a fixed threshold: `highShare` reports the share of scored cells at or above it */
  highThreshold?: number;
}

export interface FactorSensitivity {
  name: string;
  /** the factor's normalised weight before any change */
  weight: number;
  /** per change: mean score over the scored cells (NaN where the change is impossible) */
  meanScore: Float64Array;
  /** per change: share of scored cells ≥ highThreshold (NaN without a threshold or where impossible) */
  highShare: Float64Array;
}

export interface SensitivityResult {
  changes: Float64Array;
  /** number of scored (non-NaN) cells */
  cells: number;
  baseMeanScore: number;
  baseHighShare: number;
  factors: FactorSensitivity[];
}

/**
 * Chen, Y., Yu, J. & Khan, S. (2010) "Spatial sensitivity analysis of multi-criteria weights in
 * GIS-based land suitability evaluation", Environmental Modelling & Software 25(12), 1582–1591.
 *
 * One-at-a-time weight sensitivity over a score map: for each factor and each relative change, the
 * mean score and the share of cells in the high class (score ≥ a fixed threshold).
 *
 * Preconditions: factors and mask as `weightedLinearCombination` (weights are normalised first; NaN
 * cells stay NaN and are left out of means and shares); the threshold is rounded to Float32 like the
 * scores. Because the sum is linear, a change to weight i gives S′ = w′ᵢ·sᵢ + c·(S − wᵢ·sᵢ) with
 * c = (1 − w′ᵢ)/(1 − wᵢ): each step costs one pass over the cells, not a new weighted sum.
 * Complexity O(n·k·m) for n cells, k factors and m changes; memory O(n) beyond the inputs.
 */
export function oneAtATimeSensitivity(
  factors: readonly WeightedFactor[],
  mask: Uint8Array | null,
  options: SensitivityOptions = {},
): SensitivityResult {
  const w = normaliseWeights(factors);
  const changes = Float64Array.from(options.changes ?? defaultWeightChanges());
  for (let c = 0; c < changes.length; c++)
    if (!Number.isFinite(changes[c]) || changes[c] <= -1)
      throw new ScoringInputError(`Weight change ${c + 1} must be a finite number above −100 % (got ${changes[c]}).`);
  const threshold = options.highThreshold;
  if (threshold !== undefined && !Number.isFinite(threshold))
    throw new ScoringInputError("The high-class threshold must be a finite number.");
  const t32 = threshold === undefined ? NaN : Math.fround(threshold);
  const base = weightedLinearCombination(factors, mask);
  const n = base.length;
  let cells = 0;
  let baseSum = 0;
  let baseHigh = 0;
  for (let i = 0; i < n; i++) {
    const v = base[i];
    if (v !== v) continue;
    cells++;
    baseSum += v;
    if (v >= t32) baseHigh++;
  }
  if (cells === 0) throw new ScoringInputError("No cell has a score, so there is nothing to test the weights on.");
  const result: SensitivityResult = {
    changes,
    cells,
    baseMeanScore: baseSum / cells,
    baseHighShare: threshold === undefined ? NaN : baseHigh / cells,
    factors: [],
  };
  for (let f = 0; f < factors.length; f++) {
    const meanScore = new Float64Array(changes.length).fill(NaN);
    const highShare = new Float64Array(changes.length).fill(NaN);
    const s = factors[f].scores;
    const wi = w[f];
    for (let c = 0; c < changes.length; c++) {
      const pw = perturbWeights(w, f, changes[c]);
      if (pw === null) continue;
      const a = pw[f];
      const scale = wi < 1 ? (1 - a) / (1 - wi) : 0;
      let sum = 0;
      let high = 0;
      for (let i = 0; i < n; i++) {
        const b = base[i];
        if (b !== b) continue;
        const own = wi === 0 ? 0 : s[i];
        const v = Math.fround(a * own + scale * (b - wi * own));
        sum += v;
        if (v >= t32) high++;
      }
      meanScore[c] = sum / cells;
      if (threshold !== undefined) highShare[c] = high / cells;
    }
    result.factors.push({ name: factors[f].name, weight: wi, meanScore, highShare });
  }
  return result;
}
