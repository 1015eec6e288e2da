import { describe, expect, it } from "vitest";
import { factorCorrelations } from "./correlation.ts";
import type { LayerData } from "./potential.ts";
import { quantise } from "../raster-display.ts";
import { prng } from "../terrain/test-utils.ts";

const vals = (...v: number[]): LayerData => ({ kind: "values", values: Float32Array.from(v) });
const ones = (n: number) => new Uint8Array(n).fill(1);

describe("factorCorrelations", () => {
  it("gives Pearson's r and Spearman's ρ of a small case (hand-worked)", () => {
    // x = 1…5, y = 2 1 4 3 5. (formula) Pearson: deviations −2 −1 0 1 2 and −1 −2 1 0 2:
    // Σdxdy = 2 + 2 + 0 + 0 + 4 = 8, Σdx² = Σdy² = 10 → r = 0.8.
    // (formula) Spearman without ties: 1 − 6Σd²/(n(n² − 1)) = 1 − 6·4/120 = 0.8.
    const r = factorCorrelations([{ factor: "slope", data: vals(1, 2, 3, 4, 5) }, { factor: "tpi", data: vals(2, 1, 4, 3, 5) }], ones(5));
    expect(r.factors).toEqual(["slope", "tpi"]);
    expect(r.samples).toBe(5);
    expect(r.pearson[0][1]).toBeCloseTo(0.8, 12);
    expect(r.pearson[1][0]).toBeCloseTo(0.8, 12);
    expect(r.spearman[0][1]).toBeCloseTo(0.8, 12);
    expect(r.pearson[0][0]).toBe(1);
    expect(r.spearman[1][1]).toBe(1);
  });

  it("separates a monotonic from a linear relation, and handles ties by mid-ranks (hand-worked)", () => {
    // y = x³ on 1…4: (formula) deviations −1.5 −0.5 0.5 1.5 and −24 −17 2 39: Σdxdy = 104, Σdx² = 5,
    // Σdy² = 2390 → r = 104/√11950 = 0.951370; ranks agree exactly → ρ = 1.
    const cube = factorCorrelations([{ factor: "slope", data: vals(1, 2, 3, 4) }, { factor: "tpi", data: vals(1, 8, 27, 64) }], ones(4));
    expect(cube.pearson[0][1]).toBeCloseTo(0.95137, 5);
    expect(cube.spearman[0][1]).toBeCloseTo(1, 12);
    // x = 1 2 2 3 → mid-ranks 1 2.5 2.5 4; y ranks 1…4. (formula) Σdxdy = 1.5·1.5 + 1.5·1.5 = 4.5,
    // Σdx² = 4.5, Σdy² = 5 → ρ = 4.5/√22.5 = 0.948683
    const ties = factorCorrelations([{ factor: "slope", data: vals(1, 2, 2, 3) }, { factor: "tpi", data: vals(1, 2, 3, 4) }], ones(4));
    expect(ties.spearman[0][1]).toBeCloseTo(0.948683, 6);
  });

  it("is +1 and −1 for perfect relations, NaN for a constant factor", () => {
    const x = [3, 1, 4, 1.5, 9, 2.6, 5];
    const r = factorCorrelations(
      [
        { factor: "slope", data: vals(...x) },
        { factor: "tpi", data: vals(...x.map((v) => 2 * v + 1)) },
        { factor: "aspect", data: vals(...x.map((v) => -v)) },
        { factor: "height_above_sea", data: vals(...x.map(() => 4)) },
      ],
      ones(7),
    );
    expect(r.pearson[0][1]).toBeCloseTo(1, 12);
    expect(r.spearman[0][1]).toBeCloseTo(1, 12);
    expect(r.pearson[0][2]).toBeCloseTo(-1, 12);
    expect(r.spearman[1][2]).toBeCloseTo(-1, 12);
    expect(r.pearson[0][3]).toBeNaN();
    expect(r.spearman[3][3]).toBeNaN();
  });

  it("uses only masked cells where every layer has a value, codes decoded", () => {
    // cells 2 (mask 0), 3 (NaN in slope) and 5 (nodata code in tpi) are left out
    const q = quantise(Float32Array.from([10, 20, 999, 40, 50, NaN, 30]), "NaN", 16);
    const tpi: LayerData = { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
    const r = factorCorrelations(
      [{ factor: "slope", data: vals(1, 2, 3, NaN, 5, 6, 3) }, { factor: "tpi", data: tpi }],
      Uint8Array.from([1, 1, 0, 1, 1, 1, 1]),
    );
    expect(r.samples).toBe(4);
    // (formula) remaining pairs (1,10), (2,20), (5,50), (3,30): y = 10x → r = ρ = 1
    expect(r.pearson[0][1]).toBeCloseTo(1, 6);
    expect(r.spearman[0][1]).toBeCloseTo(1, 12);
    const none = factorCorrelations([{ factor: "slope", data: vals(1, 2) }, { factor: "tpi", data: vals(1, 2) }], Uint8Array.from([1, 0]));
    expect(none.samples).toBe(1);
    expect(none.pearson[0][1]).toBeNaN();
    expect(() => factorCorrelations([{ factor: "slope", data: vals(1, 2) }], ones(3))).toThrow(/has 2 cells; the mask has 3/);
    expect(() => factorCorrelations([], ones(3), { maxSamples: 1 })).toThrow(/at least 2/);
  });

  it("samples reproducibly by seed, close to the full-grid value", () => {
    const rnd = prng(12);
    const n = 50000;
    const x = new Float32Array(n);
    const y = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rnd();
      y[i] = x[i] + (rnd() - 0.5); // (formula) r = σx/√(σx² + σe²) with both uniform of width 1 → 1/√2
    }
    const layers = [{ factor: "slope" as const, data: { kind: "values" as const, values: x } }, { factor: "tpi" as const, data: { kind: "values" as const, values: y } }];
    const full = factorCorrelations(layers, ones(n), { maxSamples: n });
    const a = factorCorrelations(layers, ones(n), { maxSamples: 5000, seed: 7 });
    const b = factorCorrelations(layers, ones(n), { maxSamples: 5000, seed: 7 });
    const c = factorCorrelations(layers, ones(n), { maxSamples: 5000, seed: 8 });
    expect(full.samples).toBe(n);
    expect(a.samples).toBe(5000);
    expect(full.pearson[0][1]).toBeCloseTo(Math.SQRT1_2, 2);
    expect(a.pearson).toEqual(b.pearson);
    expect(a.spearman).toEqual(b.spearman);
    expect(c.pearson[0][1]).not.toBe(a.pearson[0][1]);
    // a sample of 5000 is within a few hundredths of the full value (standard error ≈ (1 − r²)/√s ≈ 0.007)
    expect(Math.abs(a.pearson[0][1] - full.pearson[0][1])).toBeLessThan(0.03);
    expect(Math.abs(a.spearman[0][1] - full.spearman[0][1])).toBeLessThan(0.03);
  });
});
