/**
 * Depression filling by Priority-Flood, seeded from the outlets (sea, lakes, open-ocean boundary).
 */
import {
  CellHeap,
  CellQueue,
  D8_DCOL,
  D8_DROW,
  type Grid,
  type RunControl,
  TerrainInputError,
  Ticker,
  assertLayerSize,
} from "./grid";
import { PriorityFlood } from "./priority-flood";

export interface FillOptions extends RunControl {
  /**
   * Priority-Flood+ε: raise each cell in a depression to the next representable Float32 above the cell
   * it was reached from, so every non-outlet cell has a strictly lower neighbour. Default false: plain
   * filling (flat surfaces), to be followed by flat resolution (flats.ts), which avoids the parallel
   * artificial channels ε produces on long flats.
   */
  epsilon?: boolean;
}

export interface FillResult {
  /** Filled elevation, m (NaN on nodata). */
  filledM: Float32Array;
  /**
   * Outlets used: the given outlets plus, for any part of the grid cut off from every outlet by
   * nodata, its cells on the grid edge or next to nodata (the water leaves the data there).
   */
  outlets: Uint8Array;
  /** Cells made outlets because their part of the grid reached no given outlet. */
  addedOutletCount: number;
  /** Cells raised by the fill. */
  raisedCount: number;
}

const f32 = new Float32Array(1);
const i32 = new Int32Array(f32.buffer);
/** The next Float32 above x (x finite). */
export function nextUpF32(x: number): number {
  f32[0] = x;
  const v = f32[0];
  if (v === 0) {
    i32[0] = 1; // smallest positive subnormal
    return f32[0];
  }
  if (v > 0) i32[0] += 1;
  else i32[0] -= 1;
  return f32[0];
}

/**
 * Fills depressions so that every valid cell has a non-ascending 8-connected path to an outlet.
 *
 * Barnes, R., Lehman, C. & Mulla, D. (2014) "Priority-Flood: An optimal depression-filling and
 * watershed-labeling algorithm for digital elevation models", Computers & Geosciences 62: 117–127,
 * doi:10.1016/j.cageo.2013.04.024 — Algorithm 2 (improved Priority-Flood: cells inside a depression go
 * to a plain "pit" queue instead of the priority queue) with the slope tracing of Zhou, G., Sun, Z. &
 * Fu, S. (2016) "An efficient variant of the Priority-Flood algorithm for filling depressions in raster
 * digital elevation models", Computers & Geosciences 90(A): 87–96, doi:10.1016/j.cageo.2016.02.021
 * (cells reached from below keep their elevation and are traced upwards through a plain FIFO queue, so
 * few cells enter the heap; priority-flood.ts); Algorithm 3 (Priority-Flood+ε, FIFO pit queue, heap ties
 * by insertion order) when `epsilon` is set.
 *
 * Preconditions: elevation in m, NaN and mask on nodata; `outlets` marks valid cells where water
 * leaves (they are seeds and are never changed). Nodata cells are walls; the grid edge is a wall except
 * at outlets. Parts of the grid that no outlet can reach (cut off by nodata) get their cells on the
 * edge or next to nodata as outlets (counted in `addedOutletCount`). Throws TerrainInputError if no
 * valid cell is an outlet. Complexity O(n log n) time worst case (O(n + h log h) when h cells enter
 * the heap; O(n) inside depressions), O(n) memory.
 */
export function fillDepressions(elev: Grid<Float32Array>, outlets: Uint8Array, options: FillOptions = {}): FillResult {
  const { spec, data: z, nodata } = elev;
  const { width: w, height: h } = spec;
  const n = w * h;
  assertLayerSize(spec, outlets, "outlet mask");
  const filled = new Float32Array(z);
  const out = new Uint8Array(n);
  const done = new Uint8Array(n);
  const eps = options.epsilon === true;
  const ticker = new Ticker(options, n, "depression filling");
  ticker.start();
  if (eps) return fillEpsilon(elev, outlets, filled, out, done, ticker);
  const pf = new PriorityFlood(filled, done, w, h, 8, ticker);
  let seeds = 0;
  let valid = 0;
  for (let i = 0; i < n; i++) {
    if (nodata[i]) {
      done[i] = 1;
      filled[i] = NaN;
      continue;
    }
    valid++;
    if (outlets[i]) {
      done[i] = 1;
      out[i] = 1;
      pf.seed(i);
      seeds++;
    }
  }
  if (seeds === 0) throw new TerrainInputError("no valid cell is an outlet (no sea, lake or open-ocean boundary cell): cannot route water");
  pf.flood();
  let added = 0;
  if (pf.reached < valid) {
    // Parts cut off from every outlet: their cells on the edge or next to nodata become outlets.
    for (let i = 0; i < n; i++) {
      if (done[i]) continue;
      if (cutOffBoundary(i, w, h, nodata)) {
        done[i] = 1;
        out[i] = 1;
        added++;
        pf.seed(i);
      }
    }
    pf.flood();
  }
  ticker.finish();
  return { filledM: filled, outlets: out, addedOutletCount: added, raisedCount: pf.raised };
}

/** A cell on the grid edge or next to nodata (8-connected). */
function cutOffBoundary(i: number, w: number, h: number, nodata: Uint8Array): boolean {
  const r = (i / w) | 0;
  const col = i - r * w;
  if (r === 0 || r === h - 1 || col === 0 || col === w - 1) return true;
  for (let k = 0; k < 8; k++) {
    if (nodata[(r + D8_DROW[k]) * w + col + D8_DCOL[k]]) return true;
  }
  return false;
}

/**
 * Priority-Flood+ε (Barnes et al. 2014, Algorithm 3): the improved Priority-Flood with a FIFO pit
 * queue and a heap whose ties go by insertion order — the ε raises depend on the order cells are
 * reached, so this path keeps that order exactly.
 */
function fillEpsilon(
  elev: Grid<Float32Array>,
  outlets: Uint8Array,
  filled: Float32Array,
  out: Uint8Array,
  done: Uint8Array,
  ticker: Ticker,
): FillResult {
  const { spec, nodata } = elev;
  const { width: w, height: h } = spec;
  const n = w * h;
  const heap = new CellHeap(1024);
  const pit = new CellQueue(1024);
  let seeds = 0;
  for (let i = 0; i < n; i++) {
    if (nodata[i]) {
      done[i] = 1;
      filled[i] = NaN;
    } else if (outlets[i]) {
      done[i] = 1;
      out[i] = 1;
      heap.push(i, filled[i]);
      seeds++;
    }
  }
  if (seeds === 0) throw new TerrainInputError("no valid cell is an outlet (no sea, lake or open-ocean boundary cell): cannot route water");
  let processed = 0;
  let raised = 0;
  let added = 0;

  const flood = () => {
    while (heap.size > 0 || pit.size > 0) {
      const c = pit.size > 0 ? pit.shift() : heap.pop();
      const zc = filled[c];
      const r = (c / w) | 0;
      const col = c - r * w;
      for (let k = 0; k < 8; k++) {
        const rr = r + D8_DROW[k];
        const cc = col + D8_DCOL[k];
        if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
        const m = rr * w + cc;
        if (done[m]) continue;
        done[m] = 1;
        const zm = filled[m];
        const up = nextUpF32(zc);
        if (zm <= up) {
          if (zm < up) raised++;
          filled[m] = up;
          pit.push(m);
        } else heap.push(m, zm);
      }
      ticker.tick(++processed);
    }
  };
  flood();
  if (processed < n) {
    for (let i = 0; i < n; i++) {
      if (done[i]) continue;
      if (cutOffBoundary(i, w, h, nodata)) {
        done[i] = 1;
        out[i] = 1;
        added++;
        heap.push(i, filled[i]);
      }
    }
    flood();
  }
  ticker.finish();
  return { filledM: filled, outlets: out, addedOutletCount: added, raisedCount: raised };
}
