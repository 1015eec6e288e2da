/**
 * Topographic position index: a cell's elevation minus the mean elevation of its neighbourhood.
 *
 * Guisan, A., Weiss, S.B. & Weiss, A.D. (1999) "GLM versus CCA spatial modeling of plant species
 * distribution", Plant Ecology 143, 107–122 (the index); Weiss, A.D. (2001) "Topographic Position
 * and Landforms Analysis", poster, ESRI User Conference (its use for landform classes).
 * The window means come from summed-area tables: Crow, F.C. (1984) "Summed-area tables for texture
 * mapping", Computer Graphics (SIGGRAPH '84) 18(3), 207–212.
 */

/**
 * TPI (metres; positive on ridges and knolls, negative in valleys and hollows) over a rectangular
 * window reaching `radiusM` from the centre in each direction: half-widths round(radiusM / cellSizeX)
 * columns and round(radiusM / cellSizeY) rows (at least 1), the centre cell itself excluded from the
 * mean. Guisan, A., Weiss, S.B. & Weiss, A.D. (1999) "GLM versus CCA spatial modeling of plant species
 * distribution", Plant Ecology 143, 107–122; summed-area tables after Crow, F.C. (1984) "Summed-area
 * tables for texture mapping", Computer Graphics 18(3), 207–212.
 *
 * Preconditions: elevations in metres, NaN (or the optional mask) = nodata. Nodata cells give NaN and
 * are left out of their neighbours' means; the window is clipped at the grid edge (the mean is over
 * the valid cells that remain). A cell whose window holds no other valid cell gets NaN.
 *
 * Complexity: O(width·height) time regardless of the radius; memory: a Float64 and an Int32
 * summed-area table of (width+1)·(height+1) entries.
 */
export function topographicPositionIndex(
  elevation: Float32Array,
  width: number,
  height: number,
  cellSizeX: number,
  cellSizeY: number,
  radiusM: number,
  nodata?: Uint8Array,
): Float32Array {
  if (!(radiusM > 0)) throw new RangeError("TPI radius must be positive");
  const hx = Math.max(1, Math.round(radiusM / cellSizeX));
  const hy = Math.max(1, Math.round(radiusM / cellSizeY));
  const w1 = width + 1;
  const sum = new Float64Array(w1 * (height + 1));
  const cnt = new Int32Array(w1 * (height + 1));
  for (let r = 0; r < height; r++) {
    let rowSum = 0;
    let rowCnt = 0;
    const o = (r + 1) * w1;
    const op = r * w1;
    for (let c = 0; c < width; c++) {
      const i = r * width + c;
      const z = elevation[i];
      if (z === z && (nodata === undefined || nodata[i] === 0)) {
        rowSum += z;
        rowCnt++;
      }
      sum[o + c + 1] = sum[op + c + 1] + rowSum;
      cnt[o + c + 1] = cnt[op + c + 1] + rowCnt;
    }
  }
  const out = new Float32Array(width * height);
  for (let r = 0; r < height; r++) {
    const r0 = r - hy < 0 ? 0 : r - hy;
    const r1 = r + hy + 1 > height ? height : r + hy + 1;
    for (let c = 0; c < width; c++) {
      const i = r * width + c;
      const z = elevation[i];
      if (z !== z || (nodata !== undefined && nodata[i] !== 0)) {
        out[i] = NaN;
        continue;
      }
      const c0 = c - hx < 0 ? 0 : c - hx;
      const c1 = c + hx + 1 > width ? width : c + hx + 1;
      const a = r0 * w1 + c0;
      const b = r0 * w1 + c1;
      const d = r1 * w1 + c0;
      const e = r1 * w1 + c1;
      const s = sum[e] - sum[b] - sum[d] + sum[a] - z;
      const k = cnt[e] - cnt[b] - cnt[d] + cnt[a] - 1;
      out[i] = k > 0 ? z - s / k : NaN;
    }
  }
  return out;
}
