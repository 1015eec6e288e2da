import { describe, expect, it } from "vitest";
import {
  aggregateJudgements,
  ahpWeights,
  matrixFromUpperTriangle,
  SAATY_RANDOM_INDEX,
  validatePairwiseMatrix,
} from "./ahp.ts";
import { weightedLinearCombination } from "./weighted-sum.ts";
import { ScoringInputError } from "./errors.ts";
import { prng } from "../terrain/test-utils.ts";

const SCALE = [1 / 9, 1 / 8, 1 / 7, 1 / 6, 1 / 5, 1 / 4, 1 / 3, 1 / 2, 1, 2, 3, 4, 5, 6, 7, 8, 9];

describe("ahpWeights: check values", () => {
  it("Saaty's random index table", () => {
    // (paper) Saaty 1980, RI for n = 3…10
    expect([3, 4, 5, 6, 7, 8, 9, 10].map((n) => SAATY_RANDOM_INDEX[n])).toEqual([0.58, 0.9, 1.12, 1.24, 1.32, 1.41, 1.45, 1.49]);
  });

  it("consistent 3×3 (2, 4, 2) → 4/7, 2/7, 1/7, CR 0", () => {
    const r = ahpWeights(matrixFromUpperTriangle(3, [2, 4, 2]));
    // (formula) check-values.md
    expect(r.weights[0]).toBeCloseTo(4 / 7, 10);
    expect(r.weights[1]).toBeCloseTo(2 / 7, 10);
    expect(r.weights[2]).toBeCloseTo(1 / 7, 10);
    expect(r.lambdaMax).toBeCloseTo(3, 10);
    expect(r.consistencyRatio).toBeCloseTo(0, 10);
    expect(r.acceptable).toBe(true);
  });

  it("3×3 (3, 5, 3) → 0.636986, 0.258285, 0.104729; λmax 3.038511; CR 0.0332", () => {
    const r = ahpWeights(matrixFromUpperTriangle(3, [3, 5, 3]));
    // (formula) check-values.md
    expect(r.weights[0]).toBeCloseTo(0.636986, 6);
    expect(r.weights[1]).toBeCloseTo(0.258285, 6);
    expect(r.weights[2]).toBeCloseTo(0.104729, 6);
    expect(r.lambdaMax).toBeCloseTo(3.038511, 6);
    // (formula) closed form for n = 3: λmax = 1 + ρ + 1/ρ, ρ = (a12·a23/a13)^(1/3)
    const rho = Math.cbrt((3 * 3) / 5);
    expect(r.lambdaMax).toBeCloseTo(1 + rho + 1 / rho, 10);
    expect(r.consistencyRatio).toBeCloseTo(0.0332, 4); // (formula) check-values.md
    expect(r.acceptable).toBe(true);
  });

  it("intransitive 3×3 (3, 1/3, 3) → equal weights, CR 1.149, not acceptable", () => {
    const r = ahpWeights(matrixFromUpperTriangle(3, [3, 1 / 3, 3]));
    // (formula) check-values.md
    for (let i = 0; i < 3; i++) expect(r.weights[i]).toBeCloseTo(1 / 3, 10);
    expect(r.consistencyRatio).toBeCloseTo(1.149, 3);
    expect(r.acceptable).toBe(false);
  });

  it("4×4 (2, 3, 5, 2, 3, 2) → 0.482886, 0.271974, 0.156990, 0.088150; with scores (0.9, 0.6, 1.0, 0.3) → 0.781217", () => {
    const r = ahpWeights(matrixFromUpperTriangle(4, [2, 3, 5, 2, 3, 2]));
    // (formula) check-values.md
    expect(r.weights[0]).toBeCloseTo(0.482886, 6);
    expect(r.weights[1]).toBeCloseTo(0.271974, 6);
    expect(r.weights[2]).toBeCloseTo(0.15699, 6);
    expect(r.weights[3]).toBeCloseTo(0.08815, 6);
    expect(r.consistencyRatio).toBeLessThan(0.1);
    const scores = [0.9, 0.6, 1.0, 0.3];
    const s = weightedLinearCombination(
      scores.map((v, k) => ({ name: `f${k}`, weight: r.weights[k], scores: Float32Array.of(v) })),
      null,
    );
    expect(s[0]).toBeCloseTo(0.781217, 6); // (formula) check-values.md
  });

  it("n = 1 and n = 2: CR 0 by definition", () => {
    const one = ahpWeights([[1]]);
    expect(Array.from(one.weights)).toEqual([1]);
    expect(one.consistencyRatio).toBe(0);
    const two = ahpWeights(matrixFromUpperTriangle(2, [3]));
    // (formula) a12 = 3 → weights 3/4, 1/4
    expect(two.weights[0]).toBeCloseTo(0.75, 12);
    expect(two.weights[1]).toBeCloseTo(0.25, 12);
    expect(two.consistencyRatio).toBe(0);
  });

  it("returns an eigenvector of random reciprocal matrices, with λmax ≥ n", () => {
    const rnd = prng(11);
    for (let trial = 0; trial < 50; trial++) {
      const n = 3 + (trial % 8);
      const upper = Array.from({ length: (n * (n - 1)) / 2 }, () => SCALE[Math.floor(rnd() * SCALE.length)]);
      const m = matrixFromUpperTriangle(n, upper);
      const r = ahpWeights(m);
      // (formula) A·w = λmax·w; Saaty: λmax ≥ n for a positive reciprocal matrix
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < n; j++) s += m[i][j] * r.weights[j];
        expect(Math.abs(s - r.lambdaMax * r.weights[i])).toBeLessThan(1e-9);
      }
      expect(r.lambdaMax).toBeGreaterThan(n - 1e-9);
      expect(r.weights.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
    }
  });
});

describe("validatePairwiseMatrix", () => {
  const names = ["stream", "shore", "slope"];
  it("refuses a matrix that is not reciprocal, naming the pair", () => {
    const m = [
      [1, 3, 5],
      [1 / 3, 1, 3],
      [1 / 5, 1 / 2, 1],
    ];
    expect(() => validatePairwiseMatrix(m, names)).toThrow(/not reciprocal: "shore" against "slope" is 3, so "slope" against "shore" must be 1\/3/);
  });
  it("refuses judgements outside 1/9–9, a bad diagonal, NaN, a ragged or too large matrix", () => {
    expect(() => matrixFromUpperTriangle(3, [12, 5, 3], names)).toThrow(/"stream" against "shore" \(12\) lies outside Saaty's scale/);
    expect(() => matrixFromUpperTriangle(3, [3, 1 / 10, 3])).toThrow(/outside Saaty's scale/);
    expect(() => validatePairwiseMatrix([[2, 1], [1, 1]])).toThrow(/compared with itself must be 1/);
    expect(() => matrixFromUpperTriangle(2, [NaN])).toThrow(/not a finite number/);
    expect(() => validatePairwiseMatrix([[1, 2], [0.5]])).toThrow(/Row 2/);
    expect(() => matrixFromUpperTriangle(11, new Array(55).fill(1))).toThrow(/at most 10/);
    expect(() => ahpWeights([])).toThrow(ScoringInputError);
    // the scale's own ends, typed as rounded decimals, are accepted
    expect(() => matrixFromUpperTriangle(2, [0.1111111])).not.toThrow();
  });
});

describe("aggregateJudgements", () => {
  it("takes the element-wise geometric mean (Aczél & Saaty 1983)", () => {
    const a = matrixFromUpperTriangle(3, [2, 1 / 3, 4]);
    const b = matrixFromUpperTriangle(3, [8, 3, 1]);
    const g = aggregateJudgements([a, b]);
    // (formula) √(2·8) = 4, √(1/3 · 3) = 1, √(4·1) = 2, and the result stays reciprocal
    expect(g[0][1]).toBeCloseTo(4, 12);
    expect(g[0][2]).toBeCloseTo(1, 12);
    expect(g[1][2]).toBeCloseTo(2, 12);
    expect(g[1][0]).toBeCloseTo(1 / 4, 12);
    expect(() => validatePairwiseMatrix(g)).not.toThrow();
  });

  it("of two consistent matrices gives weights ∝ the geometric mean of their weights", () => {
    // (formula) a consistent matrix is a[i][j] = wᵢ/wⱼ; the geometric mean of two is √(uᵢvᵢ)/√(uⱼvⱼ)
    const u = [0.5, 0.3, 0.2];
    const v = [0.2, 0.2, 0.6];
    const consistent = (w: number[]) => w.map((wi) => w.map((wj) => wi / wj));
    const r = ahpWeights(aggregateJudgements([consistent(u), consistent(v)]));
    const g = u.map((ui, i) => Math.sqrt(ui * v[i]));
    const total = g.reduce((s, x) => s + x, 0);
    for (let i = 0; i < 3; i++) expect(r.weights[i]).toBeCloseTo(g[i] / total, 10);
    expect(r.consistencyRatio).toBeCloseTo(0, 10);
  });

  it("refuses matrices of different sizes", () => {
    expect(() => aggregateJudgements([matrixFromUpperTriangle(2, [3]), matrixFromUpperTriangle(3, [2, 4, 2])])).toThrow(
      /same factors/,
    );
  });
});
