import { describe, expect, it } from "vitest";
import { groupAhp, groupResult, meanOfDirectWeights, weightsFromJudgements } from "./group-weights.ts";
import { ScoringInputError } from "./errors.ts";
import { defaultWeightSetContent, type WeightSetContent } from "./weight-set.ts";

describe("meanOfDirectWeights", () => {
  it("normalises each proposal, then takes the arithmetic mean per factor", () => {
    // A weighs (3, 1) → (0.75, 0.25); B weighs (1, 1) → (0.5, 0.5)
    const g = meanOfDirectWeights([[3, 1], [1, 1]], ["a", "b"]);
    // (formula) mean = ((0.75 + 0.5)/2, (0.25 + 0.5)/2) = (0.625, 0.375)
    expect(g.mean[0]).toBeCloseTo(0.625, 12);
    expect(g.mean[1]).toBeCloseTo(0.375, 12);
    // (formula) population SD of (0.75, 0.5) = 0.125; min 0.5, max 0.75
    expect(g.sd[0]).toBeCloseTo(0.125, 12);
    expect(g.min[0]).toBeCloseTo(0.5, 12);
    expect(g.max[0]).toBeCloseTo(0.75, 12);
  });

  it("three members over three factors", () => {
    // A (2, 1, 1) → (1/2, 1/4, 1/4); B (0, 1, 1) → (0, 1/2, 1/2); C (1, 1, 2) → (1/4, 1/4, 1/2)
    const g = meanOfDirectWeights([[2, 1, 1], [0, 1, 1], [1, 1, 2]], ["a", "b", "c"]);
    // (formula) means: (1/2 + 0 + 1/4)/3 = 1/4; (1/4 + 1/2 + 1/4)/3 = 1/3; (1/4 + 1/2 + 1/2)/3 = 5/12
    expect([...g.mean].map((x) => +x.toFixed(6))).toEqual([0.25, 0.333333, 0.416667]);
    expect(g.mean.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
  });

  it("does not care about a proposal's scale: (6, 2) counts as (3, 1)", () => {
    const a = meanOfDirectWeights([[6, 2], [1, 1]], ["a", "b"]);
    const b = meanOfDirectWeights([[3, 1], [1, 1]], ["a", "b"]);
    expect([...a.mean]).toEqual([...b.mean]);
  });

  it("refuses an all-zero or negative proposal, naming whose", () => {
    expect(() => meanOfDirectWeights([[1, 1], [0, 0]], ["a", "b"], ["Ann", "Bo"])).toThrow(/Bo.*All weights are zero/);
    expect(() => meanOfDirectWeights([[1, -1]], ["a", "b"], ["Ann"])).toThrow(ScoringInputError);
    expect(() => meanOfDirectWeights([], ["a"])).toThrow(/at least one proposal/);
  });
});

describe("groupAhp (Aczél & Saaty 1983)", () => {
  it("two consistent members: the geometric mean is consistent, with the geometric mean of their weights", () => {
    // A: a12 = 2, a13 = 4, a23 = 2 (from w = 4:2:1); B: all 1 (w = 1:1:1)
    const g = groupAhp([[2, 4, 2], [1, 1, 1]], ["a", "b", "c"]);
    // (formula) a12 = √(2·1) = √2, a13 = √(4·1) = 2, a23 = √2
    expect(g.upper[0]).toBeCloseTo(Math.SQRT2, 12);
    expect(g.upper[1]).toBeCloseTo(2, 12);
    expect(g.upper[2]).toBeCloseTo(Math.SQRT2, 12);
    // (formula) consistent with w ∝ (2, √2, 1): 2/(3+√2) = 0.453082, √2/(3+√2) = 0.320377, 1/(3+√2) = 0.226541; CR 0
    expect(g.weights[0]).toBeCloseTo(0.453082, 6);
    expect(g.weights[1]).toBeCloseTo(0.320377, 6);
    expect(g.weights[2]).toBeCloseTo(0.226541, 6);
    expect(g.consistencyRatio).toBeCloseTo(0, 9);
    // members keep their own results: A is the check-values consistent 3×3, weights 4/7, 2/7, 1/7 (formula)
    expect(g.members[0].weights[0]).toBeCloseTo(4 / 7, 10);
  });

  it("(9, 5, 1) and (1, 5, 9) meet at (3, 5, 3): check-values' 3×3, with its λmax and CR", () => {
    const g = groupAhp([[9, 5, 1], [1, 5, 9]], ["a", "b", "c"]);
    // (formula) √(9·1) = 3, √(5·5) = 5, √(1·9) = 3
    expect(g.upper.map((x) => +x.toFixed(12))).toEqual([3, 5, 3]);
    // (formula) check-values.md, 3×3 (a12 = 3, a13 = 5, a23 = 3): 0.636986, 0.258285, 0.104729; λmax 3.038511; CR 0.0332
    expect(g.weights[0]).toBeCloseTo(0.636986, 6);
    expect(g.weights[1]).toBeCloseTo(0.258285, 6);
    expect(g.weights[2]).toBeCloseTo(0.104729, 6);
    expect(g.lambdaMax).toBeCloseTo(3.038511, 6);
    expect(g.consistencyRatio).toBeCloseTo(0.0332, 4);
    expect(g.acceptable).toBe(true);
  });

  it("opposite judgements cancel to equal weights", () => {
    const g = groupAhp([[3, 5, 3], [1 / 3, 1 / 5, 1 / 3]], ["a", "b", "c"]);
    // (formula) √(3 · 1/3) = 1 everywhere → weights 1/3 each, CR 0
    for (const w of g.weights) expect(w).toBeCloseTo(1 / 3, 10);
    expect(g.consistencyRatio).toBeCloseTo(0, 9);
  });

  it("names the member whose judgements are out of scale", () => {
    expect(() => groupAhp([[2, 4, 2], [12, 1, 1]], ["a", "b", "c"], ["Ann", "Bo"])).toThrow(/Judgements of Bo.*scale/);
  });
});

describe("groupResult", () => {
  const base = defaultWeightSetContent();
  const withWeights = (w: Record<string, number>): WeightSetContent => ({
    ...base,
    factors: base.factors.map((f) => ({ ...f, weight: w[f.factor] ?? 0 })),
  });

  it("direct: the mean of normalised weights over the base's factors, with the base's curves", () => {
    const g = groupResult(base, "direct", [withWeights({ dist_stream: 3, dist_shoreline: 1 }), withWeights({ dist_stream: 1, dist_shoreline: 1 })]);
    const i = g.factors.indexOf("dist_stream");
    const j = g.factors.indexOf("dist_shoreline");
    // (formula) as in meanOfDirectWeights: 0.625 and 0.375; every other factor 0
    expect(g.weight[i]).toBeCloseTo(0.625, 12);
    expect(g.weight[j]).toBeCloseTo(0.375, 12);
    expect(g.content.factors[i].weight).toBeCloseTo(0.625, 12);
    expect(g.content.factors[i].curve).toEqual(base.factors[i].curve);
    expect(g.weight.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
    expect(g.ahp).toBeNull();
  });

  it("AHP: the group judgements weigh the compared factors, the others get 0, and the content carries the group matrix", () => {
    const factors = ["dist_stream", "dist_shoreline", "slope"] as const;
    const p = (upper: number[]): WeightSetContent => weightsFromJudgements({ ...base, ahp: { factors: [...factors], upper } });
    const g = groupResult(base, "ahp", [p([9, 5, 1]), p([1, 5, 9])], [...factors]);
    // (formula) as above: the group matrix is (3, 5, 3) → 0.636986, 0.258285, 0.104729
    expect(g.weight[g.factors.indexOf("dist_stream")]).toBeCloseTo(0.636986, 6);
    expect(g.weight[g.factors.indexOf("dist_shoreline")]).toBeCloseTo(0.258285, 6);
    expect(g.weight[g.factors.indexOf("slope")]).toBeCloseTo(0.104729, 6);
    expect(g.weight[g.factors.indexOf("dist_river_mouth")]).toBe(0);
    expect(g.content.ahp!.upper.map((x) => +x.toFixed(9))).toEqual([3, 5, 3]);
    expect(g.ahp!.consistencyRatio).toBeCloseTo(0.0332, 4);
    // member (9, 5, 1): its own weights differ from the group's (spread is across members' own weights)
    expect(g.max[g.factors.indexOf("dist_stream")]).toBeGreaterThan(g.min[g.factors.indexOf("dist_stream")]);
  });

  it("AHP: refuses a proposal that compares other factors", () => {
    const p = weightsFromJudgements({ ...base, ahp: { factors: ["dist_stream", "slope"], upper: [2] } });
    expect(() => groupResult(base, "ahp", [p], ["dist_stream", "dist_shoreline"], ["Ann"])).toThrow(/Ann/);
  });
});

describe("weightsFromJudgements", () => {
  it("gives compared factors their AHP weights and the rest 0", () => {
    const base = defaultWeightSetContent();
    const c = weightsFromJudgements({ ...base, ahp: { factors: ["dist_stream", "dist_shoreline", "slope"], upper: [2, 4, 2] } });
    const w = (id: string) => c.factors.find((f) => f.factor === id)!.weight;
    // (formula) check-values.md consistent 3×3: 4/7, 2/7, 1/7
    expect(w("dist_stream")).toBeCloseTo(4 / 7, 10);
    expect(w("dist_shoreline")).toBeCloseTo(2 / 7, 10);
    expect(w("slope")).toBeCloseTo(1 / 7, 10);
    expect(w("dist_river_mouth")).toBe(0);
  });
});
