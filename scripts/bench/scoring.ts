/**
 * Live re-scoring benchmark (issue 9): how long the browser's Web Worker takes from a moved weight or
 * control point to a new potential image, measured on Node with the same `app/scoring/` code.
 * Started by run.mjs (`npm run bench`); can be run by hand:
 *   node scripts/run-ts.mjs scripts/bench/scoring.ts [--size 1024] [--runs 20] [--warmup 5]
 *
 * A deterministic synthetic display grid (size², 100 m cells: a 4096² reconstruction at 25 m shown at
 * a quarter) with 8 factor layers as 8-bit codes (quantised as the layer API does,
 * app/raster-display.ts `quantise`). Each measurement is the median of `runs` runs after `warmup`
 * runs:
 *   (a) lookup tables + scoreAge for one age, preservation inactive (buffers reused, as the worker can);
 *   (b) the same with preservation active (its result computed beforehand);
 *   (c) colouring the potential into RGBA through a 256-entry palette;
 * and, for context, the same with 16-bit codes, with the shelter factor, without reused buffers, and
 * the preservation model itself (needed again only when its settings change), without and with its
 * cache, and a moved preservation curve from input to image.
 * Targets: ≤ 50 ms from input to new image for 1024² with 8 factors; aim for 16 ms (one frame).
 * Prints readable lines, then one JSON line.
 */
import { cpus, loadavg, totalmem } from "node:os";
import { reduceToDisplay } from "../../app/raster-display";
import {
  createPreservationCache,
  createScoreScratch,
  preservationModel,
  scoreAge,
  type AgeInputs,
  type GridShape,
  type LayerData,
  type PreservationInputs,
  type PreservationResult,
} from "../../app/scoring/potential.ts";
import { defaultWeightSetContent, type WeightSetContent } from "../../app/scoring/weight-set.ts";
import type { FactorId } from "../../app/scoring/factors.ts";
import { horizonEvidenceGrid } from "../../app/scoring/horizon-evidence.ts";
import { Mulberry32 } from "../../app/scoring/random.ts";
import { quantise } from "../../app/raster-display.ts";

const arg = (k: string, d: string) => {
  const i = process.argv.indexOf(`--${k}`);
  return i >= 0 ? process.argv[i + 1] : d;
};
const size = Number(arg("size", "1024"));
const runs = Number(arg("runs", "20"));
const warmup = Number(arg("warmup", "5"));

const FACTORS: FactorId[] = [
  "dist_stream",
  "dist_shoreline",
  "dist_river_mouth",
  "dist_confluence",
  "dist_lake_margin",
  "slope",
  "tpi",
  "height_above_sea",
];

// ---- a synthetic display grid ----------------------------------------------------------------------
const grid: GridShape = { width: size, height: size, cellSizeX: 100, cellSizeY: 100 };
const n = size * size;
const rng = new Mulberry32(20260);
const phases = Array.from({ length: 12 }, () => rng.next() * 2 * Math.PI);
/** a smooth field in about −1…1 */
function field(k: number, r: number, c: number): number {
  const x = c / size;
  const y = r / size;
  return (
    0.5 * Math.sin(6.1 * x + phases[k]) * Math.cos(4.3 * y + phases[k + 1]) +
    0.3 * Math.sin(17.3 * (x + y) + phases[k + 2]) +
    0.2 * Math.cos(29.7 * x - 23.1 * y + phases[k + 3])
  );
}
/** land class for a sea-level offset: the shelf deepens eastwards; a nodata margin on the west */
function landClassAt(shift: number): Uint8Array {
  const lc = new Uint8Array(n);
  for (let r = 0, i = 0; r < size; r++)
    for (let c = 0; c < size; c++, i++) {
      if (c < size / 64) {
        lc[i] = 255;
        continue;
      }
      const z = 40 * (0.6 - c / size) + 12 * field(0, r, c) - shift;
      const lake = field(4, r, c) > 0.62 && z > 4;
      lc[i] = z < -1 ? 1 : z < 1 ? 2 : lake ? 3 : 0;
    }
  return lc;
}
const landClass = landClassAt(0);
const spans: Record<string, [number, number]> = {
  dist_stream: [0, 3000], dist_shoreline: [0, 12000], dist_river_mouth: [0, 15000], dist_confluence: [0, 6000],
  dist_lake_margin: [0, 9000], slope: [0, 12], tpi: [-15, 15], height_above_sea: [-5, 80],
};
function floatLayer(k: number, lo: number, hi: number): Float32Array {
  const v = new Float32Array(n);
  for (let r = 0, i = 0; r < size; r++)
    for (let c = 0; c < size; c++, i++) v[i] = landClass[i] === 255 ? NaN : lo + ((field(k, r, c) + 1) / 2) * (hi - lo);
  return v;
}
const floats: Partial<Record<FactorId, Float32Array>> = {};
FACTORS.forEach((f, k) => (floats[f] = floatLayer(k % 8, spans[f][0], spans[f][1])));
function coded(bits: 8 | 16): Partial<Record<FactorId, LayerData>> {
  const out: Partial<Record<FactorId, LayerData>> = {};
  for (const f of FACTORS) {
    const q = quantise(floats[f]!, "NaN", bits);
    out[f] = { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
  }
  return out;
}
const age8: AgeInputs = { ageKa: 12, landClass, layers: coded(8) };
const age16: AgeInputs = { ageKa: 12, landClass, layers: coded(16) };

const base = defaultWeightSetContent();
const content: WeightSetContent = {
  ...base,
  factors: base.factors.map((f) => ({ ...f, weight: FACTORS.includes(f.factor) ? 1 + FACTORS.indexOf(f.factor) : 0 })),
};
const withShelter: WeightSetContent = {
  ...content,
  factors: content.factors.map((f) => (f.factor === "shelter" ? { ...f, weight: 2 } : f)),
};

// preservation inputs: three ages, a band of unassessed horizon, 60 cores
const agesKa = [10, 12, 14];
const landClassByAge = [landClassAt(-6), landClass, landClassAt(6)];
const q8 = (v: Float32Array): LayerData => {
  const q = quantise(v, "NaN", 8);
  return { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
};
const status = new Uint8Array(n);
const rise = new Float32Array(n);
const flood = new Float32Array(n);
const unassessed = new Uint8Array(n);
for (let r = 0, i = 0; r < size; r++)
  for (let c = 0; c < size; c++, i++) {
    if (landClass[i] === 255) {
      status[i] = 255;
      unassessed[i] = 255;
      rise[i] = flood[i] = NaN;
      continue;
    }
    const x = c / size;
    status[i] = x < 0.35 ? 0 : x < 0.9 ? 1 : 2;
    flood[i] = status[i] === 0 ? NaN : 8 + 8 * x;
    rise[i] = status[i] === 1 ? 5 + 10 * ((field(9, r, c) + 1) / 2) : NaN;
    unassessed[i] = field(10, r, c) > 0.35 ? 1 : 0;
  }
const origin = { originX: 500000, originY: 6000000 };
const cores = Array.from({ length: 60 }, () => ({
  x: origin.originX + rng.next() * size * 100,
  y: origin.originY - rng.next() * size * 100,
  state: rng.next() < 0.5 ? ("intact" as const) : ("truncated" as const),
}));
const presInputs: PreservationInputs = {
  tpi: q8(floats.tpi!),
  riseRateAtFlooding: q8(rise),
  floodingAge: q8(flood),
  floodingStatus: status,
  agesKa,
  landClassByAge,
  unassessed,
  evidence: horizonEvidenceGrid({ ...grid, ...origin }, cores, 250),
};
const OFF: PreservationResult = { active: false, reason: "off", score: null, unassessed: null };

// ---- colouring: 256-entry palette (viridis, 9 stops, van der Walt & Smith 2015, CC0) ---------------
const STOPS = [[68, 1, 84], [71, 44, 122], [59, 81, 139], [44, 113, 142], [33, 144, 141], [39, 173, 129], [92, 200, 99], [170, 220, 50], [253, 231, 37]];
const palette = new Uint8Array(256 * 4);
for (let k = 0; k < 256; k++) {
  const x = (k / 255) * (STOPS.length - 1);
  const j = Math.min(STOPS.length - 2, Math.floor(x));
  const f = x - j;
  for (let ch = 0; ch < 3; ch++) palette[k * 4 + ch] = Math.round(STOPS[j][ch] + (STOPS[j + 1][ch] - STOPS[j][ch]) * f);
  palette[k * 4 + 3] = 255;
}
const rgba = new Uint8ClampedArray(n * 4);
function colour(potential: Float32Array, un: Uint8Array): void {
  for (let i = 0; i < n; i++) {
    const v = potential[i];
    const o = i * 4;
    if (v === v) {
      const k = ((v < 0 ? 0 : v > 1 ? 1 : v) * 255 + 0.5) | 0;
      const p = k * 4;
      rgba[o] = palette[p];
      rgba[o + 1] = palette[p + 1];
      rgba[o + 2] = palette[p + 2];
      rgba[o + 3] = 255;
    } else if (un[i] === 1) {
      rgba[o] = rgba[o + 1] = rgba[o + 2] = 150; // unassessed: its own class
      rgba[o + 3] = 255;
    } else rgba[o + 3] = 0;
  }
}

// ---- timing ----------------------------------------------------------------------------------------
function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}
function time(f: () => void, n = runs, w = warmup): { median: number; min: number; max: number } {
  for (let k = 0; k < w; k++) f();
  const xs: number[] = [];
  for (let k = 0; k < n; k++) {
    const t0 = performance.now();
    f();
    xs.push(performance.now() - t0);
  }
  return { median: median(xs), min: Math.min(...xs), max: Math.max(...xs) };
}

const loadStart = loadavg();
const scratch = createScoreScratch(grid);
const pres = preservationModel(content, grid, presInputs);
// a moved slider changes a weight each time, so no run repeats the previous one exactly
let tick = 0;
const nudged = (c: WeightSetContent): WeightSetContent => {
  tick++;
  return { ...c, factors: c.factors.map((f, k) => (k === 0 ? { ...f, weight: 1 + (tick % 7) / 10 } : f)) };
};

const a = time(() => void scoreAge(nudged(content), grid, age8, OFF, scratch));
const b = time(() => void scoreAge(nudged(content), grid, age8, pres, scratch));
const last = scoreAge(content, grid, age8, pres, scratch);
const c = time(() => colour(last.potential, last.unassessed));
const a16 = time(() => void scoreAge(nudged(content), grid, age16, OFF, scratch));
const shelterScratch = createScoreScratch(grid);
const aShelter = time(() => void scoreAge(nudged(withShelter), grid, age8, OFF, shelterScratch));
const shelterFirst = time(() => void scoreAge(nudged(withShelter), grid, age8, OFF, createScoreScratch(grid)));
const aAlloc = time(() => void scoreAge(nudged(content), grid, age8, pres));
const presModel = time(() => void preservationModel(content, grid, presInputs));
const presCache = createPreservationCache();
const presNudged = (): WeightSetContent => {
  tick++;
  const c = structuredClone(content);
  c.preservation.baseLevel.curve = { kind: "linear", direction: "decreasing", fullUntil: -2, zeroAt: 5 + (tick % 5) };
  return c;
};
const presCached = time(() => void preservationModel(presNudged(), grid, presInputs, presCache));
const presChange = time(() => {
  const c = presNudged();
  const pr = preservationModel(c, grid, presInputs, presCache);
  const r = scoreAge(c, grid, age8, pr, scratch);
  colour(r.potential, r.unassessed);
});

// Serving the display copies: one full-resolution layer (4 × size)² reduced to this display grid by
// each rule (app/raster-display.ts reduceToDisplay), once per layer and age the map asks for.
const full = 4 * size;
const fullLayer = new Float32Array(full * full);
for (let i = 0; i < fullLayer.length; i++) fullLayer[i] = ((i * 2654435761) >>> 0) % 4;
const reduceRuns = Math.max(1, Math.min(3, runs));
const timeFew = (f: () => void) => time(f, reduceRuns, 0);
const reduceMean = timeFew(() => void reduceToDisplay(fullLayer, full, full, 4, "mean"));
const reduceMajority = timeFew(() => void reduceToDisplay(fullLayer, full, full, 4, "majority"));
const reduceAspect = timeFew(() => void reduceToDisplay(fullLayer, full, full, 4, "aspect"));

const occupiable = last.occupation.reduce((s, v) => (v === v ? s + 1 : s), 0);
const ms = (x: { median: number }) => x.median.toFixed(1).padStart(6);
const range = (x: { min: number; max: number }) => `(${x.min.toFixed(1)}–${x.max.toFixed(1)})`;
const machine = { cpus: cpus().length, model: cpus()[0]?.model, totalMemGiB: +(totalmem() / 2 ** 30).toFixed(1), node: process.version };
console.log(`Lowstand live re-scoring benchmark — ${machine.cpus} cores (${machine.model}), Node ${process.version}`);
console.log(`${size}×${size} display grid (${(n / 1e6).toFixed(2)} M cells, ${occupiable} occupiable), 8 factors as 8-bit codes; median of ${runs} runs after ${warmup} warm-up, ms (min–max)`);
console.log(`load average at the start ${loadStart.map((x) => x.toFixed(2)).join(" ")}`);
console.log(`  (a) tables + scoreAge, preservation off          ${ms(a)} ${range(a)}`);
console.log(`  (b) tables + scoreAge, preservation on           ${ms(b)} ${range(b)}`);
console.log(`  (c) colour to RGBA (256-entry palette)            ${ms(c)} ${range(c)}`);
console.log(`  input → new image: (a)+(c) ${(a.median + c.median).toFixed(1)} ms, (b)+(c) ${(b.median + c.median).toFixed(1)} ms — target ≤ 50 ms, aim 16 ms`);
console.log(`  for context:`);
console.log(`    same as (a) with 16-bit codes (65 536-entry tables) ${ms(a16)} ${range(a16)}`);
console.log(`    (a) + the shelter factor, its index cached          ${ms(aShelter)} ${range(aShelter)}`);
console.log(`    (a) + the shelter factor, index computed afresh     ${ms(shelterFirst)} ${range(shelterFirst)}`);
console.log(`    (b) without reused buffers (allocating)             ${ms(aAlloc)} ${range(aAlloc)}`);
console.log(`    preservation model itself (3 ages, 60 cores)        ${ms(presModel)} ${range(presModel)}`);
console.log(`    preservation model with its cache (a curve moved)   ${ms(presCached)} ${range(presCached)}`);
console.log(`    a preservation curve moved: model (cached) + (b) + (c) ${ms(presChange)} ${range(presChange)}`);
console.log(`  display copies: one ${full}² layer reduced by 4 to this grid (median of ${reduceRuns}) — mean ${ms(reduceMean)}, majority ${ms(reduceMajority)}, aspect ${ms(reduceAspect)} ms`);
console.log(`load average after ${loadavg().map((x) => x.toFixed(2)).join(" ")}`);
console.log(
  JSON.stringify({
    machine, size, runs, warmup, occupiable, loadStart, loadEnd: loadavg(),
    ms: { a, b, c, a16, aShelter, shelterFirst, aAlloc, presModel, presCached, presChange },
    inputToImage: { off: a.median + c.median, on: b.median + c.median },
    displayReductionMs: { fullSide: full, mean: reduceMean.median, majority: reduceMajority.median, aspect: reduceAspect.median },
  }),
);
