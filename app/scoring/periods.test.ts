import { describe, expect, it } from "vitest";
import { combinePeriod, periodAgeWeights } from "./periods.ts";
import { ScoringInputError } from "./errors.ts";
import { prng } from "../terrain/test-utils.ts";

const f32 = (...v: number[]) => Float32Array.from(v);

describe("periodAgeWeights", () => {
  it("gives each age the time closest to it, clipped to the window (hand-worked)", () => {
    // (formula) ages 10, 11, 12, 13 ka stand for 9.5–10.5, 10.5–11.5, 11.5–12.5, 12.5–13.5;
    // window 10.2–12.8 → 0.3, 1, 1, 0.3 of 2.6 ka
    const r = periodAgeWeights([10, 11, 12, 13], { youngKa: 10.2, oldKa: 12.8 });
    const expected = [0.3, 1, 1, 0.3].map((w) => w / 2.6);
    for (let k = 0; k < 4; k++) expect(r.weights[k]).toBeCloseTo(expected[k], 12);
    expect(r.coveredShare).toBeCloseTo(1, 12);
  });

  it("handles uneven spacing and ages in any order (hand-worked)", () => {
    // (formula) ages 8, 10, 14: midpoints 9 and 12; window 9–13 → age 8: 0, age 10: 9–12 = 3, age 14: 12–13 = 1
    const r = periodAgeWeights([14, 8, 10], { youngKa: 9, oldKa: 13 });
    expect(r.weights[0]).toBeCloseTo(0.25, 12);
    expect(r.weights[1]).toBe(0);
    expect(r.weights[2]).toBeCloseTo(0.75, 12);
  });

  it("reports a window reaching past the ages, and refuses one outside them", () => {
    // (formula) ages 10…13 cover 9.5–13.5; window 9–12 → covered 9.5–12, 2.5 of 3 ka
    const r = periodAgeWeights([10, 11, 12, 13], { youngKa: 9, oldKa: 12 });
    expect(r.coveredYoungKa).toBe(9.5);
    expect(r.coveredShare).toBeCloseTo(2.5 / 3, 12);
    expect(() => periodAgeWeights([10, 11], { youngKa: 20, oldKa: 25 })).toThrow(/outside the reconstruction's ages, which cover 9.5–11.5 ka/);
    expect(() => periodAgeWeights([10, 11], { youngKa: 12, oldKa: 11 })).toThrow(/must be older than its young end/);
    expect(() => periodAgeWeights([10, 10], { youngKa: 9, oldKa: 11 })).toThrow(/appears twice/);
    expect(() => periodAgeWeights([12], { youngKa: 9, oldKa: 11 })).toThrow(ScoringInputError);
    expect(Array.from(periodAgeWeights([10], { youngKa: 9, oldKa: 11 }).weights)).toEqual([1]);
  });
});

describe("combinePeriod", () => {
  const ages = [10, 11, 12, 13];
  const window = { youngKa: 10.2, oldKa: 12.8 };
  // one cell: 0.2, 0.5, 0.8 at 10–12 ka, sea (NaN) at 13 ka; a second cell sea throughout
  const layers = [f32(0.2, NaN), f32(0.5, NaN), f32(0.8, NaN), f32(NaN, NaN)];

  it("time-weighted mean, sea time counted as zero (hand-worked)", () => {
    // (formula) (0.3·0.2 + 1·0.5 + 1·0.8 + 0.3·0) / 2.6 = 1.36 / 2.6 = 0.523077
    const p = combinePeriod(layers, ages, window);
    expect(p[0]).toBeCloseTo(0.523077, 6);
    expect(p[1]).toBeNaN();
  });

  it("rule 'skip': the mean while the cell was occupiable (hand-worked)", () => {
    // (formula) 1.36 / (2.6 − 0.3) = 0.591304
    const p = combinePeriod(layers, ages, window, "skip");
    expect(p[0]).toBeCloseTo(0.591304, 6);
    expect(p[1]).toBeNaN();
  });

  it("a constant score is unchanged by any window or spacing", () => {
    // (formula) Σw·s/Σw = s
    const p = combinePeriod([f32(0.7), f32(0.7), f32(0.7)], [8, 10, 14], { youngKa: 8.5, oldKa: 13.9 });
    expect(p[0]).toBeCloseTo(0.7, 6);
  });

  it("refuses layers that do not match the ages", () => {
    expect(() => combinePeriod([f32(1)], ages, window)).toThrow(/1 per-age layers for 4 ages/);
    expect(() => combinePeriod([f32(1), f32(1, 2), f32(1), f32(1)], ages, window)).toThrow(/11 ka has 2 cells/);
  });

  it("unlike a blind maximum over ages, does not saturate as ages are added", () => {
    // The rejected rule (decision 401): the maximum over all ages. Here each cell's per-age score is
    // an independent draw from 0–1, sampled at 3 and then at 21 ages over the same 10–12 ka window.
    // (formula) the expected maximum of k uniform draws is k/(k + 1): 0.75 → 0.955; the expected
    // time-weighted mean stays 0.5.
    const rnd = prng(401);
    const cells = 2000;
    const window = { youngKa: 10, oldKa: 12 };
    const meanOf = (a: Float32Array) => a.reduce((s, v) => s + v, 0) / a.length;
    const run = (count: number) => {
      const ages = Array.from({ length: count }, (_, k) => 10 + (2 * k) / (count - 1));
      const layers = ages.map(() => Float32Array.from({ length: cells }, () => rnd()));
      const max = new Float32Array(cells);
      for (const l of layers) for (let i = 0; i < cells; i++) max[i] = Math.max(max[i], l[i]);
      return { max: meanOf(max), period: meanOf(combinePeriod(layers, ages, window)) };
    };
    const coarse = run(3);
    const fine = run(21);
    expect(coarse.max).toBeCloseTo(0.75, 1);
    expect(fine.max).toBeGreaterThan(0.93); // saturates towards 1
    expect(Math.abs(coarse.period - 0.5)).toBeLessThan(0.03);
    expect(Math.abs(fine.period - 0.5)).toBeLessThan(0.03);

    // and it ranks a brief good spell above a lasting good place
    const steady = Array.from({ length: 21 }, () => 0.7);
    const spike = Array.from({ length: 21 }, (_, k) => (k === 10 ? 0.9 : 0.2));
    const ages = Array.from({ length: 21 }, (_, k) => 10 + k / 10);
    const p = combinePeriod(ages.map((_, k) => f32(steady[k], spike[k])), ages, window);
    expect(Math.max(...spike)).toBeGreaterThan(Math.max(...steady));
    expect(p[0]).toBeGreaterThan(p[1]);
  });
});
