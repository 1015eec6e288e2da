import { describe, expect, it } from "vitest";
import { classAreas, classCounts, classifyRaster, classOf, fixedClassification, quantileClassification } from "./classification.ts";
import { ScoringInputError } from "./errors.ts";
import { classTallies, gainByClass } from "./validation.ts";
import { Mulberry32 } from "./random.ts";

describe("fixed thresholds", () => {
  const cls = fixedClassification([0.7, 0.4]);

  it("puts a value in the class at or above its threshold, highest class first", () => {
    expect(cls.labels).toEqual(["high", "medium", "low"]);
    expect(classOf(cls, 0.95)).toBe(0);
    expect(classOf(cls, 0.7)).toBe(0); // a threshold belongs to the class above it
    expect(classOf(cls, Math.fround(0.7))).toBe(0); // a Float32 layer's 0.7 (0.69999998…) too
    expect(classOf(cls, 0.5)).toBe(1);
    expect(classOf(cls, 0.4)).toBe(1);
    expect(classOf(cls, 0.39)).toBe(2);
    expect(classOf(cls, NaN)).toBe(-1);
  });

  it("gives Kvamme's check values through areas and counts (check-values.md, validation)", () => {
    // three zones with area 0.10 / 0.30 / 0.60 holding 24 / 12 / 4 of 40 sites
    const scores = new Float32Array(100);
    scores.fill(0.9, 0, 10);
    scores.fill(0.5, 10, 40);
    scores.fill(0.1, 40, 100);
    const sites = [...Array(24).fill(0.8), ...Array(12).fill(0.5), ...Array(4).fill(0.2)];
    const areas = classAreas(cls, scores, null);
    const counts = classCounts(cls, sites);
    const g = gainByClass(areas.cells, counts.counts);
    // (formula) per-zone gain 0.8333 / 0 / −5.0; cumulative 0.8333 / 0.5556 / 0
    expect(g.gain[0]).toBeCloseTo(0.8333, 4);
    expect(g.gain[1]).toBeCloseTo(0, 10);
    expect(g.gain[2]).toBeCloseTo(-5.0, 10);
    expect(g.cumulativeGain[0]).toBeCloseTo(0.8333, 4);
    expect(g.cumulativeGain[1]).toBeCloseTo(0.5556, 4);
    expect(g.cumulativeGain[2]).toBeCloseTo(0, 10);
  });

  it("counts exactly as validation.ts classTallies does (one rule for every figure)", () => {
    const rng = new Mulberry32(3);
    const scores = Float32Array.from({ length: 5000 }, () => (rng.next() < 0.05 ? NaN : Math.round(rng.next() * 20) / 20));
    // site scores as read from a Float32 score layer (classTallies compares unrounded doubles, so a
    // double 0.4 falls below the Float32 threshold 0.4 there; classOf rounds the value like
    // siteCaptureCurve does — reported to the integrator)
    const sites = Array.from({ length: 300 }, () => Math.fround(Math.round(rng.next() * 20) / 20));
    const t = classTallies(scores, sites, cls.thresholds);
    expect(Array.from(classAreas(cls, scores, null).cells)).toEqual(Array.from(t.cells));
    expect(Array.from(classCounts(cls, sites).counts)).toEqual(Array.from(t.sites));
    const raster = classifyRaster(cls, scores);
    for (let i = 0; i < scores.length; i++) expect(raster[i]).toBe(Number.isNaN(scores[i]) ? 255 : classOf(cls, scores[i]));
  });

  it("takes area over a mask only, counting masked cells without a score apart", () => {
    const scores = Float32Array.from([0.9, 0.9, 0.5, NaN, 0.1, 0.1]);
    const mask = Uint8Array.from([1, 0, 1, 1, 1, 0]);
    const a = classAreas(cls, scores, mask, 625);
    expect(Array.from(a.cells)).toEqual([1, 1, 1]);
    expect(Array.from(a.areaM2)).toEqual([625, 625, 625]);
    expect(a.unscoredCells).toBe(1);
    expect(() => classAreas(cls, scores, new Uint8Array(5))).toThrow(/same grid/);
  });

  it("refuses thresholds that do not decrease, and the wrong number of names", () => {
    expect(() => fixedClassification([0.4, 0.7])).toThrow(ScoringInputError);
    expect(() => fixedClassification([0.5, 0.5])).toThrow(/decrease/);
    expect(() => fixedClassification([])).toThrow(/2 to 10 classes/);
    expect(() => fixedClassification([0.5], ["a", "b", "c"])).toThrow(/2 class names/);
  });
});

describe("quantile classes frozen from a histogram", () => {
  it("gives the requested shares on a raster of distinct values", () => {
    // 1000 cells 0.000, 0.001, …, 0.999 and some nodata
    const ref = new Float32Array(1100).fill(NaN);
    for (let i = 0; i < 1000; i++) ref[i] = i / 1000;
    const cls = quantileClassification(ref, [0.1, 0.2, 0.3, 0.4], { reference: "test raster" });
    expect(cls.kind).toBe("quantile");
    expect(cls.quantile!.cells).toBe(1000);
    // achieved shares counted on the raster itself; bins of 1e-4 separate every value (common practice)
    cls.quantile!.achievedShares.forEach((s, c) => expect(s).toBeCloseTo([0.1, 0.2, 0.3, 0.4][c], 3));
    const areas = classAreas(cls, ref, null);
    expect(Array.from(areas.cells)).toEqual([100, 200, 300, 400]);
    // frozen: plain thresholds afterwards, applied to any other raster unchanged
    expect(classOf(cls, 0.95)).toBe(0);
    expect(classOf(cls, 0.05)).toBe(3);
  });

  it("records what ties do to the shares instead of hiding it", () => {
    const ref = new Float32Array(100);
    for (let i = 0; i < 100; i++) ref[i] = i < 15 ? 1 : i / 100; // 15 cells tied at the top
    const cls = quantileClassification(ref, [0.1, 0.9]);
    expect(cls.quantile!.achievedShares[0]).toBeCloseTo(0.15, 10);
    expect(cls.quantile!.requestedShares[0]).toBe(0.1);
  });

  it("refuses a constant raster, shares that do not add up, and classes that collapse", () => {
    expect(() => quantileClassification(new Float32Array(10).fill(0.5), [0.5, 0.5])).toThrow(/same value/);
    expect(() => quantileClassification(Float32Array.from([0, 1, 2]), [0.5, 0.6])).toThrow(/add up to 1/);
    expect(() => quantileClassification(new Float32Array(4).fill(NaN), [0.5, 0.5])).toThrow(/none/);
    const tied = new Float32Array(100);
    for (let i = 0; i < 100; i++) tied[i] = i < 50 ? 1 : i / 100;
    expect(() => quantileClassification(tied, [0.1, 0.2, 0.7])).toThrow(/same value of the reference raster/);
  });
});
