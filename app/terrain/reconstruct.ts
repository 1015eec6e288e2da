/**
 * The reconstruction pipeline (design §3): one analysis surface, one sea-level model, a list of ages →
 * every age-independent and per-age layer of docs/layers.md, handed to a sink one at a time, and a
 * manifest.
 *
 * Pure computation: the layers go to a caller-supplied sink (a job writes them to object storage, the
 * CLI to GeoTIFF files); nothing here touches files, the network or threads. How ages are run is
 * injected: `inlineAgeRunner` (this thread, one age after another — tests, browser workers) or the
 * worker-thread pool in reconstruct-worker.ts (Node, ages in parallel across cores).
 *
 * Methods, one module each: spill elevation and classes (flooding.ts; Barnes, Lehman & Mulla 2014),
 * flooding age (flooding-age.ts), depression filling (fill.ts; Barnes et al. 2014), flats
 * (flats.ts; Barnes et al. 2014), D8 and accumulation (O'Callaghan & Mark 1984; Jenson & Domingue
 * 1988), Strahler order (Strahler 1957), exact distances (Felzenszwalb & Huttenlocher 2012), slope
 * and aspect (Horn 1981), TPI (Guisan et al. 1999), the buried horizon (horizon.ts).
 */
import { burnChannels } from "./burn-in.ts";
import { euclideanDistance } from "./distance-transform.ts";
import { fillDepressions } from "./fill.ts";
import { resolveFlats } from "./flats.ts";
import {
  CLASS_INTERTIDAL,
  type OceanBoundary,
  type SpillResult,
  type TidalRange,
  classifyAtAge,
  oceanBoundaryMask,
  outletMask,
  spillElevation,
} from "./flooding.ts";
import { floodingHistory } from "./flooding-age.ts";
import { contributingAreaKm2, flowAccumulation } from "./flow-accumulation.ts";
import { flowDirectionD8 } from "./flow-direction.ts";
import {
  type Grid,
  type GridSpec,
  D8_OUTLET,
  type Layer,
  type RunControl,
  TerrainCancelled,
  TerrainInputError,
  assertLayerSize,
  validateSpec,
} from "./grid.ts";
import { heightAboveSea } from "./height-above-sea.ts";
import { hillshadeFromGradient } from "./hillshade.ts";
import type { HorizonResult } from "./horizon.ts";
import { type SeaLevelModel, modelNotes, modelRange, seaLevelAt, seaLevelLayerAt, validateSeaLevelModel } from "./sea-level.ts";
import { lakeMargins, riverMouths, seaAtTidalLevel, shorelineMask, waterMask } from "./shoreline.ts";
import { hornGradient, slopeAspectFromGradient } from "./slope-aspect.ts";
import { type SurveyLine, distanceToNearestLine } from "./survey-lines.ts";
import { confluences, strahlerOrder, streamMask } from "./streams.ts";
import { topographicPositionIndex } from "./tpi.ts";

/** Version of the engine written into every manifest; bump when a layer's meaning changes. */
export const ENGINE_VERSION = "0.2.0";

export type LayerType = "float32" | "int32" | "uint8";

/** One finished layer, handed to the sink. `data` may be transferred away by the sink. */
export interface LayerOut {
  name: string;
  /** ka BP for per-age layers, null for age-independent ones */
  ageKa: number | null;
  type: LayerType;
  units: string;
  /** value on nodata cells: "NaN" for Float32 layers, else the integer code */
  nodata: number | "NaN";
  data: Layer;
  stats: LayerStats;
}

export interface LayerStats {
  validCount: number;
  min: number | null;
  max: number | null;
  mean: number | null;
}

export type LayerSink = (layer: LayerOut) => void | Promise<void>;

/** Everything an age needs, shareable with worker threads (typed arrays may sit on SharedArrayBuffers). */
export interface AgeContext {
  spec: GridSpec;
  surface: Float32Array;
  nodata: Uint8Array;
  spillM: Float32Array;
  basinLabel: Int32Array;
  basinFloorM: Float64Array;
  basinSpillM: Float64Array;
  unreachableCount: number;
  boundaryMask: Uint8Array;
  seaLevel: SeaLevelModel;
  tidalRangeM: TidalRange;
  /** −1 low water, 0 mean sea level, +1 high water: where the shoreline is drawn */
  shorelineTidalLevel: number;
  streamThresholdKm2: number;
  /** mapped palaeochannels rasterised (optional), burnt in by `burnDepthM` when that is > 0 */
  palaeochannels: Uint8Array | null;
  burnDepthM: number;
  tpiRadiusM: number;
  flooding: { windowKa: [number, number]; coastBandM: number };
  /** route water through interior sea and lake cells too (slower, same result; for checking) */
  routeInteriorWater?: boolean;
}

export interface AgeSummary {
  ageKa: number;
  /** sea level (m) at the age where it is one number (a single curve), else null */
  seaLevelM: number | null;
  counts: { sea: number; intertidal: number; lake: number; land: number };
  features: { streamCells: number; mouths: number; confluences: number; shorelineCells: number; lakeMarginCells: number };
  timingsMs: Record<string, number>;
}

export interface StaticSummary {
  timingsMs: Record<string, number>;
}

/**
 * Runs the per-age work and the age-independent work; layers go to `emit`. A runner may also have
 * `warmUp(jobs)`, which reconstruct() calls once the inputs are valid, before the analysis surface
 * and the spill elevation, so it can get ready (start threads) meanwhile; and `dispose()`, which
 * reconstruct() calls if it fails before handing the ages over, so nothing it started is left behind.
 */
export type AgeRunner = ((
  ctx: AgeContext,
  agesKa: readonly number[],
  emit: LayerSink,
  control: RunControl & { onAgeProgress?: (ageKa: number | null, fraction: number, step: string) => void },
) => Promise<{ ages: AgeSummary[]; static: StaticSummary }>) & {
  warmUp?: (jobs: number) => void;
  dispose?: () => void;
};

export interface ReconstructInput {
  /** seabed elevation, m relative to present mean sea level (after datum and sign conversion) */
  seabed: Grid<Float32Array>;
  /** a gridded buried horizon (horizon.ts) and its name; the analysis surface then uses it where assessed */
  horizon?: { name: string; result: HorizonResult };
  seaLevel: SeaLevelModel;
  agesKa: number[];
  oceanBoundary: OceanBoundary;
  tidalRangeM?: TidalRange;
  shorelineTidalLevel?: number;
  streamThresholdKm2: number;
  palaeochannels?: Uint8Array;
  burnDepthM?: number;
  tpiRadiusM?: number;
  coastBandM?: number;
  /** survey line navigation (project CRS): gives the dist_survey_line layer */
  surveyLines?: SurveyLine[];
}

export interface ReconstructOptions extends RunControl {
  sink: LayerSink;
  runAges?: AgeRunner;
}

export interface ManifestLayer {
  name: string;
  ageKa: number | null;
  type: LayerType;
  units: string;
  nodata: number | "NaN";
  stats: LayerStats;
}

export interface Manifest {
  engineVersion: string;
  grid: { width: number; height: number; originX: number; originY: number; cellSizeX: number; cellSizeY: number; epsg: number | null };
  analysisSurface: { kind: "seabed" | "horizon"; horizonName: string | null; horizonCells: number; seabedCells: number; note: string };
  seaLevel: { label: string; citations: string[]; warnings: string[]; rangeKa: [number, number] };
  agesKa: number[];
  parameters: {
    tidalRangeM: number | "grid";
    shorelineTidalLevel: number;
    streamThresholdKm2: number;
    tpiRadiusM: number;
    burnDepthM: number;
    coastBandM: number;
    floodingWindowKa: [number, number];
  };
  connectivity: string;
  unreachableCells: number;
  layers: ManifestLayer[];
  ages: AgeSummary[];
  staticTimingsMs: Record<string, number>;
  warnings: string[];
}

/** per-cell source of the analysis surface */
export const SURFACE_SEABED = 0;
export const SURFACE_HORIZON = 1;
export const SURFACE_NODATA = 255;

/**
 * The analysis surface: the buried horizon's elevation where it is assessed, the seabed elsewhere
 * (design §3), with a per-cell source layer (0 seabed, 1 horizon, 255 nodata).
 *
 * Preconditions: `horizonElevationM` on the seabed's grid, NaN where unassessed. O(n).
 */
export function analysisSurface(
  seabed: Grid<Float32Array>,
  horizonElevationM?: Float32Array,
): { surface: Grid<Float32Array>; source: Uint8Array; horizonCells: number; seabedCells: number } {
  const n = seabed.data.length;
  const data = new Float32Array(n);
  const source = new Uint8Array(n);
  let hc = 0;
  let sc = 0;
  if (horizonElevationM) assertLayerSize(seabed.spec, horizonElevationM, "horizon elevation");
  for (let i = 0; i < n; i++) {
    if (seabed.nodata[i]) {
      data[i] = NaN;
      source[i] = SURFACE_NODATA;
      continue;
    }
    const h = horizonElevationM ? horizonElevationM[i] : NaN;
    if (h === h) {
      data[i] = h;
      source[i] = SURFACE_HORIZON;
      hc++;
    } else {
      data[i] = seabed.data[i];
      source[i] = SURFACE_SEABED;
      sc++;
    }
  }
  return { surface: { spec: seabed.spec, data, nodata: seabed.nodata }, source, horizonCells: hc, seabedCells: sc };
}

/** min, max, mean and count over valid cells (NaN for Float32, `nodata` code for integer layers). O(n). */
export function layerStats(data: Layer, nodata: number | "NaN"): LayerStats {
  // one loop per array type, so each stays monomorphic (the same sums in the same order)
  const code = nodata === "NaN" ? NaN : nodata;
  if (data instanceof Float32Array) return statsF32(data, code);
  if (data instanceof Uint8Array) return statsU8(data, code);
  return statsI32(data, code);
}

function statsF32(data: Float32Array, code: number): LayerStats {
  let k = 0;
  let mn = Infinity;
  let mx = -Infinity;
  let sum = 0;
  if (code !== code) {
    // nodata NaN: every finite value counts (v − v is NaN for NaN and ±Infinity, 0 otherwise)
    for (let i = 0; i < data.length; i++) {
      const v = data[i];
      if (v - v !== 0) continue;
      k++;
      if (v < mn) mn = v;
      if (v > mx) mx = v;
      sum += v;
    }
    return k === 0 ? { validCount: 0, min: null, max: null, mean: null } : { validCount: k, min: mn, max: mx, mean: sum / k };
  }
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (v !== v || v === code || v === Infinity || v === -Infinity) continue;
    k++;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
    sum += v;
  }
  return k === 0 ? { validCount: 0, min: null, max: null, mean: null } : { validCount: k, min: mn, max: mx, mean: sum / k };
}

function statsU8(data: Uint8Array, code: number): LayerStats {
  // a histogram: integer sums are exact in double precision in any order (≤ 255 · 2³² < 2⁵³), so
  // the mean is the same number the cell-by-cell sum gives
  // four interleaved banks, so runs of one value (most of a mask) do not wait on the same counter
  const bank = new Int32Array(1024);
  const n = data.length;
  const n4 = n - (n & 3);
  for (let i = 0; i < n4; i += 4) {
    bank[data[i]]++;
    bank[256 + data[i + 1]]++;
    bank[512 + data[i + 2]]++;
    bank[768 + data[i + 3]]++;
  }
  for (let i = n4; i < n; i++) bank[data[i]]++;
  const counts = new Float64Array(256);
  for (let v = 0; v < 256; v++) counts[v] = bank[v] + bank[256 + v] + bank[512 + v] + bank[768 + v];
  let k = 0;
  let mn = Infinity;
  let mx = -Infinity;
  let sum = 0;
  for (let v = 0; v < 256; v++) {
    const c = counts[v];
    if (c === 0 || v === code) continue;
    k += c;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
    sum += v * c;
  }
  return k === 0 ? { validCount: 0, min: null, max: null, mean: null } : { validCount: k, min: mn, max: mx, mean: sum / k };
}

function statsI32(data: Int32Array, code: number): LayerStats {
  let k = 0;
  let mn = Infinity;
  let mx = -Infinity;
  let sum = 0;
  for (let i = 0; i < data.length; i++) {
    const v = data[i];
    if (v === code) continue;
    k++;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
    sum += v;
  }
  return k === 0 ? { validCount: 0, min: null, max: null, mean: null } : { validCount: k, min: mn, max: mx, mean: sum / k };
}

function out(name: string, ageKa: number | null, type: LayerType, units: string, nodata: number | "NaN", data: Layer, stats?: LayerStats): LayerOut {
  return { name, ageKa, type, units, nodata, data, stats: stats ?? layerStats(data, nodata) };
}

function checkCancel(control: RunControl | undefined, step: string): void {
  if (control?.shouldCancel?.()) throw new TerrainCancelled(`cancelled during ${step}`);
}

/**
 * Exact distance (m) to the cells of `features`, NaN on nodata; NaN everywhere when there is no
 * feature (the manifest's feature counts say so). Felzenszwalb & Huttenlocher (2012). O(n).
 */
function distanceLayer(features: Uint8Array, spec: GridSpec, nodata: Uint8Array): { d: Float32Array; stats: LayerStats } {
  const d = euclideanDistance(features, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY);
  // nodata and "no feature" become NaN, and the statistics of what is left are taken in the same
  // pass — the same values summed in the same order as layerStats would
  let k = 0;
  let mn = Infinity;
  let mx = -Infinity;
  let sum = 0;
  for (let i = 0; i < d.length; i++) {
    const v = d[i];
    if (nodata[i] !== 0 || v === Infinity) {
      d[i] = NaN;
      continue;
    }
    k++;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
    sum += v;
  }
  const stats = k === 0 ? { validCount: 0, min: null, max: null, mean: null } : { validCount: k, min: mn, max: mx, mean: sum / k };
  return { d, stats };
}

function countOnes(m: Uint8Array): number {
  let k = 0;
  for (let i = 0; i < m.length; i++) if (m[i] !== 0) k++;
  return k;
}

/**
 * The age-independent layers from the analysis surface: slope, aspect (Horn 1981), TPI (Guisan et
 * al. 1999, summed-area table), hillshade, spill elevation, flooding age and time near the coast
 * (flooding-age.ts), distance to mapped palaeochannels. Emitted one at a time. O(n log n) for the
 * flooding history's lookups, O(n) otherwise.
 */
export async function reconstructStatic(ctx: AgeContext, emit: LayerSink, control?: RunControl): Promise<StaticSummary> {
  const { spec, surface, nodata } = ctx;
  const { width: w, height: h, cellSizeX: dx, cellSizeY: dy } = spec;
  const t: Record<string, number> = {};
  let t0 = performance.now();
  const step = (name: string, fraction: number) => {
    const now = performance.now();
    t[name] = now - t0;
    t0 = now;
    control?.onProgress?.(fraction, name);
    checkCancel(control, name);
  };
  checkCancel(control, "slope and aspect");
  // one Horn gradient for the hillshade and for slope and aspect (which overwrite it in place)
  const gx = new Float32Array(w * h);
  const gy = new Float32Array(w * h);
  hornGradient(surface, w, h, dx, dy, gx, gy, nodata);
  const hs = hillshadeFromGradient(gx, gy);
  const hillshadeMs = performance.now() - t0;
  t0 = performance.now();
  const sa = slopeAspectFromGradient(gx, gy);
  step("slope and aspect", 0.2);
  await emit(out("slope", null, "float32", "degrees", "NaN", sa.slopeDeg));
  await emit(out("aspect", null, "float32", "degrees clockwise from grid north", "NaN", sa.aspectDeg));
  const tpi = topographicPositionIndex(surface, w, h, dx, dy, ctx.tpiRadiusM, nodata);
  step("TPI", 0.35);
  await emit(out("tpi", null, "float32", "m", "NaN", tpi));
  step("hillshade", 0.45);
  t.hillshade += hillshadeMs;
  await emit(out("hillshade", null, "uint8", "grey level 1–255", 0, hs));
  await emit(out("spill_elevation", null, "float32", "m", "NaN", ctx.spillM.slice()));
  const hist = floodingHistory({ spec, data: surface, nodata }, ctx.spillM, ctx.seaLevel, {
    windowKa: ctx.flooding.windowKa,
    tidalRange: ctx.tidalRangeM,
    coastBandM: ctx.flooding.coastBandM,
  });
  step("flooding history", 0.85);
  await emit(out("flooding_age", null, "float32", "ka BP", "NaN", hist.floodingAgeKa));
  await emit(out("first_flooding_age", null, "float32", "ka BP", "NaN", hist.firstFloodingAgeKa));
  await emit(out("flooding_status", null, "uint8", "class", 255, hist.status));
  await emit(out("reexposures", null, "uint8", "count", 255, hist.reexposures));
  await emit(out("rise_rate_at_flooding", null, "float32", "m/ka", "NaN", hist.riseRateMPerKa));
  await emit(out("time_near_coast", null, "float32", "ka", "NaN", hist.timeNearCoastKa));
  await emit(out("time_intertidal", null, "float32", "ka", "NaN", hist.timeIntertidalKa));
  if (ctx.palaeochannels) {
    const { d, stats } = distanceLayer(ctx.palaeochannels, spec, nodata);
    step("distance to palaeochannel", 0.95);
    await emit(out("dist_palaeochannel", null, "float32", "m", "NaN", d, stats));
  }
  control?.onProgress?.(1, "age-independent layers");
  return { timingsMs: t };
}

/**
 * One age: classes (sea, intertidal, lake, land), depression filling from the sea and lakes
 * (Priority-Flood, Barnes et al. 2014) with flats resolved, D8 directions and accumulation, streams at
 * the threshold with Strahler order, shoreline, river mouths, confluences, lake margins, exact
 * distances to each of them and to the intertidal band (Felzenszwalb & Huttenlocher 2012), and height
 * above the contemporary sea. Layers are emitted as soon as they are final so memory stays at a few
 * grids. O(n log n) for the fill, O(n) for everything else.
 */
export async function reconstructAge(ctx: AgeContext, ageKa: number, emit: LayerSink, control?: RunControl): Promise<AgeSummary> {
  const { spec, nodata } = ctx;
  const elev: Grid<Float32Array> = { spec, data: ctx.surface, nodata };
  const t: Record<string, number> = {};
  let t0 = performance.now();
  const step = (name: string, fraction: number) => {
    const now = performance.now();
    t[name] = (t[name] ?? 0) + (now - t0);
    t0 = now;
    control?.onProgress?.(fraction, name);
    checkCancel(control, name);
  };
  checkCancel(control, "sea level");
  const spill: SpillResult = {
    spillM: ctx.spillM,
    basinLabel: ctx.basinLabel,
    basinFloorM: ctx.basinFloorM,
    basinSpillM: ctx.basinSpillM,
    unreachableCount: ctx.unreachableCount,
  };
  const seaLevel = seaLevelLayerAt(ctx.seaLevel, spec, ageKa);
  const cls = classifyAtAge(elev, spill, seaLevel, ctx.tidalRangeM);
  const classes = cls.classes;
  step("classes", 0.05);
  const outlets = outletMask(classes, ctx.boundaryMask);
  // Outlet cells with no land neighbour (the open sea, lake interiors) take no part in routing: they
  // are left out of the fill, D8 and accumulation as if nodata, which gives the same result (water
  // leaves at the first outlet it reaches, and no land cell borders them) at a fraction of the cost
  // when much of the shelf is drowned. Afterwards they are outlets with nothing upstream.
  const routeNodata = ctx.routeInteriorWater ? nodata : interiorOutletsAsNodata(spec, outlets, nodata);
  const baseGrid = ctx.palaeochannels && ctx.burnDepthM > 0 ? burnChannels(elev, ctx.palaeochannels, ctx.burnDepthM) : elev;
  const toFill: Grid<Float32Array> = { spec, data: baseGrid.data, nodata: routeNodata };
  const filled = fillDepressions(toFill, outlets, { epsilon: false });
  step("fill", 0.3);
  const filledGrid: Grid<Float32Array> = { spec, data: filled.filledM, nodata: routeNodata };
  const d8 = flowDirectionD8(filledGrid, filled.outlets);
  const flats = resolveFlats(filledGrid, d8);
  const directions = flats.directions;
  step("flow direction", 0.4);
  const acc = flowAccumulation(spec, directions, routeNodata);
  if (routeNodata !== nodata) {
    const z = baseGrid.data;
    const fz = filled.filledM;
    const up = acc.upstreamCells;
    for (let i = 0; i < routeNodata.length; i++) {
      if (routeNodata[i] !== 0 && nodata[i] === 0) {
        fz[i] = z[i];
        directions[i] = D8_OUTLET;
        up[i] = 0;
      }
    }
  }
  step("accumulation", 0.5);
  const water = waterMask(classes);
  const streams = streamMask(spec, acc.upstreamCells, ctx.streamThresholdKm2, water);
  const strahler = strahlerOrder(spec, directions, streams, acc.order, acc.validCount);
  const conf = confluences(spec, directions, streams);
  const sea = seaAtTidalLevel(ctx.spillM, seaLevel, ctx.tidalRangeM, ctx.shorelineTidalLevel);
  const shore = shorelineMask(elev, sea);
  const mouths = riverMouths(elev, directions, streams, sea);
  const lakeMargin = lakeMargins(elev, classes);
  const intertidal = new Uint8Array(classes.length);
  for (let i = 0; i < classes.length; i++) if (classes[i] === CLASS_INTERTIDAL) intertidal[i] = 1;
  step("streams and features", 0.6);
  const summary: AgeSummary = {
    ageKa,
    seaLevelM: ctx.seaLevel.kind === "curve" ? seaLevelAt(ctx.seaLevel.curve, ageKa) : null,
    counts: cls.counts,
    features: {
      streamCells: countOnes(streams),
      mouths: countOnes(mouths),
      confluences: countOnes(conf),
      shorelineCells: countOnes(shore),
      lakeMarginCells: countOnes(lakeMargin),
    },
    timingsMs: t,
  };
  const area = contributingAreaKm2(spec, acc.upstreamCells);
  // emit what is final; the sink may transfer the buffers away, so nothing emitted is used again
  await emit(out("land_class", ageKa, "uint8", "class", 255, classes));
  await emit(out("lake_level", ageKa, "float32", "m", "NaN", cls.lakeLevelM));
  await emit(out("filled_surface", ageKa, "float32", "m", "NaN", filled.filledM));
  await emit(out("flow_direction", ageKa, "uint8", "D8 code", 255, directions));
  await emit(out("contributing_area", ageKa, "float32", "km²", "NaN", area));
  await emit(out("stream_order", ageKa, "uint8", "Strahler order", 255, markNodata(strahler, nodata)));
  step("emit", 0.65);
  const features: [string, Uint8Array][] = [
    ["dist_stream", streams],
    ["dist_shoreline", shore],
    ["dist_intertidal", intertidal],
    ["dist_river_mouth", mouths],
    ["dist_confluence", conf],
    ["dist_lake_margin", lakeMargin],
  ];
  let k = 0;
  for (const [name, mask] of features) {
    const { d, stats } = distanceLayer(mask, spec, nodata);
    step("distances", 0.65 + 0.05 * ++k);
    await emit(out(name, ageKa, "float32", "m", "NaN", d, stats));
  }
  await emit(out("shoreline", ageKa, "uint8", "mask", 255, markNodata(shore, nodata)));
  await emit(out("river_mouths", ageKa, "uint8", "mask", 255, markNodata(mouths, nodata)));
  await emit(out("confluences", ageKa, "uint8", "mask", 255, markNodata(conf, nodata)));
  const has = heightAboveSea(ctx.surface, seaLevel, nodata);
  step("height above sea", 0.98);
  await emit(out("height_above_sea", ageKa, "float32", "m", "NaN", has));
  step("emit", 1);
  return summary;
}

/**
 * nodata plus every outlet cell whose 8 neighbours (inside the grid) are all outlets or nodata; just
 * `nodata` when no outlet borders a routable cell (nothing to route). O(n).
 */
export function interiorOutletsAsNodata(spec: GridSpec, outlets: Uint8Array, nodata: Uint8Array): Uint8Array {
  const { width: w, height: h } = spec;
  const out = nodata.slice();
  let kept = 0;
  for (let r = 0; r < h; r++) {
    const r0 = r > 0 ? r - 1 : r;
    const r1 = r < h - 1 ? r + 1 : r;
    for (let c = 0; c < w; c++) {
      const i = r * w + c;
      if (outlets[i] === 0 || nodata[i] !== 0) continue;
      const c0 = c > 0 ? c - 1 : c;
      const c1 = c < w - 1 ? c + 1 : c;
      let interior = 1;
      for (let rr = r0; rr <= r1 && interior; rr++) {
        for (let cc = c0; cc <= c1; cc++) {
          const m = rr * w + cc;
          if (outlets[m] === 0 && nodata[m] === 0) {
            interior = 0;
            break;
          }
        }
      }
      out[i] = interior;
      if (!interior) kept++;
    }
  }
  return kept > 0 ? out : nodata;
}

function markNodata(mask: Uint8Array, nodata: Uint8Array): Uint8Array {
  for (let i = 0; i < mask.length; i++) if (nodata[i]) mask[i] = 255;
  return mask;
}

/** Runs the age-independent layers, then the ages one after another, in this thread. */
export const inlineAgeRunner: AgeRunner = async (ctx, agesKa, emit, control) => {
  const total = agesKa.length + 1;
  const sub = (k: number, age: number | null): RunControl => ({
    shouldCancel: control.shouldCancel,
    onProgress: (f, s) => {
      control.onAgeProgress?.(age, f, s ?? "");
      control.onProgress?.((k + f) / total, s);
    },
  });
  const st = await reconstructStatic(ctx, emit, sub(0, null));
  const ages: AgeSummary[] = [];
  for (let k = 0; k < agesKa.length; k++) ages.push(await reconstructAge(ctx, agesKa[k], emit, sub(k + 1, agesKa[k])));
  return { ages, static: st };
};

/**
 * The whole reconstruction (design §3). Validates the inputs (TerrainInputError naming the problem),
 * builds the analysis surface (horizon where assessed, else seabed), runs one Priority-Flood from the
 * open-ocean boundary for the spill elevation, then the age-independent layers and every age through
 * `runAges` (inline by default), handing each layer to `sink`, and returns the manifest. Progress
 * (fraction, step) through onProgress; cancellation through shouldCancel (TerrainCancelled).
 *
 * Complexity: O(n log n) for the spill flood and per age for the fill, O(n) for everything else;
 * memory a few grids per age in flight, since layers leave through the sink as soon as they are made.
 */
export async function reconstruct(input: ReconstructInput, options: ReconstructOptions): Promise<Manifest> {
  const { seabed } = input;
  validateSpec(seabed.spec);
  const spec = seabed.spec;
  assertLayerSize(spec, seabed.data, "seabed grid");
  assertLayerSize(spec, seabed.nodata, "seabed nodata mask");
  validateSeaLevelModel(input.seaLevel, spec);
  const [young, old] = modelRange(input.seaLevel);
  if (input.agesKa.length === 0) throw new TerrainInputError("give at least one age to reconstruct");
  for (const a of input.agesKa) {
    if (!Number.isFinite(a) || a < young || a > old) {
      throw new TerrainInputError(`age ${a} ka is outside the sea-level model, which covers ${young}–${old} ka BP`);
    }
  }
  if (new Set(input.agesKa).size !== input.agesKa.length) throw new TerrainInputError("the list of ages repeats an age");
  if (!(input.streamThresholdKm2 > 0)) throw new TerrainInputError(`stream threshold must be a positive area in km², got ${input.streamThresholdKm2}`);
  const tpiRadiusM = input.tpiRadiusM ?? 500;
  if (!(tpiRadiusM > 0)) throw new TerrainInputError(`TPI radius must be positive metres, got ${tpiRadiusM}`);
  const burnDepthM = input.burnDepthM ?? 0;
  if (!(burnDepthM >= 0)) throw new TerrainInputError(`burn-in depth must be zero or more metres, got ${burnDepthM}`);
  if (input.palaeochannels) assertLayerSize(spec, input.palaeochannels, "palaeochannel mask");
  const tidal = input.tidalRangeM ?? 0;
  if (typeof tidal === "number" && !(tidal >= 0)) throw new TerrainInputError(`tidal range must be ≥ 0 m, got ${tidal}`);
  if (typeof tidal !== "number") {
    assertLayerSize(spec, tidal, "tidal-range grid");
    for (let i = 0; i < tidal.length; i++) {
      if (!(tidal[i] >= 0) && !seabed.nodata[i]) {
        const r = Math.floor(i / spec.width);
        throw new TerrainInputError(`tidal range must be ≥ 0 m, got ${tidal[i]} at row ${r}, column ${i - r * spec.width}`);
      }
    }
  }
  const coastBandM = input.coastBandM ?? 5;
  const shorelineTidalLevel = input.shorelineTidalLevel ?? 0;
  const control: RunControl = { onProgress: options.onProgress, shouldCancel: options.shouldCancel };
  const agesSorted = [...input.agesKa].sort((a, b) => b - a); // oldest first
  const layers: ManifestLayer[] = [];
  const sink: LayerSink = async (l) => {
    layers.push({ name: l.name, ageKa: l.ageKa, type: l.type, units: l.units, nodata: l.nodata, stats: l.stats });
    await options.sink(l);
  };
  const runner = options.runAges ?? inlineAgeRunner;
  runner.warmUp?.(agesSorted.length + 1);
  try {
    return await reconstructWith(runner, input, spec, control, sink, layers, agesSorted, {
      young, old, tidal, tpiRadiusM, burnDepthM, coastBandM, shorelineTidalLevel,
    });
  } catch (e) {
    runner.dispose?.();
    throw e;
  }
}

async function reconstructWith(
  runner: AgeRunner,
  input: ReconstructInput,
  spec: GridSpec,
  control: RunControl,
  sink: LayerSink,
  layers: ManifestLayer[],
  agesSorted: number[],
  p: { young: number; old: number; tidal: TidalRange; tpiRadiusM: number; burnDepthM: number; coastBandM: number; shorelineTidalLevel: number },
): Promise<Manifest> {
  const { seabed } = input;
  const { young, old, tidal, tpiRadiusM, burnDepthM, coastBandM, shorelineTidalLevel } = p;
  const staticT: Record<string, number> = {};
  let t0 = performance.now();
  control.onProgress?.(0, "analysis surface");
  // the big arrays are held only by `ctx` once the ages start (see below), so a runner that copies
  // them (onto shared memory) lets the originals go
  let as: ReturnType<typeof analysisSurface> | null = analysisSurface(seabed, input.horizon?.result.elevationM);
  const { horizonCells, seabedCells } = as;
  await sink(out("analysis_surface", null, "float32", "m", "NaN", as.surface.data.slice()));
  await sink(out("surface_source", null, "uint8", "class", SURFACE_NODATA, as.source));
  if (input.horizon) {
    const hz = input.horizon.result;
    await sink(out("horizon_elevation", null, "float32", "m", "NaN", hz.elevationM.slice()));
    await sink(out("cover_thickness", null, "float32", "m", "NaN", hz.thicknessM.slice()));
    await sink(out("unassessed", null, "uint8", "mask", 255, markNodata(hz.unassessed.slice(), seabed.nodata)));
    await sink(out("thin_cover", null, "uint8", "mask", 255, markNodata(hz.belowResolution.slice(), seabed.nodata)));
    if (hz.distanceToLineM) await sink(out("dist_pick_line", null, "float32", "m", "NaN", finiteOrNaN(hz.distanceToLineM.slice(), seabed.nodata)));
  }
  if (input.surveyLines && input.surveyLines.length > 0) {
    await sink(out("dist_survey_line", null, "float32", "m", "NaN", finiteOrNaN(distanceToNearestLine(input.surveyLines, spec), seabed.nodata)));
  }
  staticT["analysis surface"] = performance.now() - t0;
  t0 = performance.now();
  checkCancel(control, "spill elevation");
  const boundaryMask = oceanBoundaryMask(spec, seabed.nodata, input.oceanBoundary);
  let spill: SpillResult | null = spillElevation(as.surface, boundaryMask, {
    shouldCancel: control.shouldCancel,
    onProgress: (f, s) => control.onProgress?.(0.02 + 0.08 * f, s),
  });
  staticT["spill elevation"] = performance.now() - t0;
  const unreachableCells = spill.unreachableCount;
  let ctx: AgeContext | null = {
    spec,
    surface: as.surface.data,
    nodata: seabed.nodata,
    spillM: spill.spillM,
    basinLabel: spill.basinLabel,
    basinFloorM: spill.basinFloorM,
    basinSpillM: spill.basinSpillM,
    unreachableCount: spill.unreachableCount,
    boundaryMask,
    seaLevel: input.seaLevel,
    tidalRangeM: tidal,
    shorelineTidalLevel,
    streamThresholdKm2: input.streamThresholdKm2,
    palaeochannels: input.palaeochannels ?? null,
    burnDepthM,
    tpiRadiusM,
    flooding: { windowKa: [young, old], coastBandM },
  };
  as = null;
  spill = null;
  const running = runner(ctx, agesSorted, sink, {
    shouldCancel: control.shouldCancel,
    onProgress: (f, s) => control.onProgress?.(0.1 + 0.9 * f, s),
  });
  ctx = null;
  const res = await running;
  const notes = modelNotes(input.seaLevel);
  const warnings = [...notes.warnings];
  if (unreachableCells > 0) warnings.push(`${unreachableCells} cells can never be reached by the sea (cut off by nodata): they stay land or lake at every age`);
  if (input.horizon && seabedCells > 0) {
    warnings.push("the analysis surface switches from the horizon to the seabed where the horizon is unassessed; expect a step at that edge");
  }
  const ageOrder = new Map(agesSorted.map((a, i) => [a, i]));
  layers.sort((a, b) => (a.ageKa === null ? -1 : ageOrder.get(a.ageKa)!) - (b.ageKa === null ? -1 : ageOrder.get(b.ageKa)!));
  res.ages.sort((a, b) => ageOrder.get(a.ageKa)! - ageOrder.get(b.ageKa)!);
  control.onProgress?.(1, "done");
  return {
    engineVersion: ENGINE_VERSION,
    grid: {
      width: spec.width,
      height: spec.height,
      originX: spec.originX,
      originY: spec.originY,
      cellSizeX: spec.cellSizeX,
      cellSizeY: spec.cellSizeY,
      epsg: spec.crs?.epsg ?? null,
    },
    analysisSurface: {
      kind: input.horizon && horizonCells > 0 ? "horizon" : "seabed",
      horizonName: input.horizon?.name ?? null,
      horizonCells,
      seabedCells,
      note: input.horizon
        ? `buried horizon "${input.horizon.name}" on ${horizonCells} cells, today's seabed on the other ${seabedCells} (horizon unassessed there); see the surface_source layer`
        : "today's seabed: no buried horizon was given, so drainage follows the modern seabed (sandwaves, scour and dredged trenches included)",
    },
    seaLevel: { label: notes.label, citations: notes.citations, warnings: notes.warnings, rangeKa: [young, old] },
    agesKa: agesSorted,
    parameters: {
      tidalRangeM: typeof tidal === "number" ? tidal : "grid",
      shorelineTidalLevel,
      streamThresholdKm2: input.streamThresholdKm2,
      tpiRadiusM,
      burnDepthM,
      coastBandM,
      floodingWindowKa: [young, old],
    },
    connectivity: "sea and lakes spread 4-connected (a one-cell diagonal barrier holds water back); flow routing is 8-connected (D8)",
    unreachableCells,
    layers,
    ages: res.ages,
    staticTimingsMs: { ...staticT, ...res.static.timingsMs },
    warnings,
  };
}

function finiteOrNaN(a: Float32Array, nodata: Uint8Array): Float32Array {
  for (let i = 0; i < a.length; i++) if (a[i] === Infinity || nodata[i] !== 0) a[i] = NaN;
  return a;
}
