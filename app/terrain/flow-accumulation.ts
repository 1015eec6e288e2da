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
 * in-degrees, then every cell with nothing left upstream is taken, walking down from each source in
 * raster order as far as the cells reached have nothing else upstream) — no recursion, so deep
 * networks on large grids cannot overflow the stack. `order` is that topological order.
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
  // the downstream step of each cell as a D8 code, 8 where it drains nowhere (outlet, pit, nodata,
  // off the grid or into nodata), and in-degrees (at most 8; 255 once the cell is taken): bytes, not
  // int32 indices, so more of them stay in cache
  const down = new Uint8Array(n);
  const indeg = new Uint8Array(n);
  const off = new Int32Array(9);
  for (let k = 0; k < 8; k++) off[k] = D8_DROW[k] * w + D8_DCOL[k];
  let valid = 0;
  for (let r = 0; r < h; r++) {
    const edgeRow = r === 0 || r === h - 1;
    const o = r * w;
    for (let c = 0; c < w; c++) {
      const i = o + c;
      down[i] = 8;
      if (nodata[i]) continue;
      valid++;
      const d = directions[i];
      if (d > 7) continue;
      if (edgeRow || c === 0 || c === w - 1) {
        const rr = r + D8_DROW[d];
        const cc = c + D8_DCOL[d];
        if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      }
      const m = i + off[d];
      if (nodata[m]) continue;
      down[i] = d;
      indeg[m]++;
    }
  }
  const ticker = new Ticker(control, valid, "flow accumulation");
  ticker.start();
  const acc = new Int32Array(n);
  const order = new Int32Array(valid);
  let tail = 0;
  // Kahn's algorithm, taking each cell as soon as it is ready: from every source (in raster order)
  // walk downstream while the cell reached has nothing left upstream — consecutive cells are
  // neighbours, so memory is read along flow paths rather than all over the grid
  for (let i = 0; i < n; i++) {
    if (nodata[i]) {
      acc[i] = -1;
      continue;
    }
    if (indeg[i] !== 0) continue; // upstream cells left, or already taken (255)
    let c = i;
    for (;;) {
      order[tail++] = c;
      indeg[c] = 255;
      const d = down[c];
      if (d === 8) break;
      const m = c + off[d];
      acc[m] += acc[c] + 1;
      if (--indeg[m] !== 0) break;
      c = m;
    }
    ticker.tick(tail);
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
