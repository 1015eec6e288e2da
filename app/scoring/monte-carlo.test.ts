import { describe, expect, it } from "vitest";
import { Mulberry32 } from "./random.ts";
import {
  accumulateDraws,
  blockShares,
  convergenceCheckpoints,
  CONVERGENCE_FIELDS,
  createAccumulators,
  createLandscapeOut,
  drawWeights,
  gammaDraw,
  landscapeDraw,
  NO_LANDSCAPE_SPREAD,
  summariseCells,
  weightVarianceIndices,
  type LandscapeBase,
} from "./monte-carlo.ts";
import { inlineBlockRunner, runUncertainty } from "./uncertainty-run.ts";
import { ahpWeights, matrixFromUpperTriangle } from "./ahp.ts";
import { defaultWeightSetContent, type WeightSetContent } from "./weight-set.ts";
import type { FactorId } from "./factors.ts";
import type { LayerData } from "./potential.ts";

const BASE = [0.4, 0.3, 0.2, 0.1, 0];

describe("weight draws", () => {
  it("every draw sums to 1 and a zero weight stays zero (Dirichlet and ±x %)", () => {
    for (const p of [{ kind: "dirichlet", concentration: 20 } as const, { kind: "dirichlet", concentration: 0.5 } as const, { kind: "uniform", spread: 0.3 } as const]) {
      const d = drawWeights(BASE, p, 500, new Mulberry32(7));
      for (let r = 0; r < d.draws; r++) {
        let s = 0;
        for (let f = 0; f < d.k; f++) {
          const w = d.weights[r * d.k + f];
          expect(w).toBeGreaterThanOrEqual(0);
          s += w;
        }
        expect(s).toBeCloseTo(1, 12); // (formula) renormalised: Σw = 1
        expect(d.weights[r * d.k + 4]).toBe(0);
      }
    }
  });

  it("a fixed seed repeats exactly; another seed does not", () => {
    const p = { kind: "dirichlet", concentration: 10 } as const;
    const a = drawWeights(BASE, p, 200, new Mulberry32(42));
    const b = drawWeights(BASE, p, 200, new Mulberry32(42));
    const c = drawWeights(BASE, p, 200, new Mulberry32(43));
    expect(Array.from(a.weights)).toEqual(Array.from(b.weights));
    expect(Array.from(a.weights)).not.toEqual(Array.from(c.weights));
  });

  it("Dirichlet draws average the weight set, with variance w(1 − w)/(c + 1)", () => {
    // (formula) Dirichlet(α = c·w): E[wᵢ] = wᵢ, Var[wᵢ] = wᵢ(1 − wᵢ)/(c + 1)
    const c = 9;
    const N = 20000;
    const d = drawWeights([0.5, 0.3, 0.2], { kind: "dirichlet", concentration: c }, N, new Mulberry32(1));
    for (let f = 0; f < 3; f++) {
      const w = [0.5, 0.3, 0.2][f];
      let m = 0;
      let v = 0;
      for (let r = 0; r < N; r++) m += d.weights[r * 3 + f];
      m /= N;
      for (let r = 0; r < N; r++) v += (d.weights[r * 3 + f] - m) ** 2;
      v /= N - 1;
      const varTrue = (w * (1 - w)) / (c + 1);
      expect(Math.abs(m - w)).toBeLessThan(5 * Math.sqrt(varTrue / N));
      expect(v / varTrue).toBeGreaterThan(0.95);
      expect(v / varTrue).toBeLessThan(1.05);
    }
  });

  it("gamma deviates have mean = shape (Marsaglia & Tsang 2000, also below shape 1)", () => {
    // (formula) Gamma(a, 1): mean a, variance a
    for (const a of [0.3, 1, 4.5]) {
      const rng = new Mulberry32(3);
      const N = 40000;
      let m = 0;
      for (let j = 0; j < N; j++) m += gammaDraw(rng, a);
      m /= N;
      expect(Math.abs(m - a)).toBeLessThan(5 * Math.sqrt(a / N));
    }
  });
});

describe("accumulateDraws", () => {
  const k = 3;
  const n = 50;
  const rng = new Mulberry32(11);
  const scores = Array.from({ length: k }, () => Float32Array.from({ length: n }, () => rng.next()));
  const pres = Float32Array.from({ length: n }, (_, i) => (i === 7 ? NaN : 0.5 + rng.next() / 2));
  const lc = Uint8Array.from({ length: n }, (_, i) => (i === 3 ? 1 : i === 4 ? 2 : 0));
  const draws = 120;
  const wd = drawWeights([0.5, 0.3, 0.2], { kind: "uniform", spread: 0.4 }, draws, new Mulberry32(5));
  const t = 0.3;

  it("P(high), mean and spread equal a direct computation that keeps every draw, in one block or several", () => {
    const cps = convergenceCheckpoints(draws);
    const one = createAccumulators(n);
    const conv1 = new Float64Array(cps.length * CONVERGENCE_FIELDS);
    accumulateDraws({ scores, preservation: pres, landClass: lc, weights: wd.weights, from: 0, to: draws, threshold: t, checkpoints: cps }, one, 0, n, conv1, new Float64Array(k));
    const split = createAccumulators(n);
    const conv2 = new Float64Array(cps.length * CONVERGENCE_FIELDS);
    for (const [a, b] of [[0, 17], [17, 60], [60, 120]])
      for (const [s, e] of [[0, 20], [20, 50]]) accumulateDraws({ scores, preservation: pres, landClass: lc, weights: wd.weights, from: a, to: b, threshold: t, checkpoints: cps }, split, s, e, conv2, new Float64Array(k));
    const r1 = summariseCells(one, draws);
    const r2 = summariseCells(split, draws);
    for (let i = 0; i < n; i++) {
      const vals: number[] = [];
      if (lc[i] === 0 || lc[i] === 2) if (pres[i] === pres[i])
        for (let d = 0; d < draws; d++) {
          let occ = 0;
          for (let f = 0; f < k; f++) occ += wd.weights[d * k + f] * scores[f][i];
          vals.push(Math.fround(Math.fround(occ) * pres[i]));
        }
      if (!vals.length) {
        expect(r1.pHigh[i]).toBeNaN();
        expect(r2.mean[i]).toBeNaN();
        continue;
      }
      // (formula) p = #(v ≥ t)/draws; mean; sample sd √(Σ(v − m)²/(N − 1))
      const p = vals.filter((v) => v >= Math.fround(t)).length / draws;
      const m = vals.reduce((a, b) => a + b, 0) / vals.length;
      const sd = Math.sqrt(vals.reduce((a, b) => a + (b - m) ** 2, 0) / (vals.length - 1));
      expect(r1.pHigh[i]).toBeCloseTo(p, 6);
      expect(r2.pHigh[i]).toBeCloseTo(p, 6);
      expect(r1.mean[i]).toBeCloseTo(m, 6);
      expect(r2.mean[i]).toBeCloseTo(m, 6);
      expect(r1.spread[i]).toBeCloseTo(sd, 6);
      expect(r2.spread[i]).toBeCloseTo(sd, 6);
    }
    expect(Array.from(conv2)).toEqual(Array.from(conv1));
    const last = (cps.length - 1) * CONVERGENCE_FIELDS;
    let robust = 0;
    for (let i = 0; i < n; i++) if (r1.pHigh[i] >= 0.8) robust++;
    expect(conv1[last]).toBe(robust);
  });

  it("per-block robust high, contested and robust low shares count the cells directly", () => {
    const p = Float32Array.of(0.9, 0.8, 0.5, 0.2, 0.1, NaN, 1);
    const mean = Float32Array.of(0.8, 0.7, 0.4, 0.2, 0.1, NaN, 0.9);
    const ids = Int32Array.of(1, 1, 1, 2, 2, 2, 0);
    const [b1, b2] = blockShares(p, mean, ids, 2);
    expect(b1).toMatchObject({ cells: 3, blockCells: 3, robustHigh: 2, contested: 1, robustLow: 0 });
    expect(b1.robustHighShare).toBeCloseTo(2 / 3, 12);
    expect(b2).toMatchObject({ cells: 2, blockCells: 3, robustHigh: 0, contested: 0, robustLow: 2, robustLowShare: 1 });
    expect(b2.meanPotential).toBeCloseTo(0.15, 6);
  });
});

describe("variance-based indices", () => {
  it("a factor whose scores are the same on every cell explains nothing; the others explain the variance", () => {
    const m = 300;
    const rng = new Mulberry32(2);
    const s1 = Float32Array.from({ length: m }, () => rng.next());
    const s2 = Float32Array.from({ length: m }, () => rng.next());
    // (formula) with uniform multipliers and k = 2 the output depends on u1/u2 only: both matter
    const r = weightVarianceIndices([0.5, 0.5], { kind: "uniform", spread: 0.5 }, [s1, s2], null, 0.5, 256, new Mulberry32(9));
    expect(r.variance).toBeGreaterThan(0);
    expect(r.total[0]).toBeGreaterThan(0.2);
    expect(r.total[1]).toBeGreaterThan(0.2);
  });
});

// A tiny reconstruction: every static factor's layer holds its scores directly (identity curves).
function tinyRun(values: Record<string, number[]>, weights: Partial<Record<FactorId, number>>, landClass: number[]) {
  const n = landClass.length;
  const content: WeightSetContent = defaultWeightSetContent();
  content.preservation.enabled = false;
  content.factors = Object.entries(weights).map(([factor, weight]) => ({ factor: factor as FactorId, weight: weight!, curve: { kind: "linear", direction: "increasing", zeroUntil: 0, fullAt: 1 } }));
  const layers = new Map<string, LayerData>();
  layers.set("land_class@5", { kind: "values", values: Float32Array.from(landClass) });
  for (const [name, v] of Object.entries(values)) layers.set(`${name}@null`, { kind: "values", values: Float32Array.from(v) });
  const grid = { width: n, height: 1, cellSizeX: 100, cellSizeY: 100, originX: 0, originY: 0 };
  return { content, grid, get: (name: string, age: number | null) => layers.get(`${name}@${age}`) };
}

describe("runUncertainty", () => {
  it("OAT through the uncertainty path: 4×4 AHP weights, scores (0.9, 0.6, 1.0, 0.3): w1 −20 % → 0.759033, +20 % → 0.803401", async () => {
    // (formula) check-values.md, weight sensitivity (Chen, Yu & Khan 2010)
    const w = ahpWeights(matrixFromUpperTriangle(4, [2, 3, 5, 2, 3, 2])).weights;
    const { content, grid, get } = tinyRun({ slope: [0.9], tpi: [0.6], time_near_coast: [1.0], flooding_age: [0.3] }, { slope: w[0], tpi: w[1], time_near_coast: w[2], flooding_age: w[3] }, [0]);
    const r = await runUncertainty(content, grid, [5], { kind: "age", ageKa: 5 }, get, [], null, { draws: 50, seed: 1, perturbation: { kind: "dirichlet", concentration: 50 }, landscape: NO_LANDSCAPE_SPREAD, landscapeDraws: 1, threshold: 0.75 }, inlineBlockRunner);
    expect(r.basePotential[0]).toBeCloseTo(0.781217, 5); // (formula) check-values.md 4×4 AHP weighted sum
    const f1 = r.oat.factors[0];
    expect(f1.meanScore[0]).toBeCloseTo(0.759033, 5);
    expect(f1.meanScore[40]).toBeCloseTo(0.803401, 5);
  });

  it("P(high) is exactly 0 or 1 where no weights can change the class", async () => {
    // (formula) all scores 1 → potential 1 ≥ 0.5 in every draw; all 0 → never; sea → no score
    const { content, grid, get } = tinyRun({ slope: [1, 0, 1, 0.9], tpi: [1, 0, 1, 0.1] }, { slope: 1, tpi: 1 }, [0, 0, 1, 0]);
    const r = await runUncertainty(content, grid, [5], { kind: "age", ageKa: 5 }, get, [], null, { draws: 300, seed: 3, perturbation: { kind: "dirichlet", concentration: 2 }, landscape: NO_LANDSCAPE_SPREAD, landscapeDraws: 1, threshold: 0.5 }, inlineBlockRunner);
    expect(r.pHigh[0]).toBe(1);
    expect(r.pHigh[1]).toBe(0);
    expect(r.pHigh[2]).toBeNaN();
    expect(r.pHigh[3]).toBeGreaterThan(0);
    expect(r.pHigh[3]).toBeLessThan(1);
    expect(r.spread[0]).toBe(0);
    const again = await runUncertainty(content, grid, [5], { kind: "age", ageKa: 5 }, get, [], null, { draws: 300, seed: 3, perturbation: { kind: "dirichlet", concentration: 2 }, landscape: NO_LANDSCAPE_SPREAD, landscapeDraws: 1, threshold: 0.5 }, inlineBlockRunner);
    expect(Array.from(again.pHigh)).toEqual(Array.from(r.pHigh));
    expect(Array.from(again.mean)).toEqual(Array.from(r.mean));
  });
});

describe("landscapeDraw", () => {
  // 1 × 6 strip: spill rises inland; sea level −10 m, tidal range 2 m; one lake cell
  const base: LandscapeBase = {
    width: 6, height: 1, cellSizeX: 100, cellSizeY: 100,
    landClass: Uint8Array.of(1, 1, 2, 0, 3, 255),
    spill: Float32Array.of(-20, -12, -10, -5, 2, NaN),
    seaLevelM: -10, sigmaM: 3, tidalRangeM: 2, shorelineTidalLevel: 0,
    coverThickness: Float32Array.of(NaN, NaN, NaN, 2, NaN, NaN),
    contributingArea: null, streamThresholdKm2: 1,
  };
  it("with σ = 0 and no offset reproduces the base map", () => {
    const out = createLandscapeOut(6, { shoreline: true, streams: false });
    landscapeDraw(base, { seaLevelZ: 1.5, datumOffsetM: 0, velocityRatio: 1, streamThresholdKm2: 1, erosionDepthM: 10 }, 0, out, { shoreline: false, streams: false });
    expect(Array.from(out.landClass)).toEqual(Array.from(base.landClass));
    expect(Array.from(out.heightShift.subarray(0, 5))).toEqual([0, 0, 0, 0, 0]);
  });
  it("sea level + 1σ applies the land_class rule at the new level; the shoreline distance follows", () => {
    // (formula) docs/layers.md land_class: sea if s ≤ L − R/2, intertidal if ≤ L + R/2 — L = −7: −5 > −6 → land (lake stays lake)
    const out = createLandscapeOut(6, { shoreline: true, streams: false });
    landscapeDraw(base, { seaLevelZ: 1, datumOffsetM: 0, velocityRatio: 1, streamThresholdKm2: 1, erosionDepthM: 10 }, 1, out, { shoreline: true, streams: false });
    expect(Array.from(out.landClass)).toEqual([1, 1, 1, 0, 3, 255]);
    expect(out.heightShift[0]).toBe(-3);
    // shoreline at mean sea level −7: cells 0–2 sea, cell 3 is the shoreline
    expect(Array.from(out.distShoreline!.subarray(0, 5))).toEqual([300, 200, 100, 0, 100]);
    // the velocity +50 % deepens the horizon under 2 m of cover by 1 m: −5 → −6 ≤ L + R/2 = −6 → intertidal
    landscapeDraw(base, { seaLevelZ: 1, datumOffsetM: 0, velocityRatio: 1.5, streamThresholdKm2: 1, erosionDepthM: 10 }, 1, out, { shoreline: false, streams: false });
    expect(out.landClass[3]).toBe(2);
    expect(out.heightShift[3]).toBe(-4);
  });
});
