/**
 * Slope and aspect by Horn's 3×3 finite difference.
 *
 * Horn, B.K.P. (1981) "Hill shading and the reflectance map", Proceedings of the IEEE 69(1), 14–47.
 * doi:10.1109/PROC.1981.11918
 *
 * Window a b c / d e f / g h i (rows increase southwards):
 *   dz/dx = ((c + 2f + i) − (a + 2d + g)) / (8·dx)   (gradient eastwards)
 *   dz/dy = ((g + 2h + i) − (a + 2b + c)) / (8·dy)   (gradient southwards)
 *   slope = atan(√(dz/dx² + dz/dy²)); aspect = azimuth of steepest descent, clockwise from north.
 */

const RAD_TO_DEG = 180 / Math.PI;

/**
 * Gradient at every cell by Horn, B.K.P. (1981) "Hill shading and the reflectance map", Proceedings of the IEEE 69(1), 14–47,
 * doi:10.1109/PROC.1981.11918: writes dz/dx (eastwards)
 * and dz/dy (southwards), both dimensionless (metres per metre).
 *
 * Preconditions: `elevation` row-major, row 0 north, NaN = nodata (or a non-zero byte in the optional
 * `nodata` mask). Edge treatment: a neighbour outside the grid or nodata is replaced by the centre
 * cell's value (so edge cells get a one-sided estimate rather than none); a nodata centre gives NaN.
 * cellSizeX, cellSizeY > 0 in metres, elevations in metres.
 *
 * Complexity: O(width·height) time, no extra memory.
 */
export function hornGradient(
  elevation: Float32Array,
  width: number,
  height: number,
  cellSizeX: number,
  cellSizeY: number,
  dzdxOut: Float32Array,
  dzdyOut: Float32Array,
  nodata?: Uint8Array,
): void {
  const kx = 1 / (8 * cellSizeX);
  const ky = 1 / (8 * cellSizeY);
  for (let r = 0; r < height; r++) {
    const rn = r > 0 ? r - 1 : -1;
    const rs = r < height - 1 ? r + 1 : -1;
    for (let c = 0; c < width; c++) {
      const i = r * width + c;
      const e = elevation[i];
      if (e !== e || (nodata !== undefined && nodata[i] !== 0)) {
        dzdxOut[i] = NaN;
        dzdyOut[i] = NaN;
        continue;
      }
      const cw = c > 0 ? c - 1 : -1;
      const ce = c < width - 1 ? c + 1 : -1;
      const a = cell(elevation, nodata, rn, cw, width, e);
      const b = cell(elevation, nodata, rn, c, width, e);
      const cc = cell(elevation, nodata, rn, ce, width, e);
      const d = cell(elevation, nodata, r, cw, width, e);
      const f = cell(elevation, nodata, r, ce, width, e);
      const g = cell(elevation, nodata, rs, cw, width, e);
      const h = cell(elevation, nodata, rs, c, width, e);
      const ii = cell(elevation, nodata, rs, ce, width, e);
      dzdxOut[i] = (cc + 2 * f + ii - (a + 2 * d + g)) * kx;
      dzdyOut[i] = (g + 2 * h + ii - (a + 2 * b + cc)) * ky;
    }
  }
}

function cell(z: Float32Array, nodata: Uint8Array | undefined, r: number, c: number, width: number, centre: number): number {
  if (r < 0 || c < 0) return centre;
  const j = r * width + c;
  const v = z[j];
  if (v !== v || (nodata !== undefined && nodata[j] !== 0)) return centre;
  return v;
}

/**
 * Slope (degrees, 0–90) and aspect (degrees, azimuth of steepest descent clockwise from grid north,
 * in [0, 360); NaN on flats where dz/dx = dz/dy = 0) by Horn, B.K.P. (1981) "Hill shading and the reflectance map", Proceedings of the IEEE 69(1), 14–47,
 * doi:10.1109/PROC.1981.11918.
 *
 * Preconditions and edge treatment as {@link hornGradient}: nodata (NaN or mask) gives NaN in both
 * outputs; neighbours outside the grid or nodata take the centre value. Cells may be non-square.
 *
 * Complexity: O(width·height) time; memory: the two Float32 outputs.
 */
export function slopeAspect(
  elevation: Float32Array,
  width: number,
  height: number,
  cellSizeX: number,
  cellSizeY: number,
  nodata?: Uint8Array,
): { slopeDeg: Float32Array; aspectDeg: Float32Array } {
  if (elevation.length !== width * height) throw new RangeError(`elevation has ${elevation.length} cells, expected ${width}×${height}`);
  const slopeDeg = new Float32Array(width * height);
  const aspectDeg = new Float32Array(width * height);
  // the outputs hold the gradient first, then are overwritten in place
  hornGradient(elevation, width, height, cellSizeX, cellSizeY, slopeDeg, aspectDeg, nodata);
  return slopeAspectFromGradient(slopeDeg, aspectDeg);
}

/**
 * Slope and aspect of {@link slopeAspect} from gradients computed by hornGradient, **in place**: `gx`
 * (dz/dx) becomes the slope and `gy` (dz/dy) the aspect, in degrees; NaN stays NaN. For callers that
 * use the gradient for something else first (the hillshade). O(n).
 */
export function slopeAspectFromGradient(gx: Float32Array, gy: Float32Array): { slopeDeg: Float32Array; aspectDeg: Float32Array } {
  const slopeDeg = gx;
  const aspectDeg = gy;
  for (let i = 0; i < slopeDeg.length; i++) {
    const gx = slopeDeg[i];
    const gy = aspectDeg[i];
    if (gx !== gx) continue; // NaN stays NaN in both
    slopeDeg[i] = Math.atan(Math.sqrt(gx * gx + gy * gy)) * RAD_TO_DEG;
    aspectDeg[i] = aspectFromGradient(gx, gy);
  }
  return { slopeDeg, aspectDeg };
}

/**
 * Azimuth (degrees clockwise from north, [0, 360)) of steepest descent for an eastward gradient
 * `dzdx` and a southward gradient `dzdy`; NaN when both are zero. Descent points along −∇z:
 * east component −dz/dx, north component +dz/dy (dz/dy is measured southwards).
 */
export function aspectFromGradient(dzdx: number, dzdy: number): number {
  if (dzdx === 0 && dzdy === 0) return NaN;
  let az = Math.atan2(-dzdx, dzdy) * RAD_TO_DEG;
  if (az < 0) az += 360;
  if (az >= 360) az -= 360;
  return az === 0 ? 0 : az; // no −0
}
