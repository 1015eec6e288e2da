import { describe, expect, it } from "vitest";
import { spearmanRankCorrelation, topCellsInCommon } from "./rank-compare.ts";
import { Mulberry32 } from "./random.ts";
import { ScoringInputError } from "./errors.ts";

const f32 = (...v: number[]) => Float32Array.from(v);

/** Pearson on mid-ranks, by brute force: O(n²) ranks */
function bruteSpearman(a: number[], b: number[]): number {
  const rank = (v: number[]) => v.map((x) => v.filter((y) => y < x).length + (v.filter((y) => y === x).length + 1) / 2);
  const ra = rank(a);
  const rb = rank(b);
  const ma = ra.reduce((s, x) => s + x, 0) / ra.length;
  const mb = rb.reduce((s, x) => s + x, 0) / rb.length;
  let sab = 0, saa = 0, sbb = 0;
  for (let i = 0; i < ra.length; i++) {
    sab += (ra[i] - ma) * (rb[i] - mb);
    saa += (ra[i] - ma) ** 2;
    sbb += (rb[i] - mb) ** 2;
  }
  return sab / Math.sqrt(saa * sbb);
}

describe("spearmanRankCorrelation", () => {
  it("hand-worked without ties: 1 − 6Σd²/(n(n² − 1)) = 0.8", () => {
    // (formula) ranks 1 2 3 4 5 against 2 1 4 3 5: Σd² = 4 → 1 − 24/120 = 0.8
    const r = spearmanRankCorrelation(f32(0.1, 0.2, 0.3, 0.4, 0.5), f32(0.2, 0.1, 0.4, 0.3, 0.5));
    expect(r.rho).toBeCloseTo(0.8, 12);
    expect(r.cells).toBe(5);
  });

  it("is 1 for any increasing transform, −1 for a reversal, and skips cells either map lacks", () => {
    const a = f32(-3, 0.5, 2, NaN, 7, 1e-3, -0, 40);
    const b = Float32Array.from(a, (x) => Math.exp(x / 10));
    b[5] = NaN;
    expect(spearmanRankCorrelation(a, b)).toEqual({ rho: expect.closeTo(1, 12), cells: 6 });
    const c = Float32Array.from(a, (x) => -x);
    expect(spearmanRankCorrelation(a, c).rho).toBeCloseTo(-1, 12);
  });

  it("equals mid-rank Pearson by brute force on tied random maps", () => {
    const rng = new Mulberry32(4);
    for (let trial = 0; trial < 10; trial++) {
      const n = 50 + rng.nextInt(150);
      const a = Float32Array.from({ length: n }, () => rng.nextInt(6) / 5 - 0.5);
      const b = Float32Array.from(a, (x) => (rng.next() < 0.5 ? x : rng.nextInt(6) / 5));
      a[rng.nextInt(n)] = NaN;
      const keep = Array.from(a.keys()).filter((i) => !Number.isNaN(a[i]) && !Number.isNaN(b[i]));
      // (formula) Spearman 1904 with Kendall's mid-ranks
      expect(spearmanRankCorrelation(a, b).rho).toBeCloseTo(bruteSpearman(keep.map((i) => a[i]), keep.map((i) => b[i])), 10);
    }
  });

  it("refuses maps of different grids or too few common cells", () => {
    expect(() => spearmanRankCorrelation(f32(1, 2), f32(1))).toThrow(/different grids/);
    expect(() => spearmanRankCorrelation(f32(1, NaN), f32(NaN, 1))).toThrow(ScoringInputError);
    expect(spearmanRankCorrelation(f32(1, 1, 1), f32(1, 2, 3)).rho).toBeNaN();
  });
});

describe("topCellsInCommon", () => {
  const a = f32(0.9, 0.8, 0.1, 0.5, NaN, 0.3);
  const b = f32(0.2, 0.9, 0.8, 0.7, 0.5, 0.1);

  it("hand-worked: top 2 share 1 of 2, top 3 share 2 of 3", () => {
    // (formula) over cells 0, 1, 2, 3, 5: top of a = 0, 1, 3, …; top of b = 1, 2, 3, …
    expect(topCellsInCommon(a, b, 2)).toEqual({ share: 0.5, topN: 2, cells: 5 });
    expect(topCellsInCommon(a, b, 3).share).toBeCloseTo(2 / 3, 12);
    expect(topCellsInCommon(a, b, 5).share).toBe(1);
    expect(topCellsInCommon(a, a, 2).share).toBe(1);
  });

  it("breaks ties at the cut by cell index in both maps", () => {
    // all equal: the top 2 of each are cells 0 and 1
    expect(topCellsInCommon(f32(1, 1, 1, 1), f32(0.5, 0.5, 0.5, 0.5), 2).share).toBe(1);
    // negative scores and −0 sort correctly
    expect(topCellsInCommon(f32(-1, -0, -2, 0.5), f32(-5, 0, -9, 3), 2).share).toBe(1);
  });

  it("refuses a top-N it cannot take", () => {
    expect(() => topCellsInCommon(a, b, 6)).toThrow(/from 1 to 5/);
    expect(() => topCellsInCommon(a, b, 0)).toThrow(ScoringInputError);
  });
});
