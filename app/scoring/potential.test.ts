import { describe, expect, it } from "vitest";
import {
  createPreservationCache,
  createScoreScratch,
  potentialChecksum,
  preservationModel,
  scoreAge,
  scorePeriod,
  type AgeInputs,
  type GridShape,
  type LayerData,
  type PreservationInputs,
  type PreservationResult,
} from "./potential.ts";
import { defaultWeightSetContent, type FactorSetting, type WeightSetContent } from "./weight-set.ts";
import type { FactorCurve } from "./factor-curves.ts";
import type { FactorId } from "./factors.ts";
import { shelterIndex } from "./shelter.ts";
import { ScoringInputError } from "./errors.ts";
import { quantise } from "../raster-display.ts";
import { prng } from "../terrain/test-utils.ts";

const f32 = (...v: number[]) => Float32Array.from(v);
const vals = (...v: number[]): LayerData => ({ kind: "values", values: f32(...v) });
const OFF: PreservationResult = { active: false, reason: "off", score: null, unassessed: null };
const lin = (fullUntil: number, zeroAt: number): FactorCurve => ({ kind: "linear", direction: "decreasing", fullUntil, zeroAt });

function content(factors: FactorSetting[], patch: Partial<WeightSetContent> = {}): WeightSetContent {
  return { ...defaultWeightSetContent(), factors, ...patch };
}

describe("scoreAge", () => {
  const grid: GridShape = { width: 6, height: 1, cellSizeX: 25, cellSizeY: 25 };
  // land, sea, intertidal, lake, nodata, land (with a nodata slope)
  const landClass = Uint8Array.from([0, 1, 2, 3, 255, 0]);

  it("is the weighted sum of the factor curves over land and intertidal cells (check-values 4×4 AHP sum)", () => {
    // weights: check-values.md 4×4 AHP example (formula); scores chosen through linear curves:
    // (formula) stream 100 m on 0–1000 m → 0.9; shoreline 400 m on 0–1000 m → 0.6; slope 1° with full
    // until 2° → 1.0; height 7 m on 0–10 m → 0.3. Σ w·s = 0.781217 (check-values.md, formula).
    const c = content([
      { factor: "dist_stream", weight: 0.482886, curve: lin(0, 1000) },
      { factor: "dist_shoreline", weight: 0.271974, curve: lin(0, 1000) },
      { factor: "slope", weight: 0.15699, curve: lin(2, 15) },
      { factor: "height_above_sea", weight: 0.08815, curve: lin(0, 10) },
      { factor: "tpi", weight: 0, curve: lin(0, 10) }, // weight 0: its layer may be absent
    ]);
    const age: AgeInputs = {
      ageKa: 12,
      landClass,
      layers: {
        dist_stream: vals(100, 100, 100, 100, NaN, 100),
        dist_shoreline: vals(400, 400, 400, 400, NaN, 400),
        slope: vals(1, 1, 1, 1, NaN, NaN),
        height_above_sea: vals(7, 7, 7, 7, NaN, 7),
      },
    };
    const r = scoreAge(c, grid, age, OFF);
    expect(r.occupation[0]).toBeCloseTo(0.781217, 6);
    expect(r.occupation[2]).toBeCloseTo(0.781217, 6); // intertidal is occupiable (design §4)
    expect(r.occupation[1]).toBeNaN(); // sea
    expect(r.occupation[3]).toBeNaN(); // lake
    expect(r.occupation[4]).toBeNaN(); // nodata
    expect(r.occupation[5]).toBeNaN(); // a missing factor is not read as a poor one
    expect(Array.from(r.potential)).toEqual(Array.from(r.occupation)); // preservation off
    expect(Array.from(r.unassessed)).toEqual([0, 0, 0, 0, 0, 0]);
    expect(r.notes).toEqual([]);
  });

  it("applies the check-values factor curves", () => {
    // (formula) check-values.md: at 750 m with c = 500, d = 2000 → linear 0.8333, sigmoid 0.9330, J-shaped 0.9730
    const one = (curve: FactorCurve) =>
      scoreAge(content([{ factor: "dist_stream", weight: 1, curve }]), { width: 1, height: 1, cellSizeX: 1, cellSizeY: 1 }, {
        ageKa: 10,
        landClass: Uint8Array.from([0]),
        layers: { dist_stream: vals(750) },
      }, OFF).occupation[0];
    expect(one(lin(500, 2000))).toBeCloseTo(0.8333, 4);
    expect(one({ kind: "sigmoid", direction: "decreasing", fullUntil: 500, zeroAt: 2000 })).toBeCloseTo(0.933, 4);
    expect(one({ kind: "j-shaped", direction: "decreasing", fullUntil: 500, halfAt: 2000 })).toBeCloseTo(0.973, 4);
  });

  it("scores an absent or empty distance layer as far away, and leaves out other absent factors (with notes)", () => {
    const g1: GridShape = { width: 2, height: 1, cellSizeX: 25, cellSizeY: 25 };
    const lc = Uint8Array.from([0, 0]);
    const c = content([
      { factor: "slope", weight: 1, curve: lin(0, 10) },
      { factor: "dist_lake_margin", weight: 1, curve: { kind: "j-shaped", direction: "decreasing", fullUntil: 100, halfAt: 1000 } },
    ]);
    // (formula) slope 2° → 0.8; no lake margin: J-shaped curve at +∞ → 0; (0.8 + 0) / 2 = 0.4
    for (const layers of [{ slope: vals(2, 2) }, { slope: vals(2, 2), dist_lake_margin: vals(NaN, NaN) }]) {
      const r = scoreAge(c, g1, { ageKa: 12, landClass: lc, layers }, OFF);
      expect(r.occupation[0]).toBeCloseTo(0.4, 6);
      expect(r.notes).toEqual(["No lake margin at 12 ka: distance to a lake margin is scored as far away (0) everywhere."]);
    }
    // the same through 8-bit codes, all nodata (quantise() of an all-NaN layer)
    const q = quantise(f32(NaN, NaN), "NaN", 8);
    const coded = scoreAge(c, g1, { ageKa: 12, landClass: lc, layers: { slope: vals(2, 2), dist_lake_margin: { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode } } }, OFF);
    expect(coded.occupation[1]).toBeCloseTo(0.4, 6);

    // (formula) slope absent (weight 3) is left out: only the stream remains, 100 m on 0–1000 m → 0.9
    const c2 = content([
      { factor: "dist_stream", weight: 1, curve: lin(0, 1000) },
      { factor: "slope", weight: 3, curve: lin(0, 10) },
    ]);
    const r2 = scoreAge(c2, g1, { ageKa: 9.5, landClass: lc, layers: { dist_stream: vals(100, 1000) } }, OFF);
    expect(r2.occupation[0]).toBeCloseTo(0.9, 6);
    expect(r2.occupation[1]).toBeCloseTo(0, 6);
    expect(r2.notes).toEqual(["No data for slope at 9.5 ka: it is left out and the other weights are rescaled to sum 1."]);

    // nothing with a weight above 0 left
    const c3 = content([{ factor: "slope", weight: 1, curve: lin(0, 10) }]);
    expect(() => scoreAge(c3, g1, { ageKa: 12, landClass: lc, layers: {} }, OFF)).toThrow(/Nothing to score at 12 ka/);
  });

  it("refuses negative, NaN and all-zero weights and layers of the wrong size, naming the factor", () => {
    const g1: GridShape = { width: 2, height: 1, cellSizeX: 25, cellSizeY: 25 };
    const age: AgeInputs = { ageKa: 12, landClass: Uint8Array.from([0, 0]), layers: { slope: vals(1, 2) } };
    expect(() => scoreAge(content([{ factor: "slope", weight: -1, curve: lin(0, 10) }]), g1, age, OFF)).toThrow(/"Slope" is negative/);
    expect(() => scoreAge(content([{ factor: "slope", weight: NaN, curve: lin(0, 10) }]), g1, age, OFF)).toThrow(/"Slope" is not a number/);
    expect(() => scoreAge(content([{ factor: "slope", weight: 0, curve: lin(0, 10) }]), g1, age, OFF)).toThrow(/All weights are zero/);
    expect(() => scoreAge(content([{ factor: "slope", weight: 1, curve: lin(10, 0) }]), g1, age, OFF)).toThrow(/^Slope: .*"zeroAt"/);
    expect(() =>
      scoreAge(content([{ factor: "slope", weight: 1, curve: lin(0, 10) }]), g1, { ...age, layers: { slope: vals(1) } }, OFF),
    ).toThrow(/slope layer has 1 cells; the grid has 2/);
  });

  it("scores the shelter factor from the land class at the age", () => {
    const g: GridShape = { width: 3, height: 3, cellSizeX: 100, cellSizeY: 100 };
    const lc = Uint8Array.from([0, 0, 0, 0, 0, 0, 0, 1, 0]);
    const c = content([{ factor: "shelter", weight: 1, curve: { kind: "linear", direction: "increasing", zeroUntil: 0, fullAt: 1 } }], { shelterRadiusM: 100 });
    const r = scoreAge(c, g, { ageKa: 12, landClass: lc, layers: {} }, OFF);
    // (formula) centre: 8 of 9 cells not sea → 8/9 through the identity curve
    expect(r.occupation[4]).toBeCloseTo(8 / 9, 6);
    expect(r.occupation[7]).toBeNaN();
    expect(Array.from(r.occupation).filter((v) => !Number.isNaN(v))).toEqual(
      Array.from(shelterIndex(lc, g, 100)).filter((_, i) => lc[i] !== 1),
    );
  });
});

// ---- the browser worker (codes) against the job (values) --------------------------------------------

const CURVES: { factor: FactorId; curve: FactorCurve; span: number; lipschitz: number }[] = [
  // lipschitz: the largest slope of the curve (formula) — linear 1/L, sigmoid cos² π/(2L),
  // J-shaped 1/(1 + u²): 3√3/(8L), aspect cos²(π/2·δ/w): π/(2w)
  { factor: "dist_stream", curve: { kind: "j-shaped", direction: "decreasing", fullUntil: 100, halfAt: 800 }, span: 5000, lipschitz: (3 * Math.sqrt(3)) / 8 / 700 },
  { factor: "dist_shoreline", curve: { kind: "sigmoid", direction: "decreasing", fullUntil: 200, zeroAt: 3000 }, span: 8000, lipschitz: Math.PI / 2 / 2800 },
  { factor: "slope", curve: lin(2, 15), span: 30, lipschitz: 1 / 13 },
  { factor: "aspect", curve: { kind: "aspect", preferredDeg: 0, widthDeg: 135, flatValue: 0.7 }, span: 359.9, lipschitz: Math.PI / 2 / 135 },
  { factor: "tpi", curve: { kind: "band", shape: "linear", zeroUntil: -8, fullAt: -1, fullUntil: 3, zeroAt: 10 }, span: 40, lipschitz: 1 / 7 },
  { factor: "height_above_sea", curve: lin(5, 60), span: 100, lipschitz: 1 / 55 },
];

function randomAge(size: number, seed: number): { grid: GridShape; age: AgeInputs; c: WeightSetContent } {
  const rnd = prng(seed);
  const n = size * size;
  const grid: GridShape = { width: size, height: size, cellSizeX: 50, cellSizeY: 40 };
  const landClass = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const u = rnd();
    landClass[i] = u < 0.55 ? 0 : u < 0.8 ? 1 : u < 0.88 ? 2 : u < 0.95 ? 3 : 255;
  }
  const layers: Partial<Record<FactorId, LayerData>> = {};
  for (const { factor, span } of CURVES) {
    const v = new Float32Array(n);
    const off = factor === "tpi" ? -20 : 0;
    for (let i = 0; i < n; i++) v[i] = landClass[i] === 255 || rnd() < 0.02 ? NaN : off + rnd() * span;
    layers[factor] = { kind: "values", values: v };
  }
  const c = content(
    [...CURVES.map((x, k) => ({ factor: x.factor, weight: 1 + k, curve: x.curve })), { factor: "shelter", weight: 2, curve: { kind: "linear", direction: "increasing", zeroUntil: 0.4, fullAt: 0.8 } }],
    { shelterRadiusM: 200 },
  );
  return { grid, age: { ageKa: 12, landClass, layers }, c };
}

function asCodes(age: AgeInputs, bits: 8 | 16): AgeInputs {
  const layers: Partial<Record<FactorId, LayerData>> = {};
  for (const [k, l] of Object.entries(age.layers)) {
    const q = quantise((l as { values: Float32Array }).values, "NaN", bits);
    layers[k as FactorId] = { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
  }
  return { ...age, layers };
}

describe("scoreAge: codes (browser worker) against values (scoring job)", () => {
  it("equals the values path within the 16-bit quantisation error", () => {
    const { grid, age, c } = randomAge(64, 5);
    const direct = scoreAge(c, grid, age, OFF);
    const coded = asCodes(age, 16);
    const viaCodes = scoreAge(c, grid, coded, OFF);
    // (formula) each factor's value moves by at most scale/2 when quantised, so its score by at most
    // lipschitz·scale/2; with the weights normalised (total 1+…+6 + 2 = 23) the sum moves by at most
    // Σ wₖ·lipschitzₖ·scaleₖ/2, plus Float32 rounding. Shelter is the same on both paths.
    let bound = 1e-6;
    CURVES.forEach((x, k) => {
      const scale = (coded.layers[x.factor] as { scale: number }).scale;
      bound += ((1 + k) / 23) * x.lipschitz * (scale / 2);
    });
    let finite = 0;
    let maxErr = 0;
    for (let i = 0; i < direct.occupation.length; i++) {
      const a = direct.occupation[i];
      const b = viaCodes.occupation[i];
      if (Number.isNaN(a)) {
        expect(b).toBeNaN();
        continue;
      }
      finite++;
      maxErr = Math.max(maxErr, Math.abs(a - b));
    }
    expect(finite).toBeGreaterThan(1000);
    expect(maxErr).toBeLessThanOrEqual(bound);
    expect(bound).toBeLessThan(1e-4); // the bound itself is small: 16 bits are plenty

    // mixing both kinds is allowed, and lies between
    const mixed = { ...age, layers: { ...age.layers, slope: coded.layers.slope, tpi: coded.layers.tpi } };
    const viaMixed = scoreAge(c, grid, mixed, OFF);
    for (let i = 0; i < direct.occupation.length; i++) {
      if (Number.isNaN(direct.occupation[i])) expect(viaMixed.occupation[i]).toBeNaN();
      else expect(Math.abs(viaMixed.occupation[i] - direct.occupation[i])).toBeLessThanOrEqual(bound);
    }
  });

  it("gives bit-identical output from codes run twice, with and without a reused scratch", () => {
    const { grid, age, c } = randomAge(48, 9);
    const coded = asCodes(age, 8);
    const a = scoreAge(c, grid, coded, OFF);
    const b = scoreAge(c, grid, coded, OFF);
    const scratch = createScoreScratch(grid);
    const s1 = scoreAge(c, grid, coded, OFF, scratch);
    const sum1 = potentialChecksum(s1.potential);
    const s2 = scoreAge(c, grid, coded, OFF, scratch); // shelter from the cache this time
    expect(s2.potential).toBe(scratch.potential); // no new arrays
    expect(Buffer.from(b.potential.buffer).equals(Buffer.from(a.potential.buffer))).toBe(true);
    expect(Buffer.from(s2.potential.buffer).equals(Buffer.from(a.potential.buffer))).toBe(true);
    expect(potentialChecksum(a.potential)).toBe(sum1);
    expect(potentialChecksum(s2.potential)).toBe(sum1);
  });
});

// ---- preservation ----------------------------------------------------------------------------------

/** Preservation settings isolating components by weight; curves as the defaults. */
function pcontent(wBase: number, wErosion: number, wShelter: number, enabled = true): WeightSetContent {
  const c = defaultWeightSetContent();
  // defaults: base level linear decreasing −2 → 6 m of TPI; erosion depth 10 m, sigmoid decreasing
  // 0.2 → 3 ka; shelter linear increasing 0.3 → 0.8
  c.preservation.enabled = enabled;
  c.preservation.baseLevel.weight = wBase;
  c.preservation.shorefaceErosion.weight = wErosion;
  c.preservation.shelter.weight = wShelter;
  c.shelterRadiusM = 10;
  return c;
}

describe("preservationModel", () => {
  const g6: GridShape = { width: 6, height: 1, cellSizeX: 10, cellSizeY: 10 };
  const lc6 = new Uint8Array(6); // all land: shelter 1 everywhere
  function inputs6(over: Partial<PreservationInputs> = {}): PreservationInputs {
    return {
      tpi: vals(-5, 2, 10, 2, 2, NaN),
      riseRateAtFlooding: vals(12, 2, 50, NaN, NaN, NaN),
      floodingAge: vals(11, 11, 11, NaN, 12, NaN),
      // drowned, drowned, drowned, land at the young end, sea throughout, nodata
      floodingStatus: Uint8Array.from([1, 1, 1, 0, 2, 255]),
      agesKa: [10, 12],
      landClassByAge: [lc6, lc6],
      unassessed: new Uint8Array(6),
      evidence: null,
      ...over,
    };
  }

  it("base level: the curve on TPI (hand-worked)", () => {
    const r = preservationModel(pcontent(1, 0, 0), g6, inputs6());
    // (formula) linear decreasing, full until −2 m, zero at 6 m: −5 → 1; 2 → 1 − (2 + 2)/8 = 0.5; 10 → 0
    expect(r.active).toBe(true);
    expect(r.score![0]).toBeCloseTo(1, 6);
    expect(r.score![1]).toBeCloseTo(0.5, 6);
    expect(r.score![2]).toBeCloseTo(0, 6);
    expect(r.score![5]).toBeNaN(); // nodata
  });

  it("shoreface erosion: the curve on erosion depth / rise rate (hand-worked)", () => {
    const r = preservationModel(pcontent(0, 1, 0), g6, inputs6());
    // (formula) depth 10 m; sigmoid decreasing, full until 0.2 ka, zero at 3 ka:
    // 12 m/ka → 10/12 = 0.83333 ka; t = (0.83333 − 0.2)/2.8 = 0.226190; cos²(π/2 · 0.226190) = 0.878986
    expect(r.score![0]).toBeCloseTo(0.878986, 5);
    // (formula) 2 m/ka → 5 ka ≥ 3 → 0 (slow drowning: planed off)
    expect(r.score![1]).toBeCloseTo(0, 6);
    // (formula) 50 m/ka → 0.2 ka ≤ 0.2 → 1 (drowned fast)
    expect(r.score![2]).toBeCloseTo(1, 6);
    // never drowned in the window → 1; sea throughout → NaN (interfaces.md)
    expect(r.score![3]).toBe(1);
    expect(r.score![4]).toBeNaN();
    expect(r.unassessed![4]).toBe(0); // NaN there is not "unassessed"
  });

  it("shelter at the age nearest the cell's flooding age, a tie going to the older age (hand-worked)", () => {
    // 3×3 grid, 10 m cells, radius 10 m: the centre's window is the whole grid.
    const g: GridShape = { width: 3, height: 3, cellSizeX: 10, cellSizeY: 10 };
    const lcAt10 = Uint8Array.from([1, 1, 1, 0, 0, 0, 0, 0, 1]); // 4 sea → centre 5/9
    const lcAt12 = Uint8Array.from([1, 1, 0, 0, 0, 0, 0, 0, 0]); // 2 sea → centre 7/9
    const lcAt14 = new Uint8Array(9); // no sea → centre 1
    const centre = (floodingAgeKa: number, status = 1) => {
      const fa = new Float32Array(9).fill(13);
      fa[4] = floodingAgeKa;
      const st = new Uint8Array(9).fill(1);
      st[4] = status;
      const r = preservationModel(pcontent(0, 0, 1), g, {
        tpi: { kind: "values", values: new Float32Array(9) },
        riseRateAtFlooding: { kind: "values", values: new Float32Array(9).fill(10) },
        floodingAge: { kind: "values", values: fa },
        floodingStatus: st,
        agesKa: [14, 10, 12], // any order
        landClassByAge: [lcAt14, lcAt10, lcAt12],
        unassessed: new Uint8Array(9),
        evidence: null,
      });
      return r.score![4];
    };
    // (formula) shelter curve linear increasing 0.3 → 0.8: 5/9 → (0.5556 − 0.3)/0.5 = 0.511111;
    // 7/9 → (0.7778 − 0.3)/0.5 = 0.955556; 1 → 1
    expect(centre(10.4)).toBeCloseTo(0.511111, 5); // nearest 10 ka
    expect(centre(12.9)).toBeCloseTo(0.955556, 5); // nearest 12 ka
    expect(centre(13)).toBeCloseTo(1, 6); // midway between 12 and 14: the older, 14 ka
    expect(centre(11)).toBeCloseTo(0.955556, 5); // midway between 10 and 12: the older, 12 ka
    expect(centre(20)).toBeCloseTo(1, 6); // beyond the oldest age: 14 ka
    expect(centre(NaN, 0)).toBeCloseTo(0.511111, 5); // never drowned: the youngest age, 10 ka
  });

  it("combines the components by their normalised weights (hand-worked)", () => {
    // cell 0 of inputs6: base level at TPI −5 → 1, erosion 0.878986, shelter 1 (all land)
    // (formula) weights 1, 1, 2 → 0.25, 0.25, 0.5: 0.25·1 + 0.25·0.878986 + 0.5·1 = 0.969747
    const r = preservationModel(pcontent(1, 1, 2), g6, inputs6());
    expect(r.score![0]).toBeCloseTo(0.969747, 5);
    // (formula) cell 1: 0.25·0.5 + 0.25·0 + 0.5·1 = 0.625
    expect(r.score![1]).toBeCloseTo(0.625, 5);
    // sea throughout: the erosion component is NaN, so the mean is too
    expect(r.score![4]).toBeNaN();
  });

  it("keeps unassessed cells unassessed (NaN, never low) unless evidence decides them", () => {
    const unassessed = Uint8Array.from([1, 1, 1, 0, 0, 0]);
    const evidence = Uint8Array.from([0, 1, 2, 1, 2, 0]);
    const r = preservationModel(pcontent(1, 0, 0), g6, inputs6({ unassessed, evidence }));
    expect(r.score![0]).toBeNaN();
    expect(r.unassessed![0]).toBe(1);
    // evidence overrides the model: intact → 1, truncated → 0, even where the horizon is unmapped
    expect(r.score![1]).toBe(1);
    expect(r.score![2]).toBe(0);
    expect(r.score![3]).toBe(1);
    expect(r.score![4]).toBe(0);
    expect(Array.from(r.unassessed!)).toEqual([1, 0, 0, 0, 0, 0]);

    // in the potential: occupation kept, potential NaN and flagged where occupiable and unassessed
    const c = { ...pcontent(1, 0, 0), factors: [{ factor: "slope" as FactorId, weight: 1, curve: lin(0, 10) }] };
    const s = scoreAge(c, g6, { ageKa: 10, landClass: Uint8Array.from([0, 0, 0, 0, 1, 0]), layers: { slope: vals(2, 2, 2, 2, 2, 2) } }, r);
    expect(s.occupation[0]).toBeCloseTo(0.8, 6);
    expect(s.potential[0]).toBeNaN();
    expect(s.unassessed[0]).toBe(1);
    // (formula) 0.8 × 1 (intact) and 0.8 × 0 (truncated)
    expect(s.potential[1]).toBeCloseTo(0.8, 6);
    expect(s.potential[2]).toBe(0);
    expect(s.potential[4]).toBeNaN(); // sea: not occupiable
    expect(s.unassessed[4]).toBe(0);
  });

  it("reads quantised layers like values", () => {
    const a = preservationModel(pcontent(1, 1, 1), g6, inputs6());
    const i6 = inputs6();
    const code = (l: LayerData): LayerData => {
      const q = quantise((l as { values: Float32Array }).values, "NaN", 16);
      return { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
    };
    const b = preservationModel(pcontent(1, 1, 1), g6, { ...i6, tpi: code(i6.tpi), riseRateAtFlooding: code(i6.riseRateAtFlooding), floodingAge: code(i6.floodingAge) });
    for (let i = 0; i < 6; i++) {
      if (Number.isNaN(a.score![i])) expect(b.score![i]).toBeNaN();
      else expect(Math.abs(b.score![i] - a.score![i])).toBeLessThan(1e-4);
    }
  });

  it("gives the same result with a cache reused across changed settings", () => {
    const cache = createPreservationCache();
    const i6 = inputs6({ landClassByAge: [Uint8Array.from([0, 1, 0, 0, 1, 0]), lc6] });
    const fresh1 = preservationModel(pcontent(1, 1, 1), g6, i6);
    const cached1 = preservationModel(pcontent(1, 1, 1), g6, i6, cache);
    expect(cache.nearest).not.toBeNull();
    expect(cache.shelter.has(i6.landClassByAge[0])).toBe(true);
    const moved = pcontent(1, 2, 3);
    moved.preservation.shelter.curve = { kind: "linear", direction: "increasing", zeroUntil: 0.1, fullAt: 0.9 };
    const cached2 = preservationModel(moved, g6, i6, cache);
    const fresh2 = preservationModel(moved, g6, i6);
    expect(Array.from(cached1.score!)).toEqual(Array.from(fresh1.score!));
    expect(Array.from(cached2.score!)).toEqual(Array.from(fresh2.score!));
    expect(Array.from(cached2.score!)).not.toEqual(Array.from(cached1.score!));
    // a new radius is not served from the cache
    const wider = { ...moved, shelterRadiusM: 30 };
    expect(Array.from(preservationModel(wider, g6, i6, cache).score!)).toEqual(Array.from(preservationModel(wider, g6, i6).score!));
  });

  it("is inactive, saying why, when switched off or without horizon data", () => {
    const off = preservationModel(pcontent(1, 1, 1, false), g6, inputs6());
    expect(off).toMatchObject({ active: false, score: null, unassessed: null });
    expect(off.reason).toMatch(/switched off in this weight set/);
    for (const inp of [null, inputs6({ unassessed: null })]) {
      const none = preservationModel(pcontent(1, 1, 1), g6, inp);
      expect(none).toMatchObject({ active: false, score: null, unassessed: null });
      expect(none.reason).toMatch(/no buried-horizon data/);
    }
    const on = preservationModel(pcontent(1, 1, 1), g6, inputs6());
    expect(on.reason).toMatch(/unassessed, not as low/);
    expect(() => preservationModel(pcontent(0, 0, 0), g6, inputs6())).toThrow(/All weights are zero/);
    expect(() => preservationModel(pcontent(1, 1, 1), g6, inputs6({ floodingStatus: new Uint8Array(5) }))).toThrow(ScoringInputError);
  });
});

// ---- periods ---------------------------------------------------------------------------------------

describe("scorePeriod", () => {
  // decision 401's check: ages 10, 11, 12, 13 ka, window 10.2–12.8 ka, per-age occupation 0.2, 0.5,
  // 0.8 and sea at 13 ka → weights 0.3, 1, 1, 0.3 → "zero" 0.523077, "skip" 0.591304.
  // Occupation through slope, linear decreasing 0 → 10°: slope 8 → 0.2, 5 → 0.5, 2 → 0.8.
  const g: GridShape = { width: 3, height: 1, cellSizeX: 10, cellSizeY: 10 };
  const c = { ...pcontent(1, 0, 0), factors: [{ factor: "slope" as FactorId, weight: 1, curve: lin(0, 10) }] };
  const ages: AgeInputs[] = [
    [10, 8, 0],
    [11, 5, 0],
    [12, 2, 0],
    [13, 2, 1],
  ].map(([ageKa, slope, cls]) => ({
    ageKa,
    // cell 0: the decision's cell; cell 1: the same, but its horizon unassessed; cell 2: sea throughout
    landClass: Uint8Array.from([cls, cls, 1]),
    layers: { slope: vals(slope, slope, slope) },
  }));
  const lc = ages.map((a) => a.landClass);
  // preservation: base level only, TPI 2 m → 0.5 (hand-worked above)
  const pres = preservationModel(c, g, {
    tpi: vals(2, 2, 2),
    riseRateAtFlooding: vals(NaN, NaN, NaN),
    floodingAge: vals(NaN, NaN, NaN),
    floodingStatus: Uint8Array.from([0, 0, 2]),
    agesKa: [10, 11, 12, 13],
    landClassByAge: lc,
    unassessed: Uint8Array.from([0, 1, 0]),
    evidence: null,
  });

  it("holds decision 401's check value end to end, preservation multiplied once", () => {
    const zero = scorePeriod(c, g, { name: "Late", youngKa: 10.2, oldKa: 12.8, rule: "zero" }, ages, pres);
    expect(zero.occupation[0]).toBeCloseTo(0.523077, 6); // (formula) decision 401
    expect(zero.potential[0]).toBeCloseTo(0.523077 * 0.5, 6); // (formula) × preservation 0.5, once
    expect(zero.occupation[1]).toBeCloseTo(0.523077, 6);
    expect(zero.potential[1]).toBeNaN();
    expect(zero.unassessed[1]).toBe(1);
    expect(zero.occupation[2]).toBeNaN();
    expect(zero.unassessed[2]).toBe(0);
    // (formula) 0.3, 1, 1, 0.3 of 2.6 ka
    expect(zero.ageWeights.map((x) => x.ageKa)).toEqual([10, 11, 12, 13]);
    [0.3, 1, 1, 0.3].forEach((w, k) => expect(zero.ageWeights[k].weight).toBeCloseTo(w / 2.6, 12));
    expect(zero.notes).toEqual([]);

    const skip = scorePeriod(c, g, { name: "Late", youngKa: 10.2, oldKa: 12.8, rule: "skip" }, ages, pres);
    expect(skip.occupation[0]).toBeCloseTo(0.591304, 6); // (formula) decision 401
    expect(skip.potential[0]).toBeCloseTo(0.591304 * 0.5, 6);

    const noPres = scorePeriod(c, g, { name: "Late", youngKa: 10.2, oldKa: 12.8, rule: "zero" }, ages, OFF);
    expect(noPres.potential[0]).toBeCloseTo(0.523077, 6);
  });

  it("says when the window reaches past the ages, and refuses one outside them", () => {
    // (formula) ages 10…13 cover 9.5–13.5; a window 9–11 is scored on 9.5–11
    const r = scorePeriod(c, g, { name: "Early", youngKa: 9, oldKa: 11, rule: "zero" }, ages, OFF);
    expect(r.notes).toEqual(['The period "Early" (9–11 ka) reaches past the reconstruction\'s ages: it is scored on 9.5–11 ka only.']);
    // (formula) age 10 stands for 9.5–10.5 (1 ka), 11 for 10.5–11 (0.5 ka): (1·0.2 + 0.5·0.5)/1.5 = 0.3
    expect(r.occupation[0]).toBeCloseTo(0.3, 6);
    expect(() => scorePeriod(c, g, { name: "Far", youngKa: 20, oldKa: 25, rule: "zero" }, ages, OFF)).toThrow(/Period "Far"/);
  });
});

// ---- checksum --------------------------------------------------------------------------------------

describe("potentialChecksum", () => {
  /** FNV-1a 32-bit over bytes, written out from its definition (offset basis 2166136261, prime 16777619) */
  function fnv1a(bytes: Uint8Array): string {
    let h = 2166136261;
    for (const b of bytes) h = Number((BigInt(h ^ b) * 16777619n) & 0xffffffffn);
    return (h >>> 0).toString(16).padStart(8, "0");
  }

  it("is FNV-1a over the layer's little-endian bytes, one spelling of NaN", () => {
    // (memory) the published FNV-1a 32-bit test vectors: "" → 811c9dc5, "a" → e40c292c, "foobar" → bf9cf968
    expect(fnv1a(new Uint8Array())).toBe("811c9dc5");
    expect(fnv1a(new TextEncoder().encode("a"))).toBe("e40c292c");
    expect(fnv1a(new TextEncoder().encode("foobar"))).toBe("bf9cf968");
    const a = f32(0.25, 1, 0.781217, NaN, 0);
    expect(potentialChecksum(a)).toBe(fnv1a(new Uint8Array(a.buffer)));
    expect(potentialChecksum(new Float32Array())).toBe("811c9dc5");
    // another NaN payload and −0 hash like NaN and 0
    const b = f32(0.25, 1, 0.781217, NaN, -0);
    new Uint32Array(b.buffer)[3] = 0xffc00001;
    expect(potentialChecksum(b)).toBe(potentialChecksum(a));
    expect(potentialChecksum(f32(0.25, 1, 0.781218, NaN, 0))).not.toBe(potentialChecksum(a));
    // a view into a larger buffer hashes only its own cells
    const big = f32(9, 0.25, 1, 0.781217, NaN, 0, 9);
    expect(potentialChecksum(big.subarray(1, 6))).toBe(potentialChecksum(a));
  });
});
