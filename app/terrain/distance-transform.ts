/**
 * Exact Euclidean distance transform.
 *
 * Felzenszwalb, P.F. & Huttenlocher, D.P. (2012) "Distance Transforms of Sampled Functions",
 * Theory of Computing 8(19), 415–428. doi:10.4086/toc.2012.v008a019
 *
 * The squared Euclidean distance is separable: one pass of the 1-D lower-envelope-of-parabolas
 * transform down every column (sample spacing = cellSizeY), then one along every row (spacing =
 * cellSizeX). Cells may be non-square; distances come out in metres between cell centres.
 */

/**
 * One-dimensional squared distance transform, d(p) = min_q ( f(q) + (spacing·(p − q))² ), by the lower
 * envelope of parabolas: Felzenszwalb, P.F. & Huttenlocher, D.P. (2012) "Distance Transforms of Sampled Functions", Theory of
 * Computing 8(19), 415–428, doi:10.4086/toc.2012.v008a019, §2 (algorithm DT).
 *
 * Preconditions: `f` holds `n` values read at `f[offset + i·stride]`; +Infinity marks "no feature"
 * and such samples are left out of the envelope (the paper's intersection formula is undefined for
 * them). If every sample is +Infinity the output is +Infinity throughout. NaN is not allowed.
 * `spacing` > 0 in metres. Work buffers `v` (Int32, ≥ n), `z` (Float64, ≥ n + 1) and `fv` (Float64,
 * ≥ n) are supplied by the caller so the hot loop allocates nothing. The result is written to
 * `d[dOffset + i·dStride]`; `d` may be the same array as `f` (the input is copied into `fv` first).
 *
 * Complexity: O(n) time.
 */
export function squaredDistance1D(
  f: ArrayLike<number>,
  offset: number,
  stride: number,
  n: number,
  spacing: number,
  d: { [i: number]: number },
  dOffset: number,
  dStride: number,
  v: Int32Array,
  z: Float64Array,
  fv: Float64Array,
): void {
  const s2 = spacing * spacing;
  // copy the input (allows d === f) and find whether any sample is finite
  let any = false;
  for (let i = 0; i < n; i++) {
    const x = f[offset + i * stride];
    fv[i] = x;
    if (x !== Infinity) any = true;
  }
  if (!any) {
    for (let i = 0; i < n; i++) d[dOffset + i * dStride] = Infinity;
    return;
  }
  let k = -1; // index of rightmost parabola in the envelope
  for (let q = 0; q < n; q++) {
    const fq = fv[q];
    if (fq === Infinity) continue;
    if (k < 0) {
      k = 0;
      v[0] = q;
      z[0] = -Infinity;
      z[1] = Infinity;
      continue;
    }
    // intersection of the parabola from q with the rightmost one, in sample units; z[0] = −∞
    // stops the loop at k = 0
    let s = 0;
    for (;;) {
      const p = v[k];
      s = (fq / s2 + q * q - (fv[p] / s2 + p * p)) / (2 * (q - p));
      if (s <= z[k]) k--;
      else break;
    }
    k++;
    v[k] = q;
    z[k] = s;
    z[k + 1] = Infinity;
  }
  let j = 0;
  for (let q = 0; q < n; q++) {
    while (z[j + 1] < q) j++;
    const p = v[j];
    const dq = (q - p) * spacing;
    d[dOffset + q * dStride] = dq * dq + fv[p];
  }
}

/**
 * Exact Euclidean distance (metres) from every cell centre to the nearest feature cell centre, by the
 * separable squared transform of Felzenszwalb, P.F. & Huttenlocher, D.P. (2012) "Distance Transforms of Sampled Functions", Theory of
 * Computing 8(19), 415–428, doi:10.4086/toc.2012.v008a019.
 *
 * Preconditions: `features` has length width·height, row-major with row 0 the northern edge;
 * a non-zero byte is a feature. cellSizeX, cellSizeY > 0 (metres; may differ). Nodata is the
 * caller's business: distances cross nodata cells freely (a distance in the plane, not a path
 * cost); mask the result afterwards. Grid edges are not features. With no feature at all every
 * output value is +Infinity. `out` may be passed to reuse memory (length width·height).
 *
 * Complexity: O(width·height) time; extra memory O(width + height) besides the output (the column pass
 * keeps whole-cell counts in the Float32 output, exact up to 2²⁴ rows; squared distances are formed in
 * double precision, rounded to Float32 once before the square root).
 */
export function euclideanDistance(
  features: Uint8Array,
  width: number,
  height: number,
  cellSizeX: number,
  cellSizeY: number,
  out?: Float32Array,
): Float32Array {
  const n = width * height;
  if (features.length !== n) throw new RangeError(`features has ${features.length} cells, expected ${width}×${height}`);
  if (!(cellSizeX > 0) || !(cellSizeY > 0)) throw new RangeError("cell sizes must be positive");
  const d = out ?? new Float32Array(n);
  // pass 1 (columns, spacing cellSizeY): for a binary f, F&H's 1-D transform is the squared distance
  // to the nearest feature in the column, found here by two sweeps that walk the grid row by row
  // (cache-friendly) and keep the count of cells to the nearest feature above, then below
  for (let c = 0; c < width; c++) d[c] = features[c] !== 0 ? 0 : Infinity;
  for (let r = 1; r < height; r++) {
    const o = r * width;
    for (let i = o; i < o + width; i++) d[i] = features[i] !== 0 ? 0 : d[i - width] + 1;
  }
  for (let r = height - 2; r >= 0; r--) {
    const o = r * width;
    for (let i = o; i < o + width; i++) {
      const below = d[i + width] + 1;
      if (below < d[i]) d[i] = below;
    }
  }
  // pass 2 (rows, spacing cellSizeX): counts → squared metres, the lower envelope of parabolas
  // (squaredDistance1D's arithmetic, inlined: the same operations in the same order), then the square
  // root of the squared distance rounded to Float32
  const m = width;
  const v = new Int32Array(m);
  const z = new Float64Array(m + 1);
  const fv = new Float64Array(m);
  const g = new Float64Array(m); // fv[q] / s2 + q², the parabola's term that does not depend on p
  const s2 = cellSizeX * cellSizeX;
  // the column pass leaves whole cell counts c < height (or +∞): their squared metres (c·dy)² and
  // (c·dy)² / s2, computed once per count by the same operations as per cell
  const sqM = new Float64Array(height);
  const sqOverS2 = new Float64Array(height);
  for (let c = 0; c < height; c++) {
    const k = c * cellSizeY;
    sqM[c] = k * k;
    sqOverS2[c] = sqM[c] / s2;
  }
  for (let r = 0; r < height; r++) {
    const o = r * width;
    let k = -1; // index of rightmost parabola in the envelope
    for (let q = 0; q < width; q++) {
      const cq = d[o + q];
      if (cq === Infinity) {
        fv[q] = Infinity;
        continue;
      }
      const ci = cq | 0;
      const fq = sqM[ci];
      fv[q] = fq;
      const gq = sqOverS2[ci] + q * q;
      g[q] = gq;
      if (k < 0) {
        k = 0;
        v[0] = q;
        z[0] = -Infinity;
        z[1] = Infinity;
        continue;
      }
      let sq = 0;
      for (;;) {
        const p = v[k];
        sq = (gq - g[p]) / (2 * (q - p));
        if (sq <= z[k]) k--;
        else break;
      }
      k++;
      v[k] = q;
      z[k] = sq;
      z[k + 1] = Infinity;
    }
    if (k < 0) {
      for (let i = o; i < o + width; i++) d[i] = Infinity;
      continue;
    }
    let j = 0;
    for (let q = 0; q < width; q++) {
      while (z[j + 1] < q) j++;
      const p = v[j];
      const dq = (q - p) * cellSizeX;
      d[o + q] = Math.sqrt(Math.fround(dq * dq + fv[p]));
    }
  }
  return d;
}
