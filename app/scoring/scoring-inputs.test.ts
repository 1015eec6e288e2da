import { describe, expect, it } from "vitest";
import { buildScoringInputs, classLayer, createScoringCache, geometryVertices, horizonEvidencePoints, scoredAges, scoreTarget, type LayerSource } from "./scoring-inputs.ts";
import { defaultWeightSetContent, type WeightSetContent } from "./weight-set.ts";
import { potentialChecksum, type LayerData } from "./potential.ts";
import { quantise } from "../raster-display.ts";
import { prng } from "../terrain/test-utils.ts";
import { ScoringInputError } from "./errors.ts";

// A small synthetic landscape (invented): a 24 × 16 grid, sea in the east that advances with age,
// a stream down the middle, slopes and TPI from a seeded generator.
const W = 24;
const H = 16;
const N = W * H;
const grid = { width: W, height: H, cellSizeX: 50, cellSizeY: 50, originX: 1000, originY: 9000 };
const AGES = [14, 12, 10];

function world() {
  const rnd = prng(7);
  const layers = new Map<string, Float32Array>();
  const put = (name: string, age: number | null, f: (col: number, row: number, i: number) => number) => {
    const a = new Float32Array(N);
    for (let i = 0; i < N; i++) a[i] = f(i % W, Math.floor(i / W), i);
    layers.set(`${name}@${age ?? "static"}`, a);
  };
  for (const age of AGES) {
    const coast = 8 + age; // sea from this column eastwards: more land at older ages
    put("land_class", age, (c) => (c >= coast ? 1 : c === coast - 1 ? 2 : 0));
    put("dist_stream", age, (c) => Math.abs(c - 6) * 50);
    put("dist_shoreline", age, (c) => (c >= coast ? NaN : (coast - 1 - c) * 50));
    put("height_above_sea", age, (c) => (coast - c) * 1.5);
  }
  put("slope", null, () => rnd() * 10);
  put("tpi", null, () => rnd() * 8 - 4);
  put("rise_rate_at_flooding", null, (c) => (c >= 18 ? 10 + rnd() * 5 : NaN));
  put("flooding_age", null, (c) => (c >= 18 ? 10 + (c - 18) * 0.5 : NaN));
  put("flooding_status", null, (c) => (c >= 18 ? 1 : 0));
  put("unassessed", null, (_c, r) => (r < 3 ? 1 : 0));
  return layers;
}

function source(layers: Map<string, Float32Array>, form: "values" | "codes", seen?: Set<string>): LayerSource {
  const coded = new Map<string, LayerData>();
  return (layer, age) => {
    const key = `${layer}@${age ?? "static"}`;
    seen?.add(key);
    const v = layers.get(key);
    if (!v) return undefined;
    if (form === "values") return { kind: "values", values: v };
    let d = coded.get(key);
    if (!d) {
      const q = quantise(v, "NaN", 8);
      d = { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
      coded.set(key, d);
    }
    return d;
  };
}

function content(): WeightSetContent {
  const c = defaultWeightSetContent();
  c.factors = c.factors.map((f) => ({ ...f, weight: ["dist_stream", "dist_shoreline", "slope", "height_above_sea", "shelter"].includes(f.factor) ? f.weight || 1 : 0 }));
  c.periods = [{ name: "Middle", youngKa: 11, oldKa: 13, rule: "zero" }];
  return c;
}

describe("classLayer", () => {
  it("rounds class values and maps nodata to 255, from values or from 8-bit codes alike", () => {
    const v = Float32Array.from([0, 1, 2, 3, NaN]);
    const q = quantise(v, "NaN", 8);
    expect([...classLayer({ kind: "values", values: v })]).toEqual([0, 1, 2, 3, 255]);
    expect([...classLayer({ kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode })]).toEqual([0, 1, 2, 3, 255]);
  });
});

describe("horizon evidence from cores and interpretations (design §4)", () => {
  it("reads intact and truncated only from cores that reached the horizon; a refusal says nothing", () => {
    const pts = horizonEvidencePoints(
      [
        { x: 1, y: 1, horizonReached: "yes", preservedLandSurface: "yes" },
        { x: 2, y: 2, horizonReached: "yes", preservedLandSurface: "no" },
        { x: 3, y: 3, horizonReached: "refused", preservedLandSurface: "no" },
        { x: 4, y: 4, horizonReached: "yes", preservedLandSurface: "unknown" },
        { x: 5, y: 5, horizonReached: null, preservedLandSurface: "yes" },
      ],
      [
        { kind: "peat_reflector", coordinates: [[10, 10], [11, 11]] },
        { kind: "gas_blanking", coordinates: [[20, 20]] },
      ],
    );
    expect(pts).toEqual([
      { x: 1, y: 1, state: "intact" },
      { x: 2, y: 2, state: "truncated" },
      { x: 10, y: 10, state: "intact" },
      { x: 11, y: 11, state: "intact" },
    ]);
  });

  it("flattens any GeoJSON geometry into its vertices", () => {
    expect(geometryVertices({ type: "Point", coordinates: [1, 2] })).toEqual([[1, 2]]);
    expect(geometryVertices({ type: "MultiPolygon", coordinates: [[[[0, 0], [1, 0], [1, 1], [0, 0]]]] })).toHaveLength(4);
    expect(geometryVertices({ type: "GeometryCollection", geometries: [{ type: "Point", coordinates: [5, 6] }, { type: "LineString", coordinates: [[1, 1], [2, 2]] }] })).toHaveLength(3);
    expect(geometryVertices(null)).toEqual([]);
  });
});

describe("scoreTarget", () => {
  const layers = world();

  it("gives the same checksum on the same 8-bit codes every time (the worker and the job's display check agree)", () => {
    const a = scoreTarget(content(), grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "codes"), []);
    const b = scoreTarget(content(), grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "codes"), []);
    expect(potentialChecksum(a.potential)).toBe(potentialChecksum(b.potential));
    expect(a.preservation.active).toBe(true);
  });

  it("with a cache (the worker's) gives exactly what it gives without one, call after call", () => {
    const cache = createScoringCache();
    const get = source(layers, "codes");
    const c1 = content();
    const c2 = content();
    c2.factors = c2.factors.map((f) => (f.factor === "slope" ? { ...f, weight: 7 } : f));
    for (const c of [c1, c2, c1]) {
      const plain = potentialChecksum(scoreTarget(c, grid, AGES, { kind: "age", ageKa: 12 }, get, []).potential);
      const cached = potentialChecksum(scoreTarget(c, grid, AGES, { kind: "age", ageKa: 12 }, get, [], cache).potential);
      expect(cached).toBe(plain);
    }
    const c3 = content();
    c3.preservation = { ...c3.preservation, evidenceRadiusM: 500 };
    const ev = [{ x: 1000 + 25, y: 9000 - 5 * 50 - 25, state: "intact" as const }];
    // a change of preservation settings is not served from the cache
    expect(potentialChecksum(scoreTarget(c3, grid, AGES, { kind: "age", ageKa: 12 }, get, ev, cache).potential)).toBe(potentialChecksum(scoreTarget(c3, grid, AGES, { kind: "age", ageKa: 12 }, get, ev).potential));
  });

  it("on 8-bit codes stays within the quantisation error of the full-precision values", () => {
    const c = content();
    const exact = scoreTarget(c, grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "values"), []);
    const coded = scoreTarget(c, grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "codes"), []);
    let compared = 0;
    for (let i = 0; i < N; i++) {
      expect(Number.isNaN(coded.potential[i])).toBe(Number.isNaN(exact.potential[i]));
      if (Number.isNaN(exact.potential[i])) continue;
      // (formula) each layer's code step is (max − min)/254; through curves of slope ≤ 1/(span) the
      // score moves by well under 0.05 per half step for these layers
      expect(Math.abs(coded.potential[i] - exact.potential[i])).toBeLessThan(0.05);
      compared++;
    }
    expect(compared).toBeGreaterThan(50);
  });

  it("reads factor layers only at the ages a period weighs, and land classes at every age", () => {
    const c = content();
    const period = c.periods[0];
    // (decision 401) ages 10, 12, 14 stand for 9–11, 11–13, 13–15: the window 11–13 weighs only 12 ka
    expect(scoredAges({ kind: "period", period }, AGES)).toEqual([12]);
    const seen = new Set<string>();
    const r = scoreTarget(c, grid, AGES, { kind: "period", period }, source(layers, "values", seen), []);
    expect(seen.has("dist_stream@12")).toBe(true);
    expect(seen.has("dist_stream@14")).toBe(false);
    expect(seen.has("dist_stream@10")).toBe(false);
    for (const a of AGES) expect(seen.has(`land_class@${a}`)).toBe(true);
    // one age of weight 1: the period equals that age ("zero" rule, decision 401)
    const single = scoreTarget(c, grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "values"), []);
    expect(potentialChecksum(r.potential)).toBe(potentialChecksum(single.potential));
  });

  it("turns preservation off, with the reason, when it is disabled or the reconstruction has no horizon", () => {
    const off = content();
    off.preservation.enabled = false;
    const r = scoreTarget(off, grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "values"), []);
    expect(r.preservation.active).toBe(false);
    expect(r.preservation.reason).toMatch(/switched off/);
    const noHorizon: LayerSource = (layer, age) => (layer === "unassessed" ? undefined : source(layers, "values")(layer, age));
    const r2 = scoreTarget(content(), grid, AGES, { kind: "age", ageKa: 12 }, noHorizon, []);
    expect(r2.preservation.active).toBe(false);
    expect(r2.preservation.reason).toMatch(/no buried-horizon data/);
  });

  it("keeps unassessed cells out of the potential and marks them (never low)", () => {
    const r = scoreTarget(content(), grid, AGES, { kind: "age", ageKa: 12 }, source(layers, "values"), []);
    // row 0–2 are unassessed (world()); land cells there are NaN in the potential and flagged
    expect(r.unassessed[0]).toBe(1);
    expect(Number.isNaN(r.potential[0])).toBe(true);
    expect(r.unassessed[5 * W]).toBe(0);
    expect(Number.isNaN(r.potential[5 * W])).toBe(false);
  });

  it("refuses an age the reconstruction does not have, naming its ages", () => {
    expect(() => scoreTarget(content(), grid, AGES, { kind: "age", ageKa: 11 }, source(layers, "values"), [])).toThrow(ScoringInputError);
    expect(() => scoreTarget(content(), grid, AGES, { kind: "age", ageKa: 11 }, source(layers, "values"), [])).toThrow(/14, 12, 10 ka/);
  });

  it("rasterises evidence points only when preservation can use them", () => {
    const { preservation } = buildScoringInputs(content(), grid, AGES, [12], source(layers, "values"), [{ x: 1000 + 25, y: 9000 - 25, state: "truncated" }]);
    expect(preservation?.evidence?.[0]).toBe(2);
  });
});
