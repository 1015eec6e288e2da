/**
 * Choosing core targets from the allowed cells (design §6, issue 11): best-first with a minimum
 * spacing, transects across a mapped feature, control cores in the low and medium classes, "learn
 * most" where the horizon or the model is least certain, and a combiner that mixes them and keeps the
 * spacing across all. Then each target's record: waypoint name, coordinates (project CRS; WGS84 in
 * decimal degrees and degrees–decimal minutes), water depth, depth to the horizon (m and two-way
 * time), nearest survey line and fix, planned penetration, nearby exclusions, ages when it was land,
 * score and each factor's contribution.
 *
 * Every target sits on the centre of an allowed cell, so the spacing guarantee is exact between any
 * two targets, whatever mode chose them.
 */
import Flatbush from "flatbush";
import proj4 from "proj4";
import { ScoringInputError } from "./errors.ts";
import type { GridShape } from "./potential.ts";
import { Mulberry32 } from "./random.ts";
import { type ConstraintSet, checkFeatureWidth, penetrationTable } from "./target-constraints.ts";
import { normaliseWeights, type WeightedFactor } from "./weighted-sum.ts";

/** A grid with its top-left corner in the project CRS (docs/layers.md manifest `grid`). */
export interface PlacedGrid extends GridShape {
  originX: number;
  originY: number;
}

/** Centre of a cell: x = originX + (col + 0.5)·cellSizeX, y = originY − (row + 0.5)·cellSizeY (row 0 north). O(1). */
export function cellCentre(grid: PlacedGrid, cell: number): [number, number] {
  const col = cell % grid.width;
  const row = (cell - col) / grid.width;
  return [grid.originX + (col + 0.5) * grid.cellSizeX, grid.originY - (row + 0.5) * grid.cellSizeY];
}

/** The cell holding a point (edges belong to the cell east / south of them), or −1 outside the grid. O(1). */
export function cellAt(grid: PlacedGrid, x: number, y: number): number {
  const col = Math.floor((x - grid.originX) / grid.cellSizeX);
  const row = Math.floor((grid.originY - y) / grid.cellSizeY);
  if (!(col >= 0 && col < grid.width && row >= 0 && row < grid.height)) return -1;
  return row * grid.width + col;
}

// ---- spacing -------------------------------------------------------------------------------------

/**
 * The shared spacing state of one selection: a Flatbush index (Agafonkin, flatbush 4.7.0, a packed
 * Hilbert R-tree) over the centres of the allowed cells, and a per-cell mark of cells already taken or
 * closer than the minimum spacing to a taken target. Taking a target marks every indexed cell whose
 * centre lies at a distance < minSpacingM from it (bounding-box search, then the exact distance).
 */
export class SpacingState {
  readonly grid: PlacedGrid;
  readonly minSpacingM: number;
  /** 1 where a cell may no longer be taken (taken, or too close to a taken target) */
  readonly blocked: Uint8Array;
  private readonly cells: Int32Array;
  private readonly index: Flatbush | null;

  /** O(m log m) for m allowed cells; memory about 40 bytes per allowed cell. */
  constructor(grid: PlacedGrid, allowed: Uint8Array, minSpacingM: number) {
    if (!(minSpacingM >= 0) || !Number.isFinite(minSpacingM))
      throw new ScoringInputError(`The minimum spacing must be a number of metres, zero or more (got ${minSpacingM}).`, "minSpacingM");
    this.grid = grid;
    this.minSpacingM = minSpacingM;
    const n = grid.width * grid.height;
    if (allowed.length !== n) throw new ScoringInputError(`The allowed mask has ${allowed.length} cells; the grid has ${n}.`);
    this.blocked = new Uint8Array(n);
    let m = 0;
    for (let i = 0; i < n; i++) if (allowed[i] === 1) m++;
    this.cells = new Int32Array(m);
    m = 0;
    for (let i = 0; i < n; i++) {
      if (allowed[i] === 1) this.cells[m++] = i;
      else this.blocked[i] = 1;
    }
    if (m === 0) {
      this.index = null;
      return;
    }
    const index = new Flatbush(m);
    for (let k = 0; k < m; k++) {
      const [x, y] = cellCentre(grid, this.cells[k]);
      index.add(x, y, x, y);
    }
    index.finish();
    this.index = index;
  }

  /** True when the cell is allowed and at least the minimum spacing from every target taken so far. O(1). */
  free(cell: number): boolean {
    return this.blocked[cell] === 0;
  }

  /** Takes a free cell as a target and blocks its neighbourhood. O(log m + cells within the spacing). */
  take(cell: number): void {
    if (this.blocked[cell] !== 0) throw new Error(`cell ${cell} is not free`);
    this.blocked[cell] = 1;
    const s = this.minSpacingM;
    if (s === 0 || this.index === null) return;
    const [x, y] = cellCentre(this.grid, cell);
    const s2 = s * s;
    const hits = this.index.search(x - s, y - s, x + s, y + s);
    for (const k of hits) {
      const j = this.cells[k];
      const [xj, yj] = cellCentre(this.grid, j);
      const dx = xj - x;
      const dy = yj - y;
      if (dx * dx + dy * dy < s2) this.blocked[j] = 1;
    }
  }
}

// ---- modes ---------------------------------------------------------------------------------------

export type SelectionModeKind = "best-first" | "transect" | "control" | "learn-most";

/** One chosen cell before its record is filled in. */
export interface Pick {
  cell: number;
  x: number;
  y: number;
  mode: SelectionModeKind;
  /** what the mode ranked by: the score (best-first, control), the uncertainty (learn-most), the offset (transect) */
  key: number;
  /** for transect stations */
  transect?: { name: string; number: number; offsetM: number; role: "axis" | "margin" | "interfluve" };
  /** for control cores: the class index drawn from */
  classIndex?: number;
}

/** Cells with a finite key that are still free, by key descending (ties: lower cell index first). O(m log m). */
function byKeyDescending(state: SpacingState, key: Float32Array): Int32Array {
  const n = key.length;
  let m = 0;
  for (let i = 0; i < n; i++) if (state.blocked[i] === 0 && key[i] === key[i]) m++;
  const order = new Int32Array(m);
  m = 0;
  for (let i = 0; i < n; i++) if (state.blocked[i] === 0 && key[i] === key[i]) order[m++] = i;
  order.sort((a, b) => key[b] - key[a] || a - b);
  return order;
}

function checkCount(count: number, what: string): void {
  if (!Number.isInteger(count) || count < 0) throw new ScoringInputError(`The number of ${what} must be a whole number, zero or more (got ${count}).`, "count");
}

/**
 * Common practice, no source (greedy selection with a minimum distance, "non-maximum suppression").
 *
 * Up to `count` free cells by `key` descending (NaN cells never), each at least the minimum spacing
 * from every target taken before (in this or an earlier mode); takes them in `state`. The greedy
 * walk is not an optimal packing: it keeps the best cell, then the best cell not too close to it, and
 * so on. Preconditions: key on the state's grid. O(m log m + count·(log m + cells within spacing)).
 */
export function selectBestFirst(state: SpacingState, key: Float32Array, count: number, mode: "best-first" | "learn-most" = "best-first"): Pick[] {
  checkCount(count, "targets");
  if (key.length !== state.blocked.length) throw new ScoringInputError(`The ${mode} layer has ${key.length} cells; the grid has ${state.blocked.length}.`);
  const picks: Pick[] = [];
  if (count === 0) return picks;
  const order = byKeyDescending(state, key);
  for (let k = 0; k < order.length && picks.length < count; k++) {
    const c = order[k];
    if (!state.free(c)) continue;
    state.take(c);
    const [x, y] = cellCentre(state.grid, c);
    picks.push({ cell: c, x, y, mode, key: key[c] });
  }
  return picks;
}

/**
 * Common practice, no source (stratified random control sampling, so a programme can learn its model
 * was wrong: design §6).
 *
 * Up to `count` control cores drawn at random among the free cells whose class (a
 * `classifyRaster` output, 255 = no score) is one of `classes`, taking the classes in turn (round
 * robin, so each wanted class gets an even share while it has free cells) and, within a class, cells
 * in a Fisher–Yates order from Mulberry32(`seed`) — reproducible from the seed. Each pick keeps the
 * minimum spacing. Preconditions: classes on the state's grid. O(n + count·spacing work).
 */
export function selectControl(state: SpacingState, classes: Uint8Array, wanted: readonly number[], count: number, seed: number, score: Float32Array): Pick[] {
  checkCount(count, "control cores");
  if (classes.length !== state.blocked.length) throw new ScoringInputError(`The class layer has ${classes.length} cells; the grid has ${state.blocked.length}.`);
  if (wanted.length === 0) throw new ScoringInputError("Control cores need at least one class to draw from (e.g. low and medium).", "classes");
  const rng = new Mulberry32(seed);
  const lists: Int32Array[] = wanted.map((cls) => {
    let m = 0;
    for (let i = 0; i < classes.length; i++) if (classes[i] === cls && state.blocked[i] === 0) m++;
    const a = new Int32Array(m);
    m = 0;
    for (let i = 0; i < classes.length; i++) if (classes[i] === cls && state.blocked[i] === 0) a[m++] = i;
    for (let k = a.length - 1; k > 0; k--) {
      const j = rng.nextInt(k + 1);
      const t = a[k];
      a[k] = a[j];
      a[j] = t;
    }
    return a;
  });
  const cursor = new Array<number>(wanted.length).fill(0);
  const picks: Pick[] = [];
  let progress = true;
  while (picks.length < count && progress) {
    progress = false;
    for (let w = 0; w < wanted.length && picks.length < count; w++) {
      const a = lists[w];
      while (cursor[w] < a.length && !state.free(a[cursor[w]])) cursor[w]++;
      if (cursor[w] >= a.length) continue;
      const c = a[cursor[w]++];
      state.take(c);
      const [x, y] = cellCentre(state.grid, c);
      picks.push({ cell: c, x, y, mode: "control", key: score[c], classIndex: wanted[w] });
      progress = true;
    }
  }
  return picks;
}

/** A transect request: perpendiculars across a mapped feature (a palaeochannel, a shoreline) along its axis. */
export interface TransectRequest {
  /** e.g. "Channel A" */
  name: string;
  /** the feature's axis, project CRS, at least two distinct vertices */
  axis: Array<[number, number]>;
  /** the feature's width, m (the "axis" stations lie within half of it) */
  featureWidthM: number;
  /** width of the margin beyond each side of the feature, m (stations beyond it are "interfluve") */
  marginWidthM: number;
  /** how far each perpendicular reaches on each side of the axis, m */
  halfLengthM: number;
  /** distance between stations along a perpendicular, m */
  stationSpacingM: number;
  /** distances along the axis at which to cross it, m from its first vertex */
  chainagesM: number[];
}

/**
 * Common practice, no source (a transect of cores across a channel: axis, margins, interfluves).
 *
 * Stations along the perpendiculars to `axis` at each chainage, at offsets k·stationSpacingM
 * (|offset| ≤ halfLengthM), taken axis first then outwards (|offset| ascending, the left side first),
 * each snapped to the centre of its cell. Role by |offset|: ≤ featureWidth/2 "axis", ≤ featureWidth/2
 * + marginWidth "margin", else "interfluve". A station off the grid, on a refused cell or within the
 * minimum spacing of a target already taken is skipped and counted in `skipped`. A feature narrower
 * than the positioning tolerance is refused ({@link checkFeatureWidth}); a station spacing below the
 * minimum spacing is refused (every other station would be dropped).
 * Perpendicular direction: the axis segment holding the chainage (at a vertex, the segment that
 * starts there). O(vertices + stations·spacing work).
 */
export function selectTransect(state: SpacingState, req: TransectRequest, positioningToleranceM: number): { picks: Pick[]; skipped: number; notes: string[] } {
  checkFeatureWidth(req.featureWidthM, positioningToleranceM);
  const f = (v: number) => typeof v === "number" && Number.isFinite(v);
  if (!f(req.stationSpacingM) || req.stationSpacingM <= 0)
    throw new ScoringInputError(`The station spacing must be a positive number of metres (got ${req.stationSpacingM}).`, "stationSpacingM");
  if (req.stationSpacingM < state.minSpacingM)
    throw new ScoringInputError(
      `The transect's station spacing (${req.stationSpacingM} m) is below the minimum spacing between targets (${state.minSpacingM} m).`,
      "stationSpacingM",
    );
  if (!f(req.halfLengthM) || req.halfLengthM < 0) throw new ScoringInputError(`The transect's half-length must be zero or more metres (got ${req.halfLengthM}).`, "halfLengthM");
  if (!f(req.marginWidthM) || req.marginWidthM < 0) throw new ScoringInputError(`The margin width must be zero or more metres (got ${req.marginWidthM}).`, "marginWidthM");
  const axis = req.axis;
  if (!Array.isArray(axis) || axis.length < 2 || axis.some((p) => !f(p[0]) || !f(p[1])))
    throw new ScoringInputError(`The axis of "${req.name}" needs at least two vertices with finite coordinates.`, "axis");
  const cum = [0];
  for (let k = 1; k < axis.length; k++) cum.push(cum[k - 1] + Math.hypot(axis[k][0] - axis[k - 1][0], axis[k][1] - axis[k - 1][1]));
  const total = cum[cum.length - 1];
  if (!(total > 0)) throw new ScoringInputError(`The axis of "${req.name}" has no length.`, "axis");
  if (req.chainagesM.length === 0) throw new ScoringInputError(`Say where the transects cross the axis of "${req.name}" (at least one distance along it).`, "chainagesM");
  for (const c of req.chainagesM)
    if (!f(c) || c < 0 || c > total)
      throw new ScoringInputError(`A transect of "${req.name}" is placed at ${c} m along the axis, which is ${total.toFixed(1)} m long.`, "chainagesM");
  const kMax = Math.floor(req.halfLengthM / req.stationSpacingM + 1e-9);
  const offsets: number[] = [0];
  for (let k = 1; k <= kMax; k++) offsets.push(k * req.stationSpacingM, -k * req.stationSpacingM);
  const half = req.featureWidthM / 2;
  const picks: Pick[] = [];
  let skipped = 0;
  req.chainagesM.forEach((ch, t) => {
    // the last segment of positive length that starts at or before the chainage (repeated vertices skipped)
    let seg = -1;
    for (let s = 0; s < axis.length - 1; s++) if (cum[s + 1] > cum[s] && (seg < 0 || cum[s] <= ch)) seg = s;
    const len = cum[seg + 1] - cum[seg];
    const ux = (axis[seg + 1][0] - axis[seg][0]) / len;
    const uy = (axis[seg + 1][1] - axis[seg][1]) / len;
    const along = ch - cum[seg];
    const px = axis[seg][0] + ux * along;
    const py = axis[seg][1] + uy * along;
    // left normal of the direction of travel
    const nx = -uy;
    const ny = ux;
    for (const o of offsets) {
      const cell = cellAt(state.grid, px + nx * o, py + ny * o);
      if (cell < 0 || !state.free(cell)) {
        skipped++;
        continue;
      }
      state.take(cell);
      const [x, y] = cellCentre(state.grid, cell);
      const a = Math.abs(o);
      const role = a <= half ? "axis" : a <= half + req.marginWidthM ? "margin" : "interfluve";
      picks.push({ cell, x, y, mode: "transect", key: o, transect: { name: req.name, number: t + 1, offsetM: o, role } });
    }
  });
  const notes: string[] = [];
  if (skipped > 0)
    notes.push(`${skipped} station${skipped === 1 ? "" : "s"} of "${req.name}" fell off the grid, on refused ground or within the minimum spacing of another target, and were left out.`);
  return { picks, skipped, notes };
}

// ---- uncertainty ---------------------------------------------------------------------------------

/**
 * Lewis, D.D. & Gale, W.A. (1994) "A sequential algorithm for training text classifiers", SIGIR '94,
 * 3–12 (uncertainty sampling: ask where the classifier is least sure).
 *
 * The vote spread p(1 − p) of a model's probability (e.g. a forest's share of trees voting "site"):
 * 0 where all agree, 0.25 at p = 0.5. NaN stays NaN. O(n).
 */
export function voteSpread(p: Float32Array): Float32Array {
  const out = new Float32Array(p.length);
  for (let i = 0; i < p.length; i++) {
    const v = p[i];
    out[i] = v === v ? v * (1 - v) : NaN;
  }
  return out;
}

/**
 * Common practice, no source.
 *
 * How uncertain the horizon is, 0–1: the distance from the nearest line with picks (layer
 * `dist_pick_line`) over `saturationM`, capped at 1; unassessed cells (layer `unassessed` = 1) are 1.
 * NaN distance on an assessed cell stays NaN. Preconditions: saturationM > 0. O(n).
 */
export function horizonUncertainty(distPickLineM: Float32Array, unassessed: Uint8Array | null, saturationM: number): Float32Array {
  if (!(saturationM > 0)) throw new ScoringInputError(`The distance at which the horizon counts as fully uncertain must be positive (got ${saturationM}).`);
  const out = new Float32Array(distPickLineM.length);
  for (let i = 0; i < out.length; i++) {
    if (unassessed !== null && unassessed[i] === 1) out[i] = 1;
    else {
      const d = distPickLineM[i];
      out[i] = d === d ? Math.min(d / saturationM, 1) : NaN;
    }
  }
  return out;
}

// ---- the combiner --------------------------------------------------------------------------------

export type SelectionMode =
  | { kind: "best-first"; count: number }
  | { kind: "transect"; transect: TransectRequest }
  | { kind: "control"; count: number; classes: number[]; seed: number }
  | { kind: "learn-most"; count: number };

export interface SelectionField {
  grid: PlacedGrid;
  /** from constraintMask */
  allowed: Uint8Array;
  /** the score the list ranks by (potential, or occupation where preservation is inactive); NaN = unscored */
  score: Float32Array;
  /** classifyRaster of the score with the project classification (needed for control cores) */
  classes?: Uint8Array;
  /** uncertainty 0–1 (needed for learn-most): horizonUncertainty, voteSpread, or the larger of both */
  uncertainty?: Float32Array;
}

export interface SelectionResult {
  picks: Pick[];
  /** per mode in the order given: how many were asked for and taken */
  modes: Array<{ kind: SelectionModeKind; asked: number | null; taken: number }>;
  notes: string[];
}

/**
 * Common practice, no source.
 *
 * Runs the modes in the order given on one shared {@link SpacingState}, so every pair of targets —
 * within a mode or across modes — is at least `minSpacingM` apart (centre to centre). Put transects
 * first to keep their stations (later modes fill around them). A mode that finds fewer cells than
 * asked says so in `notes`. Preconditions: layers on the grid; `classes` for control, `uncertainty`
 * for learn-most — else {@link ScoringInputError}. O(modes · (m log m)) plus the spacing work.
 */
export function selectTargets(field: SelectionField, modes: readonly SelectionMode[], options: { minSpacingM: number; positioningToleranceM: number }): SelectionResult {
  const n = field.grid.width * field.grid.height;
  if (field.score.length !== n) throw new ScoringInputError(`The score layer has ${field.score.length} cells; the grid has ${n}.`);
  const state = new SpacingState(field.grid, field.allowed, options.minSpacingM);
  const picks: Pick[] = [];
  const notes: string[] = [];
  const summary: SelectionResult["modes"] = [];
  const short = (what: string, asked: number, got: number) => {
    if (got < asked) notes.push(`${what}: ${got} of ${asked} found — no more allowed cells at the minimum spacing.`);
  };
  for (const m of modes) {
    if (m.kind === "best-first") {
      const p = selectBestFirst(state, field.score, m.count);
      short("Best-first", m.count, p.length);
      picks.push(...p);
      summary.push({ kind: m.kind, asked: m.count, taken: p.length });
    } else if (m.kind === "learn-most") {
      if (!field.uncertainty) throw new ScoringInputError("Learn-most targets need an uncertainty layer (distance from picks, or a model's vote spread).", "uncertainty");
      const p = selectBestFirst(state, field.uncertainty, m.count, "learn-most");
      short("Learn most", m.count, p.length);
      picks.push(...p);
      summary.push({ kind: m.kind, asked: m.count, taken: p.length });
    } else if (m.kind === "control") {
      if (!field.classes) throw new ScoringInputError("Control cores need the score classified with the project classification.", "classes");
      const p = selectControl(state, field.classes, m.classes, m.count, m.seed, field.score);
      short("Control cores", m.count, p.length);
      picks.push(...p);
      summary.push({ kind: m.kind, asked: m.count, taken: p.length });
    } else if (m.kind === "transect") {
      const r = selectTransect(state, m.transect, options.positioningToleranceM);
      notes.push(...r.notes);
      picks.push(...r.picks);
      summary.push({ kind: m.kind, asked: null, taken: r.picks.length });
    } else {
      throw new ScoringInputError(`Unknown selection mode "${(m as { kind: string }).kind}".`, "modes");
    }
  }
  return { picks, modes: summary, notes };
}

/**
 * Common practice, no source (largest-remainder apportionment, Hamilton's method).
 *
 * Splits `total` targets between modes by shares (e.g. 0.7 best-first, 0.2 control, 0.1 learn most):
 * floors first, then the largest remainders get one more (ties to the earlier mode). Preconditions:
 * total a whole number ≥ 0; shares ≥ 0 with a positive sum. O(k log k).
 */
export function countsFromShares(total: number, shares: readonly number[]): number[] {
  checkCount(total, "targets");
  const sum = shares.reduce((a, b) => a + b, 0);
  if (shares.length === 0 || shares.some((s) => !(s >= 0) || !Number.isFinite(s)) || !(sum > 0))
    throw new ScoringInputError("Shares must be zero or more, with at least one above zero.", "shares");
  const exact = shares.map((s) => (total * s) / sum);
  const out = exact.map(Math.floor);
  let left = total - out.reduce((a, b) => a + b, 0);
  const order = exact.map((e, k) => k).sort((a, b) => exact[b] - out[b] - (exact[a] - out[a]) || a - b);
  for (let k = 0; left > 0; k++, left--) out[order[k % order.length]]++;
  return out;
}

// ---- coordinates ---------------------------------------------------------------------------------

/**
 * Common practice, no source (degrees and decimal minutes, as chart plotters and ship GPS show them).
 *
 * −33.5125 → "33°30.750′S" (latitude); 151.25 → "151°15.000′E" (longitude). Minutes are rounded to
 * `decimals` places with the carry into degrees (59.9999′ → next degree), padded to two digits; zero
 * is N / E. Preconditions: finite value, |lat| ≤ 90, |lon| ≤ 180. O(1).
 */
export function formatDdm(value: number, axis: "lat" | "lon", decimals = 3): string {
  const lim = axis === "lat" ? 90 : 180;
  if (!Number.isFinite(value) || Math.abs(value) > lim) throw new ScoringInputError(`${value} is not a ${axis === "lat" ? "latitude" : "longitude"}.`);
  const scale = 10 ** decimals;
  const units = Math.round(Math.abs(value) * 60 * scale);
  const perDegree = 60 * scale;
  const deg = Math.floor(units / perDegree);
  const rem = units - deg * perDegree;
  const minutes = (rem / scale).toFixed(decimals).padStart(decimals > 0 ? decimals + 3 : 2, "0");
  const hemi = axis === "lat" ? (value < 0 && units > 0 ? "S" : "N") : value < 0 && units > 0 ? "W" : "E";
  return `${deg}°${minutes}′${hemi}`;
}

/** A waypoint name: prefix + rank, two digits (three from 100), e.g. "CT01". Common practice, no source. O(1). */
export function waypointName(prefix: string, rank: number, total: number): string {
  const digits = Math.max(2, String(total).length);
  return `${prefix}${String(rank).padStart(digits, "0")}`;
}

/**
 * Formula (check-values.md "Sub-bottom picks": thickness = v·TWT/2, so TWT = 2·d/v).
 * Two-way travel time in milliseconds to a depth below seabed at a velocity. d = 2.0 m at 1600 m/s → 2.5 ms. O(1).
 */
export function twoWayTimeMs(depthM: number, velocityMps: number): number {
  return ((2 * depthM) / velocityMps) * 1000;
}

// ---- survey lines and exclusions -----------------------------------------------------------------

/** A survey line with its navigation fixes (project CRS), in shot order. */
export interface SurveyLine {
  name: string;
  fixes: Array<{ x: number; y: number; fix: string }>;
}

/** The nearest survey line to a point, and its nearest fix. */
export interface NearestLine {
  line: string;
  /** distance to the line (its segments between fixes), m */
  distanceM: number;
  fix: string;
  fixDistanceM: number;
}

function segDist(px: number, py: number, ax: number, ay: number, bx: number, by: number): number {
  const dx = bx - ax;
  const dy = by - ay;
  const l2 = dx * dx + dy * dy;
  let t = l2 > 0 ? ((px - ax) * dx + (py - ay) * dy) / l2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  return Math.hypot(px - (ax + t * dx), py - (ay + t * dy));
}

/**
 * Common practice, no source.
 *
 * An index of survey lines (Flatbush over fixes and over segments) answering "which line and fix is
 * nearest": the nearest fix by a k-nearest search; the nearest line by the exact point-to-segment
 * distance over the segments within that fix's distance (the line can only be nearer than its fixes).
 * Build O(F log F) for F fixes; each query O(log F + nearby segments).
 */
export class SurveyLineIndex {
  private readonly fixes: Array<{ line: number; k: number }> = [];
  private readonly segs: Array<{ line: number; k: number }> = [];
  private readonly fixIndex: Flatbush | null = null;
  private readonly segIndex: Flatbush | null = null;
  constructor(private readonly lines: readonly SurveyLine[]) {
    lines.forEach((l, li) => l.fixes.forEach((_, k) => this.fixes.push({ line: li, k })));
    lines.forEach((l, li) => {
      for (let k = 0; k + 1 < l.fixes.length; k++) this.segs.push({ line: li, k });
    });
    if (this.fixes.length > 0) {
      const fi = new Flatbush(this.fixes.length);
      for (const { line, k } of this.fixes) {
        const p = lines[line].fixes[k];
        fi.add(p.x, p.y, p.x, p.y);
      }
      fi.finish();
      this.fixIndex = fi;
    }
    if (this.segs.length > 0) {
      const si = new Flatbush(this.segs.length);
      for (const { line, k } of this.segs) {
        const a = lines[line].fixes[k];
        const b = lines[line].fixes[k + 1];
        si.add(Math.min(a.x, b.x), Math.min(a.y, b.y), Math.max(a.x, b.x), Math.max(a.y, b.y));
      }
      si.finish();
      this.segIndex = si;
    }
  }

  nearest(x: number, y: number): NearestLine | null {
    if (this.fixIndex === null) return null;
    const [fk] = this.fixIndex.neighbors(x, y, 1);
    const f = this.fixes[fk];
    const fp = this.lines[f.line].fixes[f.k];
    const fixDistanceM = Math.hypot(fp.x - x, fp.y - y);
    let best = fixDistanceM;
    let bestLine = f.line;
    if (this.segIndex !== null) {
      const r = fixDistanceM;
      for (const sk of this.segIndex.search(x - r, y - r, x + r, y + r)) {
        const s = this.segs[sk];
        const a = this.lines[s.line].fixes[s.k];
        const b = this.lines[s.line].fixes[s.k + 1];
        const d = segDist(x, y, a.x, a.y, b.x, b.y);
        if (d < best) {
          best = d;
          bestLine = s.line;
        }
      }
    }
    // the nearest fix reported is the nearest fix on the nearest line
    let fix = fp.fix;
    let fd = fixDistanceM;
    if (bestLine !== f.line) {
      fd = Infinity;
      for (const p of this.lines[bestLine].fixes) {
        const d = Math.hypot(p.x - x, p.y - y);
        if (d < fd) {
          fd = d;
          fix = p.fix;
        }
      }
    }
    return { line: this.lines[bestLine].name, distanceM: best, fix, fixDistanceM: fd };
  }
}

/** An exclusion feature (wreck, anomaly, find spot) with its buffer; parts are points, lines or rings in the project CRS. */
export interface ExclusionFeature {
  name: string;
  kind: string;
  bufferM: number;
  parts: Array<Array<[number, number]>>;
}

/** Distance from a point to a feature's mapped geometry (vertices and edges; a point inside a ring counts as its edge distance). */
function featureDistance(x: number, y: number, f: ExclusionFeature): number {
  let best = Infinity;
  for (const part of f.parts) {
    if (part.length === 1) best = Math.min(best, Math.hypot(part[0][0] - x, part[0][1] - y));
    for (let k = 0; k + 1 < part.length; k++) best = Math.min(best, segDist(x, y, part[k][0], part[k][1], part[k + 1][0], part[k + 1][1]));
  }
  return best;
}

// ---- target records ------------------------------------------------------------------------------

export interface FactorContribution {
  id: string;
  /** normalised weight w (Σ w = 1) */
  weight: number;
  /** the factor's score s at the cell (0–1, after its curve) */
  factorScore: number;
  /** w·s: the factor's share of the occupation score */
  contribution: number;
}

export interface CoreTarget {
  rank: number;
  waypoint: string;
  mode: SelectionModeKind;
  /** e.g. "Channel A transect 2, margin, −150 m"; control: the class drawn from */
  modeDetail: string;
  cell: number;
  x: number;
  y: number;
  epsg: number;
  lon: number;
  lat: number;
  lonDdm: string;
  latDdm: string;
  waterDepthM: number;
  /** m below seabed; null where the horizon is unassessed */
  horizonDepthM: number | null;
  /** two-way time to the horizon below the seabed reflector, ms */
  horizonTwtMs: number | null;
  velocityMps: number;
  coverTypeId: string;
  /** horizon + required depth into the older unit; with an unassessed horizon cored to refusal, the expected penetration */
  plannedPenetrationM: number;
  expectedPenetrationM: number;
  nearestLine: NearestLine | null;
  /** exclusions whose buffer edge lies within the "nearby" distance */
  nearbyExclusions: Array<{ name: string; kind: string; distanceM: number; bufferM: number }>;
  /** reconstructed ages (ka BP) at which the cell was land (land_class 0) or intertidal (2) */
  landAgesKa: number[];
  /** the potential (or occupation) score the list ranks by */
  score: number;
  /** Σ w·s over factors — the occupation score the contributions explain; null without factor layers */
  occupation: number | null;
  contributions: FactorContribution[];
}

export interface TargetContext {
  grid: PlacedGrid;
  /** the project CRS: EPSG code and proj4 definition (terrain/crs.ts resolveCrs) */
  crs: { epsg: number; proj4: string };
  score: Float32Array;
  seabedElevationM: Float32Array;
  coverThicknessM: Float32Array | null;
  coverType: Uint8Array | null;
  constraints: ConstraintSet;
  /** sediment velocity for TWT, m/s (memory, check-values.md: 1600 m/s a common default) */
  velocityMps: number;
  surveyLines: readonly SurveyLine[];
  exclusions: readonly ExclusionFeature[];
  /** list exclusions whose buffer edge is within this distance, m */
  nearbyExclusionM: number;
  agesKa: readonly number[];
  landClassByAge: readonly Uint8Array[];
  /** the weighted factors at the scored age or period (scores after the curves, as weighted-sum.ts takes them) */
  factors: readonly WeightedFactor[];
  waypointPrefix: string;
}

function modeDetail(p: Pick): string {
  if (p.transect) {
    const t = p.transect;
    const o = Math.round(t.offsetM);
    return `${t.name} transect ${t.number}, ${t.role}, ${o > 0 ? "+" : o < 0 ? "−" : ""}${Math.abs(o)} m`;
  }
  if (p.mode === "control") return `control core in class ${p.classIndex}`;
  if (p.mode === "learn-most") return `learn most (uncertainty ${p.key.toFixed(2)})`;
  return "best first";
}

/**
 * Common practice, no source; TWT by the formula of check-values.md (TWT = 2·d/v); contributions by
 * Malczewski (2000) weighted linear combination (occupation = Σ w·s, weights normalised).
 *
 * The full record of each pick, ranked in the order given (rank 1 first; waypoint prefix + rank).
 * WGS84 by proj4js from the project CRS. Planned penetration = horizon depth + required depth into
 * the older unit (an unassessed horizon: the expected penetration, cored to refusal).
 * Preconditions: picks from {@link selectTargets} on the context's grid; a checked constraint set.
 * O(targets · (factors + ages + exclusions + log F)) plus O(F log F) to index the lines.
 */
export function describeTargets(picks: readonly Pick[], ctx: TargetContext): CoreTarget[] {
  if (!(ctx.velocityMps > 0)) throw new ScoringInputError(`The sediment velocity must be positive (got ${ctx.velocityMps} m/s).`, "velocityMps");
  if (ctx.landClassByAge.length !== ctx.agesKa.length) throw new ScoringInputError("One land-class layer is needed per reconstructed age.");
  const toWgs84 = proj4(ctx.crs.proj4, "EPSG:4326");
  const lines = new SurveyLineIndex(ctx.surveyLines);
  const pen = penetrationTable(ctx.constraints);
  const defaultType = ctx.constraints.coverTypes.findIndex((c) => c.id === ctx.constraints.defaultCoverTypeId);
  const w = ctx.factors.length > 0 ? normaliseWeights(ctx.factors) : new Float64Array(0);
  return picks.map((p, k) => {
    const c = p.cell;
    const [lon, lat] = toWgs84.forward([p.x, p.y]);
    const cover = ctx.coverThicknessM === null ? NaN : ctx.coverThicknessM[c];
    const typeCode = ctx.coverType === null ? 255 : ctx.coverType[c];
    const expected = pen[typeCode];
    const horizon = cover === cover ? cover : null;
    const contributions: FactorContribution[] = ctx.factors.map((f, j) => {
      const s = f.scores[c];
      return { id: f.name, weight: w[j], factorScore: s, contribution: w[j] * s };
    });
    let occupation: number | null = null;
    if (contributions.length > 0) {
      occupation = 0;
      for (const cc of contributions) if (cc.weight > 0) occupation += cc.contribution;
    }
    const nearby = ctx.exclusions
      .map((e) => ({ name: e.name, kind: e.kind, distanceM: featureDistance(p.x, p.y, e), bufferM: e.bufferM }))
      .filter((e) => e.distanceM - e.bufferM <= ctx.nearbyExclusionM)
      .sort((a, b) => a.distanceM - a.bufferM - (b.distanceM - b.bufferM));
    const landAgesKa: number[] = [];
    ctx.agesKa.forEach((a, j) => {
      const v = ctx.landClassByAge[j][c];
      if (v === 0 || v === 2) landAgesKa.push(a);
    });
    return {
      rank: k + 1,
      waypoint: waypointName(ctx.waypointPrefix, k + 1, picks.length),
      mode: p.mode,
      modeDetail: modeDetail(p),
      cell: c,
      x: p.x,
      y: p.y,
      epsg: ctx.crs.epsg,
      lon,
      lat,
      lonDdm: formatDdm(lon, "lon"),
      latDdm: formatDdm(lat, "lat"),
      waterDepthM: -ctx.seabedElevationM[c],
      horizonDepthM: horizon,
      horizonTwtMs: horizon === null ? null : twoWayTimeMs(horizon, ctx.velocityMps),
      velocityMps: ctx.velocityMps,
      coverTypeId: ctx.constraints.coverTypes[typeCode === 255 ? defaultType : typeCode].id,
      plannedPenetrationM: horizon === null ? expected : horizon + ctx.constraints.requiredIntoOlderUnitM,
      expectedPenetrationM: expected,
      nearestLine: lines.nearest(p.x, p.y),
      nearbyExclusions: nearby,
      landAgesKa,
      score: ctx.score[c],
      occupation,
      contributions,
    };
  });
}

/**
 * Common practice, no source.
 *
 * Ages as runs over the reconstruction's own age list, e.g. "20–12 ka, 9 ka" (a run is consecutive
 * entries of `agesKa` all present in `landAgesKa`). O(ages).
 */
export function formatAgeRuns(agesKa: readonly number[], landAgesKa: readonly number[]): string {
  const set = new Set(landAgesKa);
  const sorted = [...agesKa].sort((a, b) => b - a);
  const runs: string[] = [];
  let start: number | null = null;
  let prev: number | null = null;
  for (const a of [...sorted, NaN]) {
    if (set.has(a)) {
      if (start === null) start = a;
      prev = a;
    } else if (start !== null && prev !== null) {
      runs.push(start === prev ? `${start} ka` : `${start}–${prev} ka`);
      start = null;
      prev = null;
    }
  }
  return runs.length ? runs.join(", ") : "never land in the reconstructed ages";
}
