import { describe, expect, it } from "vitest";
import { type LayerOut, type Manifest, analysisSurface, inlineAgeRunner, layerStats, reconstruct } from "./reconstruct.ts";
import { workerAgeRunner } from "./reconstruct-worker.ts";
import { TerrainCancelled, TerrainInputError, makeElevationGrid, type GridSpec } from "./grid.ts";
import { defaultGlobalCurve, seaLevelAt } from "./sea-level.ts";
import { CLASS_LAND, CLASS_SEA } from "./flooding.ts";
import { gridHorizon } from "./horizon.ts";
import { prng } from "./test-utils.ts";

const W = 72;
const H = 48;
const spec: GridSpec = { width: W, height: H, originX: 600000, originY: 5400000, cellSizeX: 200, cellSizeY: 150, crs: null };

/** a small shelf: +25 m in the west to −160 m in the east, a valley, a closed hollow, a nodata corner */
function shelf() {
  const rnd = prng(42);
  const z = new Float32Array(W * H);
  for (let r = 0; r < H; r++)
    for (let c = 0; c < W; c++) {
      const u = c / (W - 1);
      const valley = 12 * Math.exp(-(((r - 24 - 4 * Math.sin(c / 9)) / 3) ** 2));
      const hollow = 10 * Math.exp(-(((c - 25) / 4) ** 2 + ((r - 10) / 4) ** 2));
      z[r * W + c] = 25 - 185 * u - valley - hollow + rnd() * 0.3;
    }
  for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) z[r * W + c] = NaN;
  return makeElevationGrid(spec, z).grid;
}

function collect() {
  const layers = new Map<string, LayerOut>();
  const sink = (l: LayerOut) => {
    layers.set(`${l.name}@${l.ageKa ?? "-"}`, l);
  };
  return { layers, sink };
}

const baseInput = () => ({
  seabed: shelf(),
  seaLevel: { kind: "curve" as const, curve: defaultGlobalCurve() },
  agesKa: [8, 20, 12],
  oceanBoundary: { kind: "sides" as const, sides: ["east" as const] },
  tidalRangeM: 2,
  streamThresholdKm2: 0.5,
  tpiRadiusM: 600,
});

const PER_AGE = [
  "land_class", "lake_level", "filled_surface", "flow_direction", "contributing_area", "stream_order",
  "dist_stream", "dist_shoreline", "dist_intertidal", "dist_river_mouth", "dist_confluence", "dist_lake_margin",
  "shoreline", "river_mouths", "confluences", "height_above_sea",
];
const STATIC = ["analysis_surface", "surface_source", "slope", "aspect", "tpi", "hillshade", "spill_elevation", "flooding_age", "time_near_coast"];

describe("reconstruct (inline)", () => {
  let manifest: Manifest;
  const { layers, sink } = collect();
  const progress: number[] = [];

  it("produces every per-age and age-independent layer, oldest age first, with a manifest", async () => {
    manifest = await reconstruct(baseInput(), { sink, onProgress: (f) => progress.push(f) });
    expect(manifest.agesKa).toEqual([20, 12, 8]);
    for (const a of [20, 12, 8]) for (const name of PER_AGE) expect(layers.has(`${name}@${a}`), `${name}@${a}`).toBe(true);
    for (const name of STATIC) expect(layers.has(`${name}@-`), name).toBe(true);
    for (const l of layers.values()) expect(l.data.length).toBe(W * H);
    expect(manifest.layers.length).toBe(layers.size);
    expect(manifest.analysisSurface.kind).toBe("seabed");
    expect(manifest.seaLevel.label).toMatch(/far-field/);
    expect(manifest.ages.map((a) => a.ageKa)).toEqual([20, 12, 8]);
    expect(progress.at(-1)).toBe(1);
    for (let i = 1; i < progress.length; i++) expect(progress[i]).toBeGreaterThanOrEqual(progress[i - 1] - 1e-9);
  });

  it("puts height above sea at surface − RSL(t) and marks land above the high-water spill", () => {
    const surf = layers.get("analysis_surface@-")!.data as Float32Array;
    for (const a of [20, 12, 8]) {
      const has = layers.get(`height_above_sea@${a}`)!.data as Float32Array;
      const L = seaLevelAt(defaultGlobalCurve(), a);
      // (paper, table as transcribed) RSL at 20 / 12 / 8 ka = −131.97 / −62.58 / −12.22 m
      expect(L).toBeCloseTo({ 20: -131.97, 12: -62.58, 8: -12.22 }[a]!, 2);
      // (formula) height above sea = z − RSL(t)
      for (const i of [500, 1500, 3000]) expect(has[i]).toBeCloseTo(surf[i] - L, 4);
      expect(Number.isNaN(has[0])).toBe(true); // nodata corner
    }
  });

  it("floods more of the shelf as the sea rises (20 → 12 → 8 ka)", () => {
    const seaCount = (a: number) => (layers.get(`land_class@${a}`)!.data as Uint8Array).filter((v) => v === CLASS_SEA).length;
    expect(seaCount(20)).toBeLessThan(seaCount(12));
    expect(seaCount(12)).toBeLessThan(seaCount(8));
    const c8 = manifest.ages.find((x) => x.ageKa === 8)!.counts;
    expect(c8.sea).toBe(seaCount(8));
    expect(c8.sea + c8.intertidal + c8.lake + c8.land).toBe(W * H - 9);
  });

  it("gives distance 0 on feature cells and the cell size next to them", () => {
    for (const a of [20, 12, 8]) {
      const order = layers.get(`stream_order@${a}`)!.data as Uint8Array;
      const ds = layers.get(`dist_stream@${a}`)!.data as Float32Array;
      const cls = layers.get(`land_class@${a}`)!.data as Uint8Array;
      let streams = 0;
      for (let i = 0; i < W * H; i++) {
        if (order[i] > 0 && order[i] !== 255) {
          streams++;
          expect(ds[i]).toBe(0);
        } else if (order[i] === 0) expect(ds[i]).toBeGreaterThan(0);
      }
      expect(streams).toBeGreaterThan(0);
      const shore = layers.get(`shoreline@${a}`)!.data as Uint8Array;
      const dsh = layers.get(`dist_shoreline@${a}`)!.data as Float32Array;
      for (let i = 0; i < W * H; i++) if (shore[i] === 1) expect(dsh[i]).toBe(0);
      // (formula) a land cell east or west of a shoreline cell, with no shoreline cell nearer, is
      // one cell width (200 m) away
      let checked = 0;
      for (let r = 1; r < H - 1; r++)
        for (let c = 1; c < W - 1; c++) {
          const i = r * W + c;
          if (shore[i] !== 0 || cls[i] !== CLASS_LAND) continue;
          if (shore[i - 1] === 1 || shore[i + 1] === 1) {
            if (shore[i - W] === 1 || shore[i + W] === 1) continue; // 150 m north/south instead
            expect(dsh[i]).toBeCloseTo(200, 3);
            checked++;
          }
        }
      expect(checked).toBeGreaterThan(0);
    }
  });

  it("refuses ages outside the sea-level model and a non-positive stream threshold", async () => {
    await expect(reconstruct({ ...baseInput(), agesKa: [12, 900] }, { sink: () => {} })).rejects.toThrow(TerrainInputError);
    await expect(reconstruct({ ...baseInput(), agesKa: [12, 900] }, { sink: () => {} })).rejects.toThrow(/age 900 ka is outside/);
    await expect(reconstruct({ ...baseInput(), streamThresholdKm2: 0 }, { sink: () => {} })).rejects.toThrow(/stream threshold/);
  });

  it("stops with TerrainCancelled when asked", async () => {
    let calls = 0;
    await expect(reconstruct(baseInput(), { sink: () => {}, shouldCancel: () => ++calls > 5 })).rejects.toThrow(TerrainCancelled);
  });

  it("uses the buried horizon where it is assessed and says so in the manifest", async () => {
    const input = baseInput();
    // picks along three north–south lines in the west, 3 m below the seabed
    const lineId: string[] = [], x: number[] = [], y: number[] = [], d: number[] = [];
    for (const e of [602050, 602650, 603250])
      for (let yy = 5399990; yy > 5392900; yy -= 20) { lineId.push(String(e)); x.push(e); y.push(yy); d.push(3); }
    const hz = gridHorizon(input.seabed.data, spec, { lineId, x, y, depthBelowSeabedM: d }, { unassessedBeyondM: 400, verticalResolutionM: 0.3 });
    const { layers: l2, sink: s2 } = collect();
    const surveyLines = [{ id: "tie-1", x: [600100, 614300], y: [5396000, 5396000] }];
    const m = await reconstruct({ ...input, agesKa: [12], horizon: { name: "transgressive surface", result: hz }, surveyLines }, { sink: s2 });
    // (formula) the tie line runs along row (5400000 − 5396000)/150 = 26.67 → row 26; a cell in
    // row 20 of the same column lies 6 rows × 150 m = 900 m from it
    const dsl = l2.get("dist_survey_line@-")!.data as Float32Array;
    expect(dsl[26 * W + 30]).toBe(0);
    expect(dsl[20 * W + 30]).toBeCloseTo(900, 3);
    expect(m.analysisSurface.kind).toBe("horizon");
    expect(m.analysisSurface.note).toMatch(/transgressive surface/);
    expect(m.analysisSurface.horizonCells).toBe(hz.assessedCells);
    const surf = l2.get("analysis_surface@-")!.data as Float32Array;
    const src = l2.get("surface_source@-")!.data as Uint8Array;
    const cell = 20 * W + 13; // x = 602700, on the middle line's neighbourhood
    expect(src[cell]).toBe(1);
    expect(surf[cell]).toBe(hz.elevationM[cell]);
    const east = 20 * W + 60; // far from every line: the seabed
    expect(src[east]).toBe(0);
    expect(surf[east]).toBe(input.seabed.data[east]);
    expect(hz.unassessed[east]).toBe(1);
    const un = l2.get("unassessed@-")!.data as Uint8Array;
    expect(un[0]).toBe(255); // nodata corner of the seabed
    expect(un[east]).toBe(1);
    expect(un[cell]).toBe(0);
    expect(l2.has("dist_pick_line@-")).toBe(true);
    const direct = analysisSurface(input.seabed, hz.elevationM);
    expect(direct.horizonCells + direct.seabedCells).toBe(W * H - 9);
  });
});

describe("reconstruct, routing shortcut", () => {
  it("gives the same layers whether interior sea and lake cells are routed or left out", async () => {
    const a = collect();
    const b = collect();
    await reconstruct(baseInput(), { sink: a.sink });
    await reconstruct(baseInput(), { sink: b.sink, runAges: (ctx, ages, emit, control) => inlineAgeRunner({ ...ctx, routeInteriorWater: true }, ages, emit, control) });
    expect(b.layers.size).toBe(a.layers.size);
    for (const [k, la] of a.layers) {
      const lb = b.layers.get(k)!;
      expect(Buffer.from(lb.data.buffer, lb.data.byteOffset, lb.data.byteLength).equals(Buffer.from(la.data.buffer, la.data.byteOffset, la.data.byteLength)), k).toBe(true);
    }
    // the shortcut mattered: at 8 ka much of the grid is open sea
    const cls = a.layers.get("land_class@8")!.data as Uint8Array;
    expect(cls.filter((v) => v === CLASS_SEA).length).toBeGreaterThan((W * H) / 4);
  });
});

describe("reconstruct in worker threads", () => {
  it("gives the same layers as the inline run, ages in parallel", async () => {
    const a = collect();
    const b = collect();
    const mInline = await reconstruct(baseInput(), { sink: a.sink });
    const mWorkers = await reconstruct(baseInput(), { sink: b.sink, runAges: workerAgeRunner({ threads: 2 }) });
    expect([...b.layers.keys()].sort()).toEqual([...a.layers.keys()].sort());
    for (const [k, la] of a.layers) {
      const lb = b.layers.get(k)!;
      expect(Buffer.from(lb.data.buffer, lb.data.byteOffset, lb.data.byteLength).equals(Buffer.from(la.data.buffer, la.data.byteOffset, la.data.byteLength)), k).toBe(true);
    }
    expect(mWorkers.layers.map((l) => `${l.name}@${l.ageKa}`).sort()).toEqual(mInline.layers.map((l) => `${l.name}@${l.ageKa}`).sort());
    expect(mWorkers.ages.map((x) => x.counts)).toEqual(mInline.ages.map((x) => x.counts));
  }, 60000);

  it("stops the workers with TerrainCancelled when asked during the ages", async () => {
    let inAges = false;
    await expect(
      reconstruct(baseInput(), {
        sink: () => {},
        runAges: workerAgeRunner({ threads: 2 }),
        onProgress: (f) => {
          if (f > 0.1) inAges = true;
        },
        shouldCancel: () => inAges,
      }),
    ).rejects.toThrow(TerrainCancelled);
  }, 60000);

  it("stops the threads it started ahead when the reconstruction fails before the ages", async () => {
    const runner = workerAgeRunner({ threads: 2 });
    let warmed = 0;
    let disposed = 0;
    const warmUp = runner.warmUp!;
    const dispose = runner.dispose!;
    runner.warmUp = (jobs) => {
      warmed++;
      warmUp(jobs);
    };
    runner.dispose = () => {
      disposed++;
      dispose();
    };
    // a boundary mask on no valid cell is refused after warmUp, when the spill elevation starts
    const r = reconstruct({ ...baseInput(), oceanBoundary: { kind: "mask", mask: new Uint8Array(W * H) } }, { sink: () => {}, runAges: runner });
    await expect(r).rejects.toThrow(TerrainInputError);
    expect([warmed, disposed]).toEqual([1, 1]);
  }, 60000);

  it("passes a bad input found inside a worker back as TerrainInputError", async () => {
    // reconstruct() checks the threshold itself, so the runner is handed a context that skips that
    // check, to see the worker's own TerrainInputError come back as one
    const r = reconstruct(
      { ...baseInput(), agesKa: [12] },
      { sink: () => {}, runAges: (ctx, ages, emit, control) => workerAgeRunner({ threads: 2 })({ ...ctx, streamThresholdKm2: -1 }, ages, emit, control) },
    );
    await expect(r).rejects.toThrow(TerrainInputError);
    await expect(
      reconstruct({ ...baseInput(), agesKa: [12] }, { sink: () => {}, runAges: (ctx, ages, emit, control) => workerAgeRunner({ threads: 2 })({ ...ctx, streamThresholdKm2: -1 }, ages, emit, control) }),
    ).rejects.toThrow(/stream threshold must be a positive area/);
  }, 60000);

  it("refuses a tidal-range grid with a negative cell, naming the cell", async () => {
    const tidal = new Float32Array(W * H).fill(2);
    tidal[2 * W + 5] = -1;
    await expect(reconstruct({ ...baseInput(), tidalRangeM: tidal }, { sink: () => {} })).rejects.toThrow(/row 2, column 5/);
  });
});

describe("layerStats", () => {
  it("equals a cell-by-cell sum for every layer type and nodata code (formula)", () => {
    const rnd = prng(99);
    const reference = (d: ArrayLike<number>, code: number) => {
      let k = 0;
      let mn = Infinity;
      let mx = -Infinity;
      let sum = 0;
      for (let i = 0; i < d.length; i++) {
        const v = d[i];
        if (Number.isNaN(v) || v === code || !Number.isFinite(v)) continue;
        k++;
        mn = Math.min(mn, v);
        mx = Math.max(mx, v);
        sum += v;
      }
      return k === 0 ? { validCount: 0, min: null, max: null, mean: null } : { validCount: k, min: mn, max: mx, mean: sum / k };
    };
    for (let t = 0; t < 12; t++) {
      const n = 1 + Math.floor(rnd() * 5000);
      const u8 = new Uint8Array(n).map(() => (t % 3 === 0 ? 255 : rnd() < 0.5 ? 0 : Math.floor(rnd() * 256)));
      const i32 = new Int32Array(n).map(() => (rnd() < 0.1 ? -2147483648 : Math.floor((rnd() - 0.5) * 1e6)));
      const f32 = new Float32Array(n).map(() => (rnd() < 0.1 ? NaN : rnd() < 0.05 ? Infinity : (rnd() - 0.5) * 1e3));
      for (const code of [255, 0]) expect(layerStats(u8, code)).toEqual(reference(u8, code));
      expect(layerStats(i32, -2147483648)).toEqual(reference(i32, -2147483648));
      expect(layerStats(f32, "NaN")).toEqual(reference(f32, NaN));
    }
  });
});
