/**
 * Connected flooding: the spill elevation of every cell from the open-ocean boundary, the enclosed
 * basins (future lakes), and the sea / intertidal / lake / land class of every cell at an age.
 *
 * Connectivity rule (docs/decisions/101-connectivity-rule.md): water bodies — the sea and lakes —
 * spread 4-connected (edge to edge), so a one-cell diagonal barrier of higher ground holds the sea
 * back; flow routing (fill, D8, accumulation) is 8-connected.
 */
import {
  CellQueue,
  D8_DCOL,
  D8_DROW,
  type Grid,
  type GridSpec,
  type RunControl,
  TerrainInputError,
  Ticker,
  assertLayerSize,
  pointToCell,
} from "./grid";
import { PriorityFlood } from "./priority-flood";

export type Side = "north" | "south" | "east" | "west";

/**
 * Where the palaeo-sea connects to the grid. Not "any edge cell": the user says which side(s), or
 * draws a line (project-CRS coordinates, rasterised to the cells it crosses), or gives a mask.
 */
export type OceanBoundary =
  | { kind: "sides"; sides: Side[] }
  | { kind: "line"; points: [number, number][] }
  | { kind: "mask"; mask: Uint8Array };

/** Land/water classes at one age (Uint8 layer, 255 = nodata). */
export const CLASS_LAND = 0;
export const CLASS_SEA = 1;
export const CLASS_INTERTIDAL = 2;
export const CLASS_LAKE = 3;
export const CLASS_NODATA = 255;

/**
 * Marks the cells a polyline crosses (sampled at a quarter of the smaller cell size, so every cell the
 * line passes through is marked). Points are project-CRS coordinates; parts outside the grid are
 * ignored. O(line length / cell size).
 */
export function rasterizePolyline(spec: GridSpec, points: [number, number][], into?: Uint8Array): Uint8Array {
  const out = into ?? new Uint8Array(spec.width * spec.height);
  const step = Math.min(spec.cellSizeX, spec.cellSizeY) / 4;
  const mark = (x: number, y: number) => {
    const [rf, cf] = pointToCell(spec, x, y);
    const r = Math.floor(rf);
    const c = Math.floor(cf);
    if (r >= 0 && r < spec.height && c >= 0 && c < spec.width) out[r * spec.width + c] = 1;
  };
  for (let k = 0; k < points.length; k++) {
    const [x0, y0] = points[k];
    if (!Number.isFinite(x0) || !Number.isFinite(y0)) {
      throw new TerrainInputError(`boundary line point ${k + 1} is not a pair of finite coordinates`);
    }
    if (k === 0) {
      mark(x0, y0);
      continue;
    }
    const [xa, ya] = points[k - 1];
    const len = Math.hypot(x0 - xa, y0 - ya);
    const steps = Math.max(1, Math.ceil(len / step));
    for (let s = 1; s <= steps; s++) mark(xa + ((x0 - xa) * s) / steps, ya + ((y0 - ya) * s) / steps);
  }
  return out;
}

/**
 * The open-ocean boundary as a mask of valid cells (1 = the sea enters here). Throws
 * TerrainInputError if the boundary touches no valid cell (naming the boundary), or if a mask has the
 * wrong size. O(n) for sides and masks, O(line length) for lines.
 */
export function oceanBoundaryMask(spec: GridSpec, nodata: Uint8Array, boundary: OceanBoundary): Uint8Array {
  const { width: w, height: h } = spec;
  const n = w * h;
  let mask: Uint8Array;
  let what: string;
  if (boundary.kind === "sides") {
    if (boundary.sides.length === 0) throw new TerrainInputError("the open-ocean boundary names no side of the grid");
    mask = new Uint8Array(n);
    for (const side of boundary.sides) {
      if (side === "north") for (let c = 0; c < w; c++) mask[c] = 1;
      else if (side === "south") for (let c = 0; c < w; c++) mask[(h - 1) * w + c] = 1;
      else if (side === "west") for (let r = 0; r < h; r++) mask[r * w] = 1;
      else if (side === "east") for (let r = 0; r < h; r++) mask[r * w + w - 1] = 1;
      else throw new TerrainInputError(`"${side}" is not a side of the grid (north, south, east, west)`);
    }
    what = `the ${boundary.sides.join(" and ")} edge${boundary.sides.length > 1 ? "s" : ""}`;
  } else if (boundary.kind === "line") {
    if (boundary.points.length < 2) throw new TerrainInputError("the open-ocean boundary line needs at least two points");
    mask = rasterizePolyline(spec, boundary.points);
    what = "the open-ocean boundary line";
  } else {
    assertLayerSize(spec, boundary.mask, "open-ocean boundary mask");
    mask = boundary.mask.slice();
    what = "the open-ocean boundary mask";
  }
  let count = 0;
  for (let i = 0; i < n; i++) {
    if (mask[i] && nodata[i]) mask[i] = 0;
    if (mask[i]) count++;
  }
  if (count === 0) {
    throw new TerrainInputError(
      `${what} touches no valid cell of the grid (it lies outside the grid or only on nodata): draw it across valid cells on the seaward side`,
    );
  }
  return mask;
}

export interface SpillResult {
  /**
   * Spill elevation, m: the lowest sea level at which the sea, entering at the open-ocean boundary and
   * spreading 4-connected, reaches the cell. +Infinity for valid cells the sea can never reach (cut
   * off by nodata); NaN on nodata.
   */
  spillM: Float32Array;
  /** Enclosed-basin label per cell (4-connected cells lying below their spill elevation); 0 = none. */
  basinLabel: Int32Array;
  /** Per basin label (index = label): lowest elevation in the basin, m. Index 0 unused. */
  basinFloorM: Float64Array;
  /** Per basin label: the basin's spill (lake surface) elevation, m. */
  basinSpillM: Float64Array;
  /** Cells the sea can never reach. */
  unreachableCount: number;
}

/**
 * Spill elevation by one Priority-Flood from the open-ocean boundary.
 *
 * Barnes, R., Lehman, C. & Mulla, D. (2014) "Priority-Flood: An optimal depression-filling and
 * watershed-labeling algorithm for digital elevation models", Computers & Geosciences 62: 117–127,
 * doi:10.1016/j.cageo.2013.04.024 — the improved variant (cells in a depression go to a plain
 * queue), with the slope tracing of Zhou, G., Sun, Z. & Fu, S. (2016) "An efficient variant of the
 * Priority-Flood algorithm for filling depressions in raster digital elevation models", Computers &
 * Geosciences 90(A): 87–96, doi:10.1016/j.cageo.2016.02.021 (cells reached from below keep their own
 * elevation and are traced upwards through a plain FIFO queue; few cells enter the heap) — see
 * priority-flood.ts. Here 4-connected and seeded only from the boundary cells, so the filled level of
 * each cell is its spill elevation (connected flooding, not a bathtub).
 *
 * Preconditions: `elev` is elevation (m, present MSL), NaN / mask on nodata; nodata cells are walls
 * (the sea does not pass through them); grid edges are walls except where the boundary says. Also
 * labels the enclosed basins (4-connected cells strictly below their spill elevation; all cells of a
 * basin share one spill elevation). Complexity O(n log n) time worst case (O(n + h log h) when h
 * cells enter the heap), O(n) memory.
 */
export function spillElevation(elev: Grid<Float32Array>, boundaryMask: Uint8Array, control?: RunControl): SpillResult {
  const { spec, data: z, nodata } = elev;
  const { width: w, height: h } = spec;
  const n = w * h;
  assertLayerSize(spec, boundaryMask, "open-ocean boundary mask");
  const spill = new Float32Array(z);
  const done = new Uint8Array(n);
  const ticker = new Ticker(control, n, "spill elevation", 0, 0.9);
  ticker.start();
  const pf = new PriorityFlood(spill, done, w, h, 4, ticker);
  let seeds = 0;
  for (let i = 0; i < n; i++) {
    if (nodata[i]) {
      spill[i] = NaN;
      done[i] = 1;
    } else if (boundaryMask[i]) {
      done[i] = 1;
      pf.seed(i);
      seeds++;
    }
  }
  if (seeds === 0) throw new TerrainInputError("the open-ocean boundary touches no valid cell of the grid");
  pf.flood();
  let unreachable = 0;
  for (let i = 0; i < n; i++) {
    if (!done[i]) {
      spill[i] = Infinity;
      unreachable++;
    }
  }
  // Label basins: 4-connected components of cells lying below their spill elevation.
  const label = new Int32Array(n);
  const floors: number[] = [0];
  const spills: number[] = [0];
  const q = new CellQueue(1024);
  let next = 0;
  for (let i = 0; i < n; i++) {
    // most cells lie at their spill elevation: test that first, before reading the label
    if (!(z[i] < spill[i]) || label[i] || nodata[i] || spill[i] === Infinity) continue;
    next++;
    label[i] = next;
    let floor = z[i];
    q.push(i);
    while (q.size > 0) {
      const c = q.shift();
      if (z[c] < floor) floor = z[c];
      const r = (c / w) | 0;
      const col = c - r * w;
      for (let k = 0; k < 8; k += 2) {
        const rr = r + D8_DROW[k];
        const cc = col + D8_DCOL[k];
        if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
        const m = rr * w + cc;
        if (label[m] || nodata[m] || !(z[m] < spill[m])) continue;
        label[m] = next;
        q.push(m);
      }
    }
    floors.push(floor);
    spills.push(spill[i]);
  }
  ticker.finish();
  return {
    spillM: spill,
    basinLabel: label,
    basinFloorM: Float64Array.from(floors),
    basinSpillM: Float64Array.from(spills),
    unreachableCount: unreachable,
  };
}

/** Palaeo-tidal range: a constant (m) or a per-cell layer (m). */
export type TidalRange = number | Float32Array;

/**
 * Classes every cell at one age: sea, intertidal, lake or land (Uint8, CLASS_* constants).
 *
 * With sea level L (m; per cell for regional models) and tidal range R (mean range, m; constant or per
 * cell), a cell of spill elevation s and elevation z is
 *   sea         if s ≤ L − R/2   (the sea reaches it even at low water),
 *   intertidal  if L − R/2 < s ≤ L + R/2 (reached at high water only),
 *   lake        if not reached at high water, it lies in an enclosed basin (z < s) and the basin's
 *               floor is below L: the basin holds a lake with its surface at the basin's spill
 *               elevation (which `lakeLevelM` returns), acting as an outlet for rivers,
 *   land        otherwise.
 * Preconditions: `spill` from spillElevation on the same grid; `seaLevel` is the sea level for every
 * cell at this age (seaLevelLayerAt). O(n) time; O(number of basins) extra memory.
 */
export function classifyAtAge(
  elev: Grid<Float32Array>,
  spill: SpillResult,
  seaLevel: Float32Array,
  tidalRange: TidalRange = 0,
): { classes: Uint8Array; lakeLevelM: Float32Array; counts: { sea: number; intertidal: number; lake: number; land: number } } {
  const { spec, data: z, nodata } = elev;
  const n = spec.width * spec.height;
  assertLayerSize(spec, seaLevel, "sea-level layer");
  if (typeof tidalRange !== "number") assertLayerSize(spec, tidalRange, "tidal-range layer");
  else if (!(tidalRange >= 0)) throw new TerrainInputError(`tidal range must be ≥ 0 m, got ${tidalRange}`);
  const s = spill.spillM;
  const label = spill.basinLabel;
  // A basin holds a lake if any of its cells lies below the sea level there.
  const nb = spill.basinFloorM.length;
  const wet = new Uint8Array(nb);
  for (let i = 0; i < n; i++) {
    const b = label[i];
    if (b && !wet[b] && z[i] < seaLevel[i]) wet[b] = 1;
  }
  const classes = new Uint8Array(n);
  const lakeLevel = new Float32Array(n).fill(NaN);
  let sea = 0;
  let inter = 0;
  let lake = 0;
  let land = 0;
  const tidalGrid = typeof tidalRange === "number" ? null : tidalRange;
  const halfConst = typeof tidalRange === "number" ? tidalRange / 2 : 0;
  for (let i = 0; i < n; i++) {
    const L = seaLevel[i];
    if (nodata[i] || L !== L) {
      classes[i] = CLASS_NODATA;
      continue;
    }
    const half = tidalGrid === null ? halfConst : tidalGrid[i] / 2;
    const si = s[i];
    if (si <= L - half) {
      classes[i] = CLASS_SEA;
      sea++;
    } else if (si <= L + half) {
      classes[i] = CLASS_INTERTIDAL;
      inter++;
    } else if (label[i] && wet[label[i]]) {
      classes[i] = CLASS_LAKE;
      lakeLevel[i] = spill.basinSpillM[label[i]];
      lake++;
    } else {
      classes[i] = CLASS_LAND;
      land++;
    }
  }
  return { classes, lakeLevelM: lakeLevel, counts: { sea, intertidal: inter, lake, land } };
}

/**
 * Cells that are outlets for flow routing at one age: sea and lake cells, plus the open-ocean
 * boundary cells (the sea lies beyond them even when it has withdrawn from the grid). O(n).
 */
export function outletMask(classes: Uint8Array, boundaryMask: Uint8Array): Uint8Array {
  const n = classes.length;
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const c = classes[i];
    if (c === CLASS_NODATA) continue;
    if (c === CLASS_SEA || c === CLASS_LAKE || boundaryMask[i]) out[i] = 1;
  }
  return out;
}
