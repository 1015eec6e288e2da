/**
 * Height above contemporary sea level: the analysis surface minus relative sea level at an age.
 *
 * No published method beyond the subtraction itself; relative sea level RSL(t) comes from the
 * sea-level model (sea-level.ts), e.g. Lambeck et al. (2014) PNAS 111(43) as a far-field
 * approximation, or a per-age RSL grid from a glacial-isostatic model.
 */

/**
 * Height (m) of every cell above sea level at one age: z − RSL(t). Negative below the sea.
 *
 * Preconditions: `surface` elevations in metres relative to present mean sea level, NaN (or the
 * optional mask) = nodata → NaN. `seaLevelM` is RSL at the age in the same datum: one number, or a
 * grid of the same size (NaN there → NaN). `out` may be supplied to reuse memory.
 *
 * Complexity: O(n) time, no extra memory beyond the output.
 */
export function heightAboveSea(
  surface: Float32Array,
  seaLevelM: number | Float32Array,
  nodata?: Uint8Array,
  out?: Float32Array,
): Float32Array {
  const n = surface.length;
  const h = out ?? new Float32Array(n);
  if (typeof seaLevelM === "number") {
    if (!Number.isFinite(seaLevelM)) throw new RangeError(`sea level must be a finite number of metres, got ${seaLevelM}`);
    for (let i = 0; i < n; i++) h[i] = nodata !== undefined && nodata[i] !== 0 ? NaN : surface[i] - seaLevelM;
  } else {
    if (seaLevelM.length !== n) throw new RangeError(`sea-level grid has ${seaLevelM.length} cells, expected ${n}`);
    for (let i = 0; i < n; i++) h[i] = nodata !== undefined && nodata[i] !== 0 ? NaN : surface[i] - seaLevelM[i];
  }
  return h;
}
