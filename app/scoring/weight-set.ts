/**
 * What a weight set holds (design §4): per factor a weight and a curve; the preservation model's
 * settings; the periods ages combine into; optionally the AHP judgements the weights came from.
 * Stored as JSON in each weight-set version; the scoring job and the browser worker read the same
 * object. `checkWeightSetContent` is the one place its meaning is checked (the zod schema at the
 * edge, app/weight-set-schema.ts, checks the shape and then calls it).
 */
import { ScoringInputError } from "./errors.ts";
import { validateCurve, type FactorCurve } from "./factor-curves.ts";
import { FACTORS, factorDef, type FactorId } from "./factors.ts";
import { matrixFromUpperTriangle, validatePairwiseMatrix } from "./ahp.ts";
import { normaliseWeights } from "./weighted-sum.ts";
import { periodAgeWeights, type NotOccupiableRule } from "./periods.ts";

export interface FactorSetting {
  factor: FactorId;
  /** relative weight ≥ 0 (normalised to sum 1 when scoring) */
  weight: number;
  curve: FactorCurve;
}

/**
 * The preservation model (design §4): a weighted mean of three component scores, each through its
 * own curve, then overridden near horizon evidence; multiplied into occupation when enabled.
 */
export interface PreservationSettings {
  enabled: boolean;
  /** position below local base level, read from TPI (m): valleys and hollows keep old surfaces */
  baseLevel: { weight: number; curve: FactorCurve };
  /**
   * time in the shoreface erosion zone, ka = erosionDepthM / rise rate at flooding (m/ka): slow
   * drowning lets the surf zone plane the surface off
   */
  shorefaceErosion: { weight: number; erosionDepthM: number; curve: FactorCurve };
  /** coastal shelter at the age (the shelter index, 0–1) */
  shelter: { weight: number; curve: FactorCurve };
  /** cores and interpretations that show the horizon intact (→ 1) or truncated (→ 0) override the model within this distance, m */
  evidenceRadiusM: number;
}

export interface PeriodSetting {
  name: string;
  /** young end, ka BP */
  youngKa: number;
  /** old end, ka BP */
  oldKa: number;
  /** how ages when a cell was sea or lake count (app/scoring/periods.ts, decision 401) */
  rule: NotOccupiableRule;
}

export interface AhpJudgements {
  /** the factors compared, in matrix order (2–10) */
  factors: FactorId[];
  /** the upper triangle a₁₂, a₁₃, …, a₁ₙ, a₂₃, … row by row, Saaty's 1/9–9 */
  upper: number[];
}

export interface WeightSetContent {
  factors: FactorSetting[];
  preservation: PreservationSettings;
  periods: PeriodSetting[];
  ahp: AhpJudgements | null;
  /** radius of the window the shelter index looks around a cell, m */
  shelterRadiusM: number;
}

/** The starting weight set: the catalogue's curves and weights, preservation on, no periods. */
export function defaultWeightSetContent(): WeightSetContent {
  return {
    factors: FACTORS.map((f) => ({ factor: f.id, weight: f.defaultWeight, curve: structuredClone(f.defaultCurve) })),
    preservation: {
      enabled: true,
      baseLevel: { weight: 1, curve: { kind: "linear", direction: "decreasing", fullUntil: -2, zeroAt: 6 } },
      shorefaceErosion: { weight: 1, erosionDepthM: 10, curve: { kind: "sigmoid", direction: "decreasing", fullUntil: 0.2, zeroAt: 3 } },
      shelter: { weight: 1, curve: { kind: "linear", direction: "increasing", zeroUntil: 0.3, fullAt: 0.8 } },
      evidenceRadiusM: 250,
    },
    periods: [],
    ahp: null,
    shelterRadiusM: 1500,
  };
}

/**
 * Common practice, no source.
 *
 * Check a weight set's meaning: known factors, each at most once; weights finite and ≥ 0 and not all
 * zero; every curve's control points in order; preservation weights likewise and a positive erosion
 * depth; periods with names, young < old and distinct names; AHP judgements reciprocal-complete and
 * within 1/9–9 over factors of the set. Throws {@link ScoringInputError} naming the problem. O(k²).
 */
export function checkWeightSetContent(c: WeightSetContent): void {
  const seen = new Set<string>();
  for (const f of c.factors) {
    const def = factorDef(f.factor);
    if (!def) throw new ScoringInputError(`Unknown factor "${f.factor}".`, "factors");
    if (seen.has(f.factor)) throw new ScoringInputError(`"${def.label}" is listed twice.`, f.factor);
    seen.add(f.factor);
    try {
      validateCurve(f.curve);
    } catch (e) {
      if (e instanceof ScoringInputError) throw new ScoringInputError(`${def.label}: ${e.message}`, f.factor);
      throw e;
    }
  }
  normaliseWeights(c.factors.map((f) => ({ name: factorDef(f.factor)!.label, weight: f.weight })));
  const p = c.preservation;
  const parts = [
    { name: "below local base level", weight: p.baseLevel.weight, curve: p.baseLevel.curve },
    { name: "shoreface erosion", weight: p.shorefaceErosion.weight, curve: p.shorefaceErosion.curve },
    { name: "shelter", weight: p.shelter.weight, curve: p.shelter.curve },
  ];
  for (const part of parts) {
    try {
      validateCurve(part.curve);
    } catch (e) {
      if (e instanceof ScoringInputError) throw new ScoringInputError(`Preservation, ${part.name}: ${e.message}`, "preservation");
      throw e;
    }
  }
  if (p.enabled) normaliseWeights(parts.map((x) => ({ name: `preservation: ${x.name}`, weight: x.weight })));
  if (!(p.shorefaceErosion.erosionDepthM > 0) || !Number.isFinite(p.shorefaceErosion.erosionDepthM))
    throw new ScoringInputError(`The erosion depth must be a positive number of metres (got ${p.shorefaceErosion.erosionDepthM}).`, "erosionDepthM");
  if (!(p.evidenceRadiusM >= 0) || !Number.isFinite(p.evidenceRadiusM))
    throw new ScoringInputError(`The evidence radius must be 0 m or more (got ${p.evidenceRadiusM}).`, "evidenceRadiusM");
  if (!(c.shelterRadiusM > 0) || !Number.isFinite(c.shelterRadiusM))
    throw new ScoringInputError(`The shelter radius must be a positive number of metres (got ${c.shelterRadiusM}).`, "shelterRadiusM");
  const names = new Set<string>();
  for (const period of c.periods) {
    const name = period.name.trim();
    if (!name) throw new ScoringInputError("Every period needs a name.", "periods");
    if (names.has(name)) throw new ScoringInputError(`Two periods are called "${name}".`, "periods");
    names.add(name);
    if (!Number.isFinite(period.youngKa) || !Number.isFinite(period.oldKa) || !(period.youngKa < period.oldKa))
      throw new ScoringInputError(`Period "${name}": the young end must be a smaller age (ka BP) than the old end (got ${period.youngKa} and ${period.oldKa}).`, "periods");
    if (period.rule !== "zero" && period.rule !== "skip")
      throw new ScoringInputError(`Period "${name}": the rule must be "zero" or "skip".`, "periods");
  }
  if (c.ahp) {
    const n = c.ahp.factors.length;
    if (n < 2 || n > 10) throw new ScoringInputError(`A pairwise comparison needs 2 to 10 factors (got ${n}).`, "ahp");
    const labels = c.ahp.factors.map((id) => {
      const def = factorDef(id);
      if (!def) throw new ScoringInputError(`Unknown factor "${id}" in the pairwise comparison.`, "ahp");
      if (!seen.has(id)) throw new ScoringInputError(`"${def.label}" is compared but not in the weight set.`, "ahp");
      return def.label;
    });
    if (new Set(c.ahp.factors).size !== n) throw new ScoringInputError("A factor appears twice in the pairwise comparison.", "ahp");
    validatePairwiseMatrix(matrixFromUpperTriangle(n, c.ahp.upper, labels), labels);
  }
}

/** A period's window checked against a reconstruction's ages (throws when it holds none of them). */
export function checkPeriodAgainstAges(period: PeriodSetting, agesKa: readonly number[]): void {
  try {
    periodAgeWeights(agesKa, { youngKa: period.youngKa, oldKa: period.oldKa });
  } catch (e) {
    if (e instanceof ScoringInputError) throw new ScoringInputError(`Period "${period.name}": ${e.message}`, "periods");
    throw e;
  }
}
