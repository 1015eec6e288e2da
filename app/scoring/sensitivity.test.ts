import { describe, expect, it } from "vitest";
import { defaultWeightChanges, oneAtATimeSensitivity, perturbWeights } from "./sensitivity.ts";
import { ahpWeights, matrixFromUpperTriangle } from "./ahp.ts";
import { weightedLinearCombination, type WeightedFactor } from "./weighted-sum.ts";
import { Mulberry32 } from "./random.ts";

describe("perturbWeights", () => {
  it("changes one weight and rescales the others to sum 1, keeping their ratios", () => {
    // (formula) weights 0.5, 0.3, 0.2; w1 +20 % → 0.6, others × 0.4/0.5 → 0.24, 0.16
    const w = perturbWeights([0.5, 0.3, 0.2], 0, 0.2)!;
    expect(w[0]).toBeCloseTo(0.6, 12);
    expect(w[1]).toBeCloseTo(0.24, 12);
    expect(w[2]).toBeCloseTo(0.16, 12);
  });

  it("returns null for an impossible change and keeps a zero weight at zero", () => {
    expect(perturbWeights([0.9, 0.1], 0, 0.2)).toBeNull(); // 1.08 > 1
    expect(perturbWeights([1, 0], 0, -0.1)).toBeNull(); // nobody to take up the 10 %
    expect(Array.from(perturbWeights([0, 0.6, 0.4], 0, 0.2)!)).toEqual([0, 0.6, 0.4]);
    expect(() => perturbWeights([0.5, 0.5], 2, 0.1)).toThrow(/no factor 3 among 2/);
  });

  it("steps from −20 % to +20 % in 1 % steps", () => {
    // (paper) Chen, Yu & Khan 2010
    const c = defaultWeightChanges();
    expect(c.length).toBe(41);
    expect(c[0]).toBeCloseTo(-0.2, 12);
    expect(c[20]).toBe(0);
    expect(c[40]).toBeCloseTo(0.2, 12);
    expect(c[21] - c[20]).toBeCloseTo(0.01, 12);
  });
});

describe("oneAtATimeSensitivity", () => {
  it("4×4 AHP weights, scores (0.9, 0.6, 1.0, 0.3): w1 −20 % → 0.759033, +20 % → 0.803401", () => {
    const r = ahpWeights(matrixFromUpperTriangle(4, [2, 3, 5, 2, 3, 2]));
    const scores = [0.9, 0.6, 1.0, 0.3];
    const factors = scores.map((v, k) => ({ name: `f${k + 1}`, weight: r.weights[k], scores: Float32Array.of(v) }));
    const s = oneAtATimeSensitivity(factors, null);
    const f1 = s.factors[0];
    // (formula) check-values.md gives 0.759033, reached from the weights as printed to 6 decimals
    // (0.7590326); the exact eigenvector weights give 0.7590324 — both within 1e-6
    expect(Math.abs(f1.meanScore[0] - 0.759033)).toBeLessThan(1e-6);
    expect(f1.meanScore[40]).toBeCloseTo(0.803401, 6); // (formula) check-values.md
    expect(f1.meanScore[20]).toBeCloseTo(0.781217, 6); // (formula) check-values.md, unchanged weights
    expect(s.baseMeanScore).toBeCloseTo(0.781217, 6);
  });

  it("the same with the 4×4 weights as printed in check-values.md", () => {
    const printed = [0.482886, 0.271974, 0.15699, 0.08815];
    const scores = [0.9, 0.6, 1.0, 0.3];
    const s = oneAtATimeSensitivity(
      scores.map((v, k) => ({ name: `f${k + 1}`, weight: printed[k], scores: Float32Array.of(v) })),
      null,
    );
    expect(s.factors[0].meanScore[0]).toBeCloseTo(0.759033, 6); // (formula) check-values.md
    expect(s.factors[0].meanScore[40]).toBeCloseTo(0.803401, 6); // (formula) check-values.md
  });

  it("equals recomputing the weighted sum with the changed weights, cell by cell", () => {
    const rng = new Mulberry32(17);
    const n = 3000;
    const factors: WeightedFactor[] = [0.4, 0.3, 0.2, 0.1].map((weight, k) => ({
      name: `f${k}`,
      weight,
      scores: Float32Array.from({ length: n }, () => (rng.next() < 0.02 ? NaN : rng.next())),
    }));
    const mask = Uint8Array.from({ length: n }, () => (rng.next() < 0.9 ? 1 : 0));
    const threshold = 0.6;
    const s = oneAtATimeSensitivity(factors, mask, { highThreshold: threshold });
    for (const f of [0, 3])
      for (const c of [0, 7, 33, 40]) {
        const change = s.changes[c];
        const pw = perturbWeights([0.4, 0.3, 0.2, 0.1], f, change)!;
        const direct = weightedLinearCombination(
          factors.map((x, k) => ({ ...x, weight: pw[k] })),
          mask,
        );
        let sum = 0;
        let cells = 0;
        let high = 0;
        for (const v of direct)
          if (!Number.isNaN(v)) {
            sum += v;
            cells++;
            if (v >= Math.fround(threshold)) high++;
          }
        expect(cells).toBe(s.cells);
        expect(s.factors[f].meanScore[c]).toBeCloseTo(sum / cells, 6); // (formula) linearity of the sum
        // Float32 rounding may move a cell lying on the threshold: allow one cell either way
        expect(Math.abs(s.factors[f].highShare[c] - high / cells)).toBeLessThanOrEqual(1 / cells + 1e-12);
      }
    expect(s.baseHighShare).toBeGreaterThan(0);
  });

  it("marks impossible changes as NaN", () => {
    const factors = [
      { name: "a", weight: 0.9, scores: Float32Array.of(1) },
      { name: "b", weight: 0.1, scores: Float32Array.of(0) },
    ];
    const s = oneAtATimeSensitivity(factors, null);
    // (formula) 0.9 × 1.12 > 1: from +12 % on, impossible
    expect(s.factors[0].meanScore[31]).toBeCloseTo(0.9 * 1.11, 6);
    expect(s.factors[0].meanScore[32]).toBeNaN();
    expect(s.factors[0].highShare[0]).toBeNaN(); // no threshold given
  });

  it("refuses a map without scored cells", () => {
    expect(() => oneAtATimeSensitivity([{ name: "a", weight: 1, scores: Float32Array.of(NaN) }], null)).toThrow(/No cell has a score/);
  });
});
