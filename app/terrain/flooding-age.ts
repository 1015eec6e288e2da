/**
 * Flooding age and the time a cell spent near the coast, from its spill elevation and a sea-level
 * model (continuous in time: exact on the piecewise-linear curve, no age slicing).
 *
 * A cell is sea at age t when the sea level L(t) has reached its spill elevation s: L(t) ≥ s (mean sea
 * level; the tidal range only widens the intertidal band). Because the curve can fall as well as rise,
 * a cell can be flooded, re-exposed and flooded again. For each cell this module gives
 *   - firstFloodingAgeKa: the first time (oldest age) the sea reached it within the window;
 *   - floodingAgeKa: the final drowning — the age after which it stayed sea up to the young end of the
 *     window (the one preservation depends on);
 *   - reexposures: how many times it emerged again after being sea (sea → land transitions);
 *   - riseRateMPerKa: the rate of sea-level rise at the final drowning (m/ka = mm/yr);
 *   - timeNearCoastKa: time during which L(t) lay within ±coastBandM of s;
 *   - timeIntertidalKa: time during which s lay inside the tidal band, s − R/2 ≤ L(t) ≤ s + R/2.
 * Method: for a single curve the functions "highest level so far" (running maximum from the old end),
 * "lowest level from here to the present" (running minimum from the young end), the count of falling
 * crossings and the time-below-level distribution are all monotone or piecewise linear in the level,
 * so each is tabulated once over the curve's breakpoints and looked up per cell (by binary search,
 * started from a table of level buckets so most look-ups take a comparison or two: SortedLookup).
 * Complexity O(k² + n log k) for k curve rows and n cells (close to O(k² + n) in practice); per-age RSL grids are tabulated per
 * cell, O(n·g²) for g grids (meant for tens of grids, not hundreds).
 */
import { type Grid, type RunControl, TerrainInputError, Ticker, assertLayerSize } from "./grid";
import { type SeaLevelCurve, type SeaLevelModel, clipCurve, modelRange, validateSeaLevelModel } from "./sea-level";
import type { TidalRange } from "./flooding";

/** Status of a cell over the window (Uint8 layer). */
export const FLOOD_LAND_AT_END = 0; // land (not sea) at the young end of the window
export const FLOOD_DROWNED_IN_WINDOW = 1; // finally drowned inside the window
export const FLOOD_SEA_THROUGHOUT = 2; // sea for the whole window (floodingAgeKa = the window's oldest age, a lower bound)
export const FLOOD_NODATA = 255;

export interface FloodingHistory {
  floodingAgeKa: Float32Array;
  firstFloodingAgeKa: Float32Array;
  status: Uint8Array;
  reexposures: Uint8Array;
  riseRateMPerKa: Float32Array;
  timeNearCoastKa: Float32Array;
  timeIntertidalKa: Float32Array;
  /** The window used, ka BP. */
  windowKa: [number, number];
}

export interface FloodingHistoryOptions extends RunControl {
  /** Age window [youngest, oldest] in ka BP; defaults to the whole model. */
  windowKa?: [number, number];
  /** Palaeo-tidal range R, m (constant or per cell). Default 0. */
  tidalRange?: TidalRange;
  /** Half-height of the "near the coast" band, m: |L(t) − s| ≤ coastBandM. Default 5 m. */
  coastBandM?: number;
}

/** Pre-tabulated functions of one curve over a window. */
export interface CurveTables {
  old: number;
  young: number;
  /** Running max from the old end: vertices ordered old → young, level non-decreasing. */
  maxAge: Float64Array;
  maxLevel: Float64Array;
  /** Running min from the young end: vertices ordered young → old, level non-increasing. */
  minAge: Float64Array;
  minLevel: Float64Array;
  /** Falling crossings (sea → land as time goes forward): sorted lower and upper ends of (lo, hi]. */
  fallLo: Float64Array;
  fallHi: Float64Array;
  /** Time below level: breakpoint levels y, T(y) = time with L < y, and T(y+) = time with L ≤ y. */
  tLevel: Float64Array;
  tBelow: Float64Array;
  tBelowOrAt: Float64Array;
}

/** Tabulates a curve clipped to [young, old]. O(k²). */
export function tabulateCurve(curve: SeaLevelCurve, young: number, old: number): CurveTables {
  const c = clipCurve(curve, young, old);
  const a = c.ageKa; // increasing: young → old
  const L = c.levelM;
  const k = a.length;
  // Running max from the old end.
  const mxA: number[] = [a[k - 1]];
  const mxL: number[] = [L[k - 1]];
  let M = L[k - 1];
  for (let j = k - 2; j >= 0; j--) {
    const lOld = L[j + 1];
    const lYoung = L[j];
    if (lYoung <= M) continue; // stays flat at M over this segment
    if (lOld < M) {
      // crosses M inside the segment: R is flat until the crossing, then follows L
      const t = a[j + 1] + ((M - lOld) / (lYoung - lOld)) * (a[j] - a[j + 1]);
      mxA.push(t);
      mxL.push(M);
    }
    mxA.push(a[j]);
    mxL.push(lYoung);
    M = lYoung;
  }
  // Running min from the young end.
  const mnA: number[] = [a[0]];
  const mnL: number[] = [L[0]];
  let m = L[0];
  for (let j = 1; j < k; j++) {
    const lYoung = L[j - 1];
    const lOld = L[j];
    if (lOld >= m) continue;
    if (lYoung > m) {
      const t = a[j - 1] + ((lYoung - m) / (lYoung - lOld)) * (a[j] - a[j - 1]);
      mnA.push(t);
      mnL.push(m);
    }
    mnA.push(a[j]);
    mnL.push(lOld);
    m = lOld;
  }
  // Falling crossings: the segment from age a[j+1] (older) to a[j] (younger) with L[j+1] > L[j].
  const lo: number[] = [];
  const hi: number[] = [];
  for (let j = 0; j + 1 < k; j++) {
    if (L[j + 1] > L[j]) {
      lo.push(L[j]);
      hi.push(L[j + 1]);
    }
  }
  lo.sort((x, y) => x - y);
  hi.sort((x, y) => x - y);
  // Time below level.
  const levels = Array.from(new Set(Array.from(L))).sort((x, y) => x - y);
  const tB = new Float64Array(levels.length);
  const tBo = new Float64Array(levels.length);
  for (let q = 0; q < levels.length; q++) {
    const y = levels[q];
    let below = 0;
    let belowOrAt = 0;
    for (let j = 0; j + 1 < k; j++) {
      const d = a[j + 1] - a[j];
      const l0 = Math.min(L[j], L[j + 1]);
      const l1 = Math.max(L[j], L[j + 1]);
      if (l0 === l1) {
        if (l0 < y) below += d;
        if (l0 <= y) belowOrAt += d;
      } else {
        const f = Math.min(1, Math.max(0, (y - l0) / (l1 - l0)));
        below += d * f;
        belowOrAt += d * f;
      }
    }
    tB[q] = below;
    tBo[q] = belowOrAt;
  }
  return {
    old,
    young,
    maxAge: Float64Array.from(mxA),
    maxLevel: Float64Array.from(mxL),
    minAge: Float64Array.from(mnA),
    minLevel: Float64Array.from(mnL),
    fallLo: Float64Array.from(lo),
    fallHi: Float64Array.from(hi),
    tLevel: Float64Array.from(levels),
    tBelow: tB,
    tBelowOrAt: tBo,
  };
}

/** Number of entries of a sorted array strictly below x. */
export function countBelow(sorted: Float64Array, x: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * countBelow (and countAtOrBelow) on one sorted array, started from a table of equal-width level buckets: the bucket of x
 * gives how many entries lie below the bucket's lower edge, and a short forward scan finishes the
 * count, so a look-up costs one or two comparisons instead of a binary search. Same answers as
 * countBelow for every x (it falls back to it where the bucket edge is not ≤ x, and for NaN).
 * Building is O(m + buckets); with `buckets` = 0 every look-up is the binary search.
 */
export class SortedLookup {
  private readonly lo: number;
  private readonly scale: number;
  private readonly edges: Float64Array;
  private readonly start: Int32Array;
  constructor(
    readonly a: Float64Array,
    buckets: number,
  ) {
    const m = a.length;
    const lo = m > 0 ? a[0] : 0;
    const span = m > 1 ? a[m - 1] - lo : 0;
    const b = m > 1 && span > 0 && Number.isFinite(span) ? buckets : 0;
    this.lo = lo;
    this.scale = b > 0 ? b / span : 0;
    this.edges = new Float64Array(b);
    this.start = new Int32Array(b);
    for (let k = 0; k < b; k++) {
      const e = lo + k / this.scale;
      this.edges[k] = e;
      this.start[k] = countBelow(a, e);
    }
  }
  countBelow(x: number): number {
    const edges = this.edges;
    const nb = edges.length;
    if (nb === 0 || x !== x) return countBelow(this.a, x);
    if (x <= this.lo) return 0; // below the first entry (the deep cells, often)
    let k = Math.floor((x - this.lo) * this.scale);
    if (k >= nb) k = nb - 1;
    if (!(k >= 0) || edges[k] > x) return countBelow(this.a, x);
    const a = this.a;
    const m = a.length;
    let j = this.start[k];
    while (j < m && a[j] < x) j++;
    return j;
  }
  /** Number of entries ≤ x (from the same buckets: every entry below a bucket's edge is ≤ x too). */
  countAtOrBelow(x: number): number {
    const edges = this.edges;
    const nb = edges.length;
    if (nb !== 0 && x < this.lo) return 0;
    let k = nb === 0 || x !== x ? -1 : Math.floor((x - this.lo) * this.scale);
    if (k >= nb) k = nb - 1;
    const a = this.a;
    const m = a.length;
    if (!(k >= 0) || edges[k] > x) {
      let lo = 0;
      let hi = m;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (a[mid] <= x) lo = mid + 1;
        else hi = mid;
      }
      return lo;
    }
    let j = this.start[k];
    while (j < m && a[j] <= x) j++;
    return j;
  }
}

/** Look-ups over the sorted columns of one CurveTables. */
interface TableLookups {
  /** −minLevel, non-decreasing */
  negMinLevel: SortedLookup;
  maxLevel: SortedLookup;
  fallLo: SortedLookup;
  fallHi: SortedLookup;
  tLevel: SortedLookup;
}

/** Look-ups for one curve's tables: bucketed (four buckets per entry) when many cells will use them. */
function lookups(t: CurveTables, bucketed: boolean): TableLookups {
  const make = (a: Float64Array) => new SortedLookup(a, bucketed ? 4 * a.length : 0);
  return {
    negMinLevel: make(Float64Array.from(t.minLevel, (x) => -x)),
    maxLevel: make(t.maxLevel),
    fallLo: make(t.fallLo),
    fallHi: make(t.fallHi),
    tLevel: make(t.tLevel),
  };
}

/** Time (ka) within the window during which L < x. */
function timeBelow(t: CurveTables, ix: TableLookups, x: number): number {
  const y = t.tLevel;
  if (x <= y[0] || x > y[y.length - 1]) return timeBelowQ(t, x, 0);
  return timeBelowQ(t, x, ix.tLevel.countBelow(x));
}

/** timeBelow, given q = the number of tabulated levels below x (used only when y[0] < x ≤ y[last]). */
function timeBelowQ(t: CurveTables, x: number, q: number): number {
  const y = t.tLevel;
  const last = y.length - 1;
  if (x <= y[0]) return 0;
  if (x > y[last]) return t.tBelowOrAt[last];
  // y[q-1] < x ≤ y[q]
  if (y[q] === x) return t.tBelow[q];
  const f = (x - y[q - 1]) / (y[q] - y[q - 1]);
  return t.tBelowOrAt[q - 1] + f * (t.tBelow[q] - t.tBelowOrAt[q - 1]);
}

/** Time (ka) within the window during which lo ≤ L ≤ hi (measure; end points have measure zero except flat segments). */
function timeBetween(t: CurveTables, ix: TableLookups, lo: number, hi: number): number {
  if (hi < lo) return 0;
  // L ≤ hi minus L < lo
  const y = t.tLevel;
  const q = ix.tLevel.countBelow(hi);
  const belowOrAtHi = q < y.length && y[q] === hi ? t.tBelowOrAt[q] : timeBelowQ(t, hi, q);
  return Math.max(0, belowOrAtHi - timeBelow(t, ix, lo));
}

/**
 * Flooding history of one spill elevation against tabulated curve functions; writes into the output
 * arrays at index i. O(log k).
 */
function evaluate(t: CurveTables, ix: TableLookups, s: number, R: number, band: number, out: FloodingHistory, i: number): void {
  // First flooding: the oldest age at which L ≥ s (running max reaches s).
  const mxL = t.maxLevel;
  const mxA = t.maxAge;
  if (mxL[0] >= s) out.firstFloodingAgeKa[i] = t.old;
  else if (mxL[mxL.length - 1] < s) out.firstFloodingAgeKa[i] = NaN;
  else {
    const j = ix.maxLevel.countBelow(s); // first vertex with level ≥ s; j ≥ 1
    const f = (s - mxL[j - 1]) / (mxL[j] - mxL[j - 1]);
    out.firstFloodingAgeKa[i] = mxA[j - 1] + f * (mxA[j] - mxA[j - 1]);
  }
  // Final drowning: the oldest age from which L ≥ s up to the young end (running min from the young end).
  const mnL = t.minLevel;
  const mnA = t.minAge;
  if (mnL[0] < s) {
    out.status[i] = FLOOD_LAND_AT_END;
    out.floodingAgeKa[i] = NaN;
    out.riseRateMPerKa[i] = NaN;
  } else if (mnL[mnL.length - 1] >= s) {
    out.status[i] = FLOOD_SEA_THROUGHOUT;
    out.floodingAgeKa[i] = t.old;
    out.riseRateMPerKa[i] = NaN;
  } else {
    // mnL is non-increasing: find the first vertex with level < s, i.e. the number of vertices with
    // level ≥ s, i.e. of −level ≤ −s (a look-up on the negated levels; binary search for NaN)
    let j: number;
    if (s === s) j = ix.negMinLevel.countAtOrBelow(-s);
    else {
      let lo = 1;
      let hi = mnL.length - 1;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (mnL[mid] < s) hi = mid;
        else lo = mid + 1;
      }
      j = lo;
    }
    // mnL[j-1] ≥ s > mnL[j]
    const f = (mnL[j - 1] - s) / (mnL[j - 1] - mnL[j]);
    out.status[i] = FLOOD_DROWNED_IN_WINDOW;
    out.floodingAgeKa[i] = mnA[j - 1] + f * (mnA[j] - mnA[j - 1]);
    out.riseRateMPerKa[i] = (mnL[j - 1] - mnL[j]) / (mnA[j] - mnA[j - 1]);
  }
  // Re-exposures: falling segments with lo < s ≤ hi.
  const re = ix.fallLo.countBelow(s) - ix.fallHi.countBelow(s);
  out.reexposures[i] = re > 254 ? 254 : re;
  out.timeNearCoastKa[i] = timeBetween(t, ix, s - band, s + band);
  out.timeIntertidalKa[i] = R > 0 ? timeBetween(t, ix, s - R / 2, s + R / 2) : 0;
}

function emptyHistory(n: number, windowKa: [number, number]): FloodingHistory {
  return {
    floodingAgeKa: new Float32Array(n),
    firstFloodingAgeKa: new Float32Array(n),
    status: new Uint8Array(n),
    reexposures: new Uint8Array(n),
    riseRateMPerKa: new Float32Array(n),
    timeNearCoastKa: new Float32Array(n),
    timeIntertidalKa: new Float32Array(n),
    windowKa,
  };
}

function setNodata(out: FloodingHistory, i: number): void {
  out.floodingAgeKa[i] = NaN;
  out.firstFloodingAgeKa[i] = NaN;
  out.status[i] = FLOOD_NODATA;
  out.reexposures[i] = 255;
  out.riseRateMPerKa[i] = NaN;
  out.timeNearCoastKa[i] = NaN;
  out.timeIntertidalKa[i] = NaN;
}

/**
 * Flooding history of every cell (see the module comment for each layer's meaning).
 *
 * Preconditions: `spillM` from spillElevation on `elev`'s grid (+Infinity = never reached: land
 * throughout, zero time near the coast); a sea-level model whose range covers the window (else
 * TerrainInputError naming the ages). Regional curves use each cell's zone; for per-age RSL grids the
 * cell's own level series is used against the single spill elevation (exact for uniform sea level, an
 * approximation where the RSL surface tilts across a basin). Complexity O(k² + n log k) for curves,
 * O(n·g²) for g RSL grids.
 */
export function floodingHistory(
  elev: Grid<Float32Array>,
  spillM: Float32Array,
  model: SeaLevelModel,
  options: FloodingHistoryOptions = {},
): FloodingHistory {
  const { spec, nodata } = elev;
  const n = spec.width * spec.height;
  assertLayerSize(spec, spillM, "spill elevation layer");
  validateSeaLevelModel(model, spec);
  const [mYoung, mOld] = modelRange(model);
  const [young, old] = options.windowKa ?? [mYoung, mOld];
  if (!(old > young)) throw new TerrainInputError(`age window must have oldest > youngest, got ${young}–${old} ka`);
  if (young < mYoung || old > mOld) {
    throw new TerrainInputError(`age window ${young}–${old} ka is outside the sea-level model, which covers ${mYoung}–${mOld} ka BP`);
  }
  const tidal = options.tidalRange ?? 0;
  if (typeof tidal !== "number") assertLayerSize(spec, tidal, "tidal-range layer");
  else if (!(tidal >= 0)) throw new TerrainInputError(`tidal range must be ≥ 0 m, got ${tidal}`);
  const band = options.coastBandM ?? 5;
  if (!(band >= 0)) throw new TerrainInputError(`coast band must be ≥ 0 m, got ${band}`);
  const out = emptyHistory(n, [young, old]);
  const ticker = new Ticker(options, n, "flooding age");
  ticker.start();

  if (model.kind === "curve" || model.kind === "regional") {
    const curves = model.kind === "curve" ? [model.curve] : model.curves;
    const tables = curves.map((c) => tabulateCurve(c, young, old));
    const ix = tables.map((t) => lookups(t, true));
    for (let i = 0; i < n; i++) {
      const zone = model.kind === "curve" ? 0 : model.zone[i];
      if (nodata[i] || zone === 255) {
        setNodata(out, i);
        continue;
      }
      const R = typeof tidal === "number" ? tidal : tidal[i];
      evaluate(tables[zone], ix[zone], spillM[i], R, band, out, i);
      ticker.tick(i);
    }
  } else {
    // Per-age RSL grids: build this cell's curve from the grids and tabulate it (k small).
    const ages = model.agesKa;
    const k = ages.length;
    const levels = new Float64Array(k);
    const curve: SeaLevelCurve = {
      name: "RSL grid cell",
      label: model.label,
      citation: model.citation,
      ageKa: ages,
      levelM: levels,
      sigmaM: new Float64Array(k).fill(NaN),
      warnings: [],
    };
    for (let i = 0; i < n; i++) {
      if (nodata[i]) {
        setNodata(out, i);
        continue;
      }
      let bad = false;
      for (let q = 0; q < k; q++) {
        levels[q] = model.levels[q][i];
        if (!Number.isFinite(levels[q])) bad = true;
      }
      if (bad) {
        setNodata(out, i);
        continue;
      }
      const R = typeof tidal === "number" ? tidal : tidal[i];
      const t = tabulateCurve(curve, young, old);
      evaluate(t, lookups(t, false), spillM[i], R, band, out, i);
      ticker.tick(i);
    }
  }
  ticker.finish();
  return out;
}
