import { describe, expect, it } from "vitest";
import {
  normaliseWeights,
  occupiableMask,
  weightedLinearCombination,
  weightedLinearCombinationFromCodes,
} from "./weighted-sum.ts";
import { quantisedCurveTable, applyCurve, type FactorCurve } from "./factor-curves.ts";
import { ScoringInputError } from "./errors.ts";
import { prng } from "../terrain/test-utils.ts";

const f32 = (...v: number[]) => Float32Array.from(v);

describe("weightedLinearCombination", () => {
  it("the 4×4 AHP weights with scores (0.9, 0.6, 1.0, 0.3) give 0.781217", () => {
    // weights: check-values.md 4×4 AHP example (formula); the sum: (formula) check-values.md
    const factors = [
      { name: "stream", weight: 0.482886, scores: f32(0.9) },
      { name: "shore", weight: 0.271974, scores: f32(0.6) },
      { name: "slope", weight: 0.15699, scores: f32(1.0) },
      { name: "aspect", weight: 0.08815, scores: f32(0.3) },
    ];
    expect(weightedLinearCombination(factors, null)[0]).toBeCloseTo(0.781217, 6);
  });

  it("normalises weights to sum 1", () => {
    // (formula) weights 2, 1, 1 → 0.5, 0.25, 0.25; scores 1, 0, 0.4 → 0.5 + 0.1 = 0.6
    expect(Array.from(normaliseWeights([{ name: "a", weight: 2 }, { name: "b", weight: 1 }, { name: "c", weight: 1 }]))).toEqual([0.5, 0.25, 0.25]);
    const s = weightedLinearCombination(
      [
        { name: "a", weight: 2, scores: f32(1) },
        { name: "b", weight: 1, scores: f32(0) },
        { name: "c", weight: 1, scores: f32(0.4) },
      ],
      null,
    );
    expect(s[0]).toBeCloseTo(0.6, 6);
  });

  it("scores only land and intertidal cells; a NaN factor gives NaN unless its weight is 0", () => {
    // land_class: 0 land, 1 sea, 2 intertidal, 3 lake, 255 nodata (docs/layers.md)
    const mask = occupiableMask(Uint8Array.from([0, 1, 2, 3, 255, 0]));
    expect(Array.from(mask)).toEqual([1, 0, 1, 0, 0, 1]);
    const a = f32(1, 1, 0.5, 1, 1, NaN);
    const b = f32(0, 0, 0.5, 0, 0, 0.2);
    const s = weightedLinearCombination([{ name: "a", weight: 1, scores: a }, { name: "b", weight: 1, scores: b }], mask);
    expect(s[0]).toBeCloseTo(0.5, 6);
    expect(s[1]).toBeNaN();
    expect(s[2]).toBeCloseTo(0.5, 6);
    expect(s[3]).toBeNaN();
    expect(s[4]).toBeNaN();
    expect(s[5]).toBeNaN(); // a NaN factor: missing is not poor
    const onlyB = weightedLinearCombination([{ name: "a", weight: 0, scores: a }, { name: "b", weight: 3, scores: b }], mask);
    expect(onlyB[5]).toBeCloseTo(0.2, 6);
  });

  it("refuses negative, NaN and all-zero weights, naming the factor", () => {
    const scores = f32(0.5);
    const run = (w1: number, w2: number) =>
      weightedLinearCombination([{ name: "distance to stream", weight: w1, scores }, { name: "slope", weight: w2, scores }], null);
    expect(() => run(1, -0.2)).toThrow(/"slope" is negative/);
    expect(() => run(NaN, 1)).toThrow(/"distance to stream" is not a number/);
    expect(() => run(0, 0)).toThrow(/All weights are zero/);
    expect(() => run(Infinity, 1)).toThrow(ScoringInputError);
    expect(() =>
      weightedLinearCombination([{ name: "a", weight: 1, scores: f32(1, 2) }, { name: "b", weight: 1, scores: f32(1) }], null),
    ).toThrow(/"b" has 1 cells; the grid has 2/);
  });
});

describe("weightedLinearCombinationFromCodes", () => {
  it("equals the float path on the decoded scores (server equals worker)", () => {
    const rnd = prng(7);
    const n = 4096;
    const curves: FactorCurve[] = [
      { kind: "linear", direction: "decreasing", fullUntil: 500, zeroAt: 2000 },
      { kind: "j-shaped", direction: "decreasing", fullUntil: 0, halfAt: 10 },
      { kind: "aspect", preferredDeg: 180, widthDeg: 120, flatValue: 0.5 },
    ];
    const spans = [3000, 30, 360];
    const coded = curves.map((curve, k) => {
      const isU16 = k === 1;
      const top = isU16 ? 65535 : 255;
      const codes = isU16 ? new Uint16Array(n) : new Uint8Array(n);
      for (let i = 0; i < n; i++) codes[i] = rnd() < 0.05 ? top : Math.floor(rnd() * top);
      const q = { scale: spans[k] / (top - 1), offset: 0, nodataCode: top };
      const decoded = new Float32Array(n);
      for (let i = 0; i < n; i++) decoded[i] = codes[i] === top ? NaN : codes[i] * q.scale;
      return { name: `f${k}`, weight: k + 1, codes, table: quantisedCurveTable(curve, q), scores: applyCurve(curve, decoded) };
    });
    const land = new Uint8Array(n);
    for (let i = 0; i < n; i++) land[i] = rnd() < 0.8 ? 0 : 1;
    const mask = occupiableMask(land);
    const fromCodes = weightedLinearCombinationFromCodes(coded, mask);
    const direct = weightedLinearCombination(coded, mask);
    let nan = 0;
    for (let i = 0; i < n; i++) {
      if (Number.isNaN(direct[i])) {
        expect(fromCodes[i]).toBeNaN();
        nan++;
      } else expect(Math.abs(fromCodes[i] - direct[i])).toBeLessThan(1e-6);
    }
    // the aspect's nodata code reads as a flat (0.5), so NaN comes from the mask and the other two
    expect(nan).toBeGreaterThan(n * 0.2);
    expect(nan).toBeLessThan(n * 0.4);
  });

  it("refuses a table too short for its codes", () => {
    expect(() =>
      weightedLinearCombinationFromCodes([{ name: "slope", weight: 1, codes: new Uint8Array(4), table: new Float32Array(100) }], null),
    ).toThrow(/"slope" has 100 entries; its codes need 256/);
  });
});
