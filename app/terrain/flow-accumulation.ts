/**
 * D8 flow accumulation: for every cell, how many cells drain through it, and its contributing area.
 */
import { D8_DCOL, D8_DROW, type GridSpec, type RunControl, Ticker, assertLayerSize, cellAreaKm2 } from "./grid";

export interface Accumulation {
  /** Number of cells upstream of each cell (the cell itself not included); −1 on nodata. */
  upstreamCells: Int32Array;
  /** Valid cells in topological order (every cell before the cell it drains to). */
  order: Int32Array;
  /** Number of valid cells (the used length of `order`). */
  validCount: number;
}

/**
 * Flow accumulation on D8 directions by topological order (Kahn's algorithm over the drainage tree:
 * in-degrees, then a queue of cells with nothing left upstream) — no recursion, so deep networks on
 * large grids cannot overflow the stack.
 *
 * O'Callaghan, J.F. & Mark, D.M. (1984) Computer Vision, Graphics, and Image Processing 28(3): 323–344;
 * Jenson, S.K. & Domingue, J.O. (1988) Photogrammetric Engineering and Remote Sensing 54(11): 1593–1600.
 *
 * Preconditions: `directions` from flowDirectionD8/resolveFlats (codes 0–7 drain to a neighbour; any
 * code above 7 — outlet, pit, nodata — drains nowhere); `nodata` marks cells to skip. A direction that
 * points off the grid or into nodata is treated as draining nowhere. Throws an Error (a bug, not bad
 * input) if the directions contain a cycle. Complexity O(n) time, O(n) memory.
 */
export function flowAccumulation(
  spec: GridSpec,
  directions: Uint8Array,
  nodata: Uint8Array,
  control?: RunControl,
): Accumulation {
  const { width: w, height: h } = spec;
  const n = w * h;
  assertLayerSize(spec, directions, "flow directions");
  const down = new Int32Array(n).fill(-1);
  const indeg = new Int32Array(n);
  let valid = 0;
  for (let i = 0; i < n; i++) {
    if (nodata[i]) continue;
    valid++;
    const d = directions[i];
    if (d > 7) continue;
    const r = ((i / w) | 0) + D8_DROW[d];
    const c = (i % w) + D8_DCOL[d];
    if (r < 0 || r >= h || c < 0 || c >= w) continue;
    const m = r * w + c;
    if (nodata[m]) continue;
    down[i] = m;
    indeg[m]++;
  }
  const ticker = new Ticker(control, valid, "flow accumulation");
  ticker.start();
  const acc = new Int32Array(n);
  const order = new Int32Array(valid);
  let head = 0;
  let tail = 0;
  for (let i = 0; i < n; i++) {
    if (nodata[i]) acc[i] = -1;
    else if (indeg[i] === 0) order[tail++] = i;
  }
  while (head < tail) {
    const c = order[head++];
    const m = down[c];
    if (m >= 0) {
      acc[m] += acc[c] + 1;
      if (--indeg[m] === 0) order[tail++] = m;
    }
    ticker.tick(head);
  }
  if (tail !== valid) {
    throw new Error(`flow directions contain a cycle: ${valid - tail} cells never drain (engine bug)`);
  }
  ticker.finish();
  return { upstreamCells: acc, order, validCount: valid };
}

/**
 * Contributing area of each cell in km² — (upstream cells + 1) × cell area, the cell itself included;
 * NaN on nodata. O(n).
 */
export function contributingAreaKm2(spec: GridSpec, upstreamCells: Int32Array): Float32Array {
  const a = cellAreaKm2(spec);
  const out = new Float32Array(upstreamCells.length);
  for (let i = 0; i < out.length; i++) out[i] = upstreamCells[i] < 0 ? NaN : (upstreamCells[i] + 1) * a;
  return out;
}
