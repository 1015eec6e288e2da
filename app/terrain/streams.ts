/**
 * Stream cells at a contributing-area threshold, and their Strahler order.
 */
import { D8_DCOL, D8_DROW, type GridSpec, TerrainInputError, assertLayerSize, cellAreaKm2 } from "./grid";

/**
 * Stream cells: contributing area (the cell and all cells upstream) ≥ `thresholdKm2`, excluding water
 * cells (sea and lakes, `water` = 1). Uint8 mask, 1 = stream.
 *
 * Preconditions: `upstreamCells` from flowAccumulation (−1 on nodata). The threshold is in km² so it
 * means the same at every resolution. Throws TerrainInputError for a threshold that is not positive.
 * O(n).
 */
export function streamMask(
  spec: GridSpec,
  upstreamCells: Int32Array,
  thresholdKm2: number,
  water?: Uint8Array,
): Uint8Array {
  if (!(thresholdKm2 > 0) || !Number.isFinite(thresholdKm2)) {
    throw new TerrainInputError(`stream threshold must be a positive area in km², got ${thresholdKm2}`);
  }
  assertLayerSize(spec, upstreamCells, "accumulation layer");
  if (water) assertLayerSize(spec, water, "water mask");
  const minCells = thresholdKm2 / cellAreaKm2(spec); // (upstream + 1) ≥ minCells
  const out = new Uint8Array(upstreamCells.length);
  for (let i = 0; i < out.length; i++) {
    const u = upstreamCells[i];
    if (u >= 0 && u + 1 >= minCells - 1e-9 && !(water && water[i])) out[i] = 1;
  }
  return out;
}

/**
 * Strahler stream order on D8 directions (Uint8, 0 off streams): a source stream cell is order 1;
 * where two or more tributaries of the highest incoming order i meet the order becomes i + 1, else it
 * stays at the highest incoming order.
 *
 * Strahler, A.N. (1957) "Quantitative analysis of watershed geomorphology", Transactions of the
 * American Geophysical Union 38(6): 913–920.
 *
 * Preconditions: `streams` from streamMask; `order` and `validCount` from flowAccumulation (every cell
 * comes before the cell it drains to). Orders above 254 are capped (they do not occur on real grids).
 * O(n) time, O(n) memory.
 */
export function strahlerOrder(
  spec: GridSpec,
  directions: Uint8Array,
  streams: Uint8Array,
  order: Int32Array,
  validCount: number,
): Uint8Array {
  const { width: w, height: h } = spec;
  const n = w * h;
  assertLayerSize(spec, streams, "stream mask");
  const maxIn = new Uint8Array(n);
  const countMax = new Uint8Array(n);
  const out = new Uint8Array(n);
  for (let q = 0; q < validCount; q++) {
    const c = order[q];
    if (!streams[c]) continue;
    let o = maxIn[c] === 0 ? 1 : countMax[c] >= 2 ? maxIn[c] + 1 : maxIn[c];
    if (o > 254) o = 254;
    out[c] = o;
    const d = directions[c];
    if (d > 7) continue;
    const r = ((c / w) | 0) + D8_DROW[d];
    const col = (c % w) + D8_DCOL[d];
    if (r < 0 || r >= h || col < 0 || col >= w) continue;
    const m = r * w + col;
    if (!streams[m]) continue;
    if (o > maxIn[m]) {
      maxIn[m] = o;
      countMax[m] = 1;
    } else if (o === maxIn[m] && countMax[m] < 255) {
      countMax[m]++;
    }
  }
  return out;
}

/**
 * Confluences: stream cells into which two or more stream cells drain (Uint8 mask). O(n).
 */
export function confluences(spec: GridSpec, directions: Uint8Array, streams: Uint8Array): Uint8Array {
  const { width: w, height: h } = spec;
  const n = w * h;
  const inflow = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    if (!streams[i]) continue;
    const d = directions[i];
    if (d > 7) continue;
    const r = ((i / w) | 0) + D8_DROW[d];
    const c = (i % w) + D8_DCOL[d];
    if (r < 0 || r >= h || c < 0 || c >= w) continue;
    const m = r * w + c;
    if (streams[m] && inflow[m] < 255) inflow[m]++;
  }
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) if (streams[i] && inflow[i] >= 2) out[i] = 1;
  return out;
}
