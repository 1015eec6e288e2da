/**
 * Hillshade: Lambertian reflectance of the surface lit by a distant source.
 *
 * Horn, B.K.P. (1981) "Hill shading and the reflectance map", Proceedings of the IEEE 69(1), 14–47
 * (the reflectance map; gradients by Horn's 3×3 difference, see slope-aspect.ts).
 *
 * With gradient p = dz/dx (east), q = dz/dy (south), the unit surface normal is
 * (−p, q, 1)/√(1 + p² + q²) in (east, north, up) and the light direction is
 * (cos(alt)·sin(az), cos(alt)·cos(az), sin(alt)); shade = max(0, normal · light).
 */
import { hornGradient } from "./slope-aspect.ts";

const DEG = Math.PI / 180;

export interface HillshadeOptions {
  /** light azimuth, degrees clockwise from north; default 315 (north-west, the cartographic habit) */
  azimuthDeg?: number;
  /** light altitude above the horizon, degrees; default 45 */
  altitudeDeg?: number;
  /** vertical exaggeration; default 1 */
  zFactor?: number;
}

/**
 * Hillshade in bytes for display: 1–255 = shade (1 fully shadowed, 255 facing the light), 0 = nodata;
 * the reflectance map and gradients of Horn, B.K.P. (1981) "Hill shading and the reflectance map", Proceedings of the IEEE 69(1), 14–47,
 * doi:10.1109/PROC.1981.11918.
 *
 * Preconditions: elevations in metres, NaN (or the mask) = nodata → 0; neighbours outside the grid
 * or nodata take the centre value (see hornGradient). Non-square cells allowed.
 *
 * Complexity: O(width·height) time; two Float32 work arrays of width·height.
 */
export function hillshade(
  elevation: Float32Array,
  width: number,
  height: number,
  cellSizeX: number,
  cellSizeY: number,
  options: HillshadeOptions = {},
  nodata?: Uint8Array,
): Uint8Array {
  const n = width * height;
  const gx = new Float32Array(n);
  const gy = new Float32Array(n);
  hornGradient(elevation, width, height, cellSizeX, cellSizeY, gx, gy, nodata);
  return hillshadeFromGradient(gx, gy, options);
}

/**
 * The hillshade of {@link hillshade} from gradients already computed by hornGradient (dz/dx eastwards,
 * dz/dy southwards, NaN on nodata) — for callers that need the gradient for slope and aspect too.
 * O(n).
 */
export function hillshadeFromGradient(gx: Float32Array, gy: Float32Array, options: HillshadeOptions = {}): Uint8Array {
  const az = (options.azimuthDeg ?? 315) * DEG;
  const alt = (options.altitudeDeg ?? 45) * DEG;
  const zf = options.zFactor ?? 1;
  const lx = Math.cos(alt) * Math.sin(az);
  const ly = Math.cos(alt) * Math.cos(az);
  const lz = Math.sin(alt);
  const n = gx.length;
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const p = gx[i] * zf;
    if (p !== p) continue;
    const q = gy[i] * zf;
    const shade = (-p * lx + q * ly + lz) / Math.sqrt(1 + p * p + q * q);
    out[i] = shade <= 0 ? 1 : 1 + Math.round(254 * shade);
  }
  return out;
}
