/**
 * Factor curves: map a factor's value (a distance in metres, a slope in degrees, an age in ka …) to
 * a score from 0 (poor) to 1 (good) — fuzzy membership functions after
 * Eastman, J.R., Jin, W., Kyem, P.A.K. & Toledano, J. (1995) "Raster procedures for multi-criteria/
 * multi-objective decisions", Photogrammetric Engineering & Remote Sensing 61(5), 539–547, and
 * Malczewski, J. (1999) GIS and Multicriteria Decision Analysis, Wiley, New York (ch. 4, value
 * functions / standardisation).
 *
 * Control points are NAMED per curve type, and the screen uses the same names
 * ({@link controlPointNames}):
 * - increasing linear / sigmoid: `zeroUntil` (0 at and below) and `fullAt` (1 at and above);
 * - decreasing linear / sigmoid: `fullUntil` (1 at and below) and `zeroAt` (0 at and above);
 * - increasing J-shaped: `halfAt` (0.5 there, never 0 below) and `fullAt`;
 * - decreasing J-shaped: `fullUntil` and `halfAt` (0.5 there, never 0 above: 0.2 at
 *   fullUntil + 2·(halfAt − fullUntil));
 * - band: `zeroUntil`, `fullAt`, `fullUntil`, `zeroAt` (rising, plateau, falling), linear or sigmoid
 *   flanks;
 * - aspect preference: `preferredDeg` (azimuth, clockwise from north), `widthDeg` (the angular
 *   distance either side at which the score reaches 0, ≤ 180) and `flatValue` (the score of a cell
 *   without an aspect: the slope layer stores NaN on flats).
 *
 * Curves are plain JSON objects (they are stored in weight sets). Validate once with
 * {@link validateCurve}; every public function here validates before it evaluates.
 */
import { ScoringInputError } from "./errors.ts";

export interface IncreasingLinearCurve { kind: "linear"; direction: "increasing"; zeroUntil: number; fullAt: number }
export interface DecreasingLinearCurve { kind: "linear"; direction: "decreasing"; fullUntil: number; zeroAt: number }
export interface IncreasingSigmoidCurve { kind: "sigmoid"; direction: "increasing"; zeroUntil: number; fullAt: number }
export interface DecreasingSigmoidCurve { kind: "sigmoid"; direction: "decreasing"; fullUntil: number; zeroAt: number }
export interface IncreasingJShapedCurve { kind: "j-shaped"; direction: "increasing"; halfAt: number; fullAt: number }
export interface DecreasingJShapedCurve { kind: "j-shaped"; direction: "decreasing"; fullUntil: number; halfAt: number }
export interface BandCurve {
  kind: "band";
  /** shape of the rising and falling flanks */
  shape: "linear" | "sigmoid";
  zeroUntil: number;
  fullAt: number;
  fullUntil: number;
  zeroAt: number;
}
export interface AspectPreferenceCurve {
  kind: "aspect";
  /** preferred azimuth, degrees clockwise from north (any value; taken modulo 360) */
  preferredDeg: number;
  /** angular distance from the preferred azimuth at which the score reaches 0, in (0, 180] */
  widthDeg: number;
  /** score given to a cell without an aspect (NaN: flats), in [0, 1] */
  flatValue: number;
}

export type FactorCurve =
  | IncreasingLinearCurve
  | DecreasingLinearCurve
  | IncreasingSigmoidCurve
  | DecreasingSigmoidCurve
  | IncreasingJShapedCurve
  | DecreasingJShapedCurve
  | BandCurve
  | AspectPreferenceCurve;

/**
 * Common practice, no source.
 *
 * The control points of a curve, in the order they must increase (for the aspect curve, its three
 * parameters). O(1).
 */
export function controlPointNames(curve: FactorCurve): readonly string[] {
  switch (curve.kind) {
    case "linear":
    case "sigmoid":
      return curve.direction === "increasing" ? ["zeroUntil", "fullAt"] : ["fullUntil", "zeroAt"];
    case "j-shaped":
      return curve.direction === "increasing" ? ["halfAt", "fullAt"] : ["fullUntil", "halfAt"];
    case "band":
      return ["zeroUntil", "fullAt", "fullUntil", "zeroAt"];
    case "aspect":
      return ["preferredDeg", "widthDeg", "flatValue"];
    default:
      throw new ScoringInputError(`Unknown factor curve type "${(curve as { kind: unknown }).kind}".`, "kind");
  }
}

// Internal numeric form: one code per shape, four points, so evaluation is a switch on a small int.
const LIN_UP = 0, LIN_DOWN = 1, SIG_UP = 2, SIG_DOWN = 3, J_UP = 4, J_DOWN = 5, BAND_LIN = 6, BAND_SIG = 7, ASPECT = 8;
interface Compiled { code: number; p0: number; p1: number; p2: number; p3: number }

/**
 * Eastman, J.R., Jin, W., Kyem, P.A.K. & Toledano, J. (1995) "Raster procedures for
 * multi-criteria/multi-objective decisions", Photogrammetric Engineering & Remote Sensing 61(5),
 * 539–547; Malczewski, J. (1999) GIS and Multicriteria Decision Analysis, Wiley, New York.
 *
 * Check a curve's control points: each must be a finite number, and they must increase strictly in
 * the order of {@link controlPointNames} (a band's plateau may have zero width: `fullAt` ≤
 * `fullUntil`). The aspect curve needs a finite `preferredDeg`, 0 < `widthDeg` ≤ 180 and 0 ≤
 * `flatValue` ≤ 1. Throws {@link ScoringInputError} naming the point. O(1).
 */
export function validateCurve(curve: FactorCurve): void {
  compile(curve);
}

function finitePoint(curve: FactorCurve, name: string): number {
  const v = (curve as unknown as Record<string, unknown>)[name];
  if (typeof v !== "number" || !Number.isFinite(v))
    throw new ScoringInputError(
      `The ${curve.kind} curve's control point "${name}" must be a finite number (got ${String(v)}).`,
      name,
    );
  return v;
}

function compile(curve: FactorCurve): Compiled {
  const kind: string = curve.kind;
  if ((curve.kind === "linear" || curve.kind === "sigmoid" || curve.kind === "j-shaped") &&
      curve.direction !== "increasing" && curve.direction !== "decreasing")
    throw new ScoringInputError(`The ${kind} curve's direction must be "increasing" or "decreasing".`, "direction");
  if (curve.kind === "band" && curve.shape !== "linear" && curve.shape !== "sigmoid")
    throw new ScoringInputError(`The band curve's flanks must be "linear" or "sigmoid".`, "shape");
  const names = controlPointNames(curve);
  if (curve.kind === "aspect") {
    const p = finitePoint(curve, "preferredDeg");
    const w = finitePoint(curve, "widthDeg");
    const f = finitePoint(curve, "flatValue");
    if (!(w > 0 && w <= 180))
      throw new ScoringInputError(`The aspect curve's "widthDeg" must be more than 0 and at most 180 degrees (got ${w}).`, "widthDeg");
    if (!(f >= 0 && f <= 1))
      throw new ScoringInputError(`The aspect curve's "flatValue" (the score of flat cells) must lie between 0 and 1 (got ${f}).`, "flatValue");
    return { code: ASPECT, p0: ((p % 360) + 360) % 360, p1: w, p2: f, p3: 0 };
  }
  const pts = names.map((n) => finitePoint(curve, n));
  for (let k = 1; k < pts.length; k++) {
    const plateau = curve.kind === "band" && k === 2;
    const ok = plateau ? pts[k] >= pts[k - 1] : pts[k] > pts[k - 1];
    if (!ok)
      throw new ScoringInputError(
        `The ${curve.kind} curve's control point "${names[k]}" (${pts[k]}) must be ${plateau ? "at least" : "greater than"} "${names[k - 1]}" (${pts[k - 1]}).`,
        names[k],
      );
  }
  let code: number;
  switch (curve.kind) {
    case "linear": code = curve.direction === "increasing" ? LIN_UP : LIN_DOWN; break;
    case "sigmoid": code = curve.direction === "increasing" ? SIG_UP : SIG_DOWN; break;
    case "j-shaped": code = curve.direction === "increasing" ? J_UP : J_DOWN; break;
    default: code = curve.shape === "sigmoid" ? BAND_SIG : BAND_LIN;
  }
  return { code, p0: pts[0], p1: pts[1], p2: pts[2] ?? 0, p3: pts[3] ?? 0 };
}

const HALF_PI = Math.PI / 2;

/** Rising flank on (a, b): 0 at a, 1 at b. */
function rise(x: number, a: number, b: number, sigmoid: boolean): number {
  if (x <= a) return 0;
  if (x >= b) return 1;
  const t = (x - a) / (b - a);
  if (!sigmoid) return t;
  const s = Math.sin(HALF_PI * t);
  return s * s;
}

/** Falling flank on (c, d): 1 at c, 0 at d. */
function fall(x: number, c: number, d: number, sigmoid: boolean): number {
  if (x <= c) return 1;
  if (x >= d) return 0;
  const t = (x - c) / (d - c);
  if (!sigmoid) return 1 - t;
  const s = Math.cos(HALF_PI * t);
  return s * s;
}

function evalCompiled(k: Compiled, x: number): number {
  if (k.code === ASPECT) {
    if (!Number.isFinite(x)) return k.p2;
    // angular distance to the preferred azimuth, in [0, 180]
    let delta = (((x - k.p0) % 360) + 360) % 360;
    if (delta > 180) delta = 360 - delta;
    if (delta >= k.p1) return 0;
    const s = Math.cos((HALF_PI * delta) / k.p1);
    return s * s;
  }
  if (x !== x) return NaN;
  switch (k.code) {
    case LIN_UP: return rise(x, k.p0, k.p1, false);
    case LIN_DOWN: return fall(x, k.p0, k.p1, false);
    case SIG_UP: return rise(x, k.p0, k.p1, true);
    case SIG_DOWN: return fall(x, k.p0, k.p1, true);
    case J_UP: {
      if (x >= k.p1) return 1;
      const u = (k.p1 - x) / (k.p1 - k.p0);
      return 1 / (1 + u * u);
    }
    case J_DOWN: {
      if (x <= k.p0) return 1;
      const u = (x - k.p0) / (k.p1 - k.p0);
      return 1 / (1 + u * u);
    }
    case BAND_LIN:
    case BAND_SIG: {
      const sig = k.code === BAND_SIG;
      return x < k.p1 ? rise(x, k.p0, k.p1, sig) : fall(x, k.p2, k.p3, sig);
    }
    default: return NaN;
  }
}

/**
 * Eastman, J.R., Jin, W., Kyem, P.A.K. & Toledano, J. (1995) "Raster procedures for
 * multi-criteria/multi-objective decisions", Photogrammetric Engineering & Remote Sensing 61(5),
 * 539–547; Malczewski, J. (1999) GIS and Multicriteria Decision Analysis, Wiley, New York.
 *
 * The score (0–1) of one factor value. Formulas (t = position inside the flank, 0…1):
 * linear t (rising) or 1 − t (falling); sigmoid sin²(πt/2) (rising) or cos²(πt/2) (falling);
 * J-shaped decreasing 1 / (1 + ((x − fullUntil)/(halfAt − fullUntil))²) above `fullUntil`,
 * increasing 1 / (1 + ((fullAt − x)/(fullAt − halfAt))²) below `fullAt`; aspect cos²(π/2 · δ/width)
 * with δ the angular distance (0–180°) to the preferred azimuth, 0 beyond the width.
 *
 * Preconditions: `x` in the factor's units (the curve's control points are in the same units);
 * NaN → NaN, except for the aspect curve, where a non-finite aspect (a flat) → `flatValue`.
 * ±Infinity is a value like any other (a decreasing curve gives 0 at +∞). Throws
 * {@link ScoringInputError} for an invalid curve. O(1).
 */
export function evaluateCurve(curve: FactorCurve, x: number): number {
  return evalCompiled(compile(curve), x);
}

/**
 * Eastman, J.R., Jin, W., Kyem, P.A.K. & Toledano, J. (1995) "Raster procedures for
 * multi-criteria/multi-objective decisions", Photogrammetric Engineering & Remote Sensing 61(5),
 * 539–547; Malczewski, J. (1999) GIS and Multicriteria Decision Analysis, Wiley, New York.
 *
 * Apply a curve to a whole layer. Same formulas and preconditions as {@link evaluateCurve} (NaN
 * stays NaN; for the aspect curve NaN becomes `flatValue`, so a nodata aspect cell also gets it —
 * the occupation mask and the other factors keep nodata cells out). Writes into `out` if given
 * (same length). O(n) time, no allocation beyond the output.
 */
export function applyCurve(curve: FactorCurve, values: Float32Array, out?: Float32Array): Float32Array {
  const k = compile(curve);
  const n = values.length;
  if (out !== undefined && out.length !== n)
    throw new ScoringInputError(`The output array has ${out.length} cells; the layer has ${n}.`);
  const res = out ?? new Float32Array(n);
  for (let i = 0; i < n; i++) res[i] = evalCompiled(k, values[i]);
  return res;
}

/**
 * Common practice, no source.
 *
 * A lookup table of the curve at `n` evenly spaced values from `min` to `max` inclusive:
 * table[k] = curve(min + k·(max − min)/(n − 1)). The browser turns quantised codes into scores
 * through such a table.
 *
 * Tolerance: at the nodes the table equals {@link evaluateCurve} up to Float32 rounding (≤ 6·10⁻⁸
 * relative). Between nodes, {@link lookupCurve} interpolates linearly, with error at most
 * h·Δs/4 across a kink of a linear curve (h = node spacing, Δs the jump in slope, 1/L for a flank of
 * length L), and h²·max|f″|/8 on smooth stretches: (π²/16)(h/L)² for sigmoid flanks and the aspect
 * curve (L = width), (h/L)²/4 for J-shaped curves. With n = 256 over twice the flank length that is
 * ≤ 2·10⁻³ (linear), ≤ 4·10⁻⁵ (sigmoid), ≤ 2·10⁻⁵ (J-shaped).
 *
 * Preconditions: finite min < max, n ≥ 2 (an integer). O(n).
 */
export function curveLookupTable(curve: FactorCurve, min: number, max: number, n: number): Float32Array {
  const k = compile(curve);
  if (!Number.isFinite(min) || !Number.isFinite(max) || !(max > min))
    throw new ScoringInputError(`A lookup table needs finite min < max (got ${min}, ${max}).`);
  if (!Number.isInteger(n) || n < 2)
    throw new ScoringInputError(`A lookup table needs at least 2 entries (got ${n}).`);
  const table = new Float32Array(n);
  const step = (max - min) / (n - 1);
  for (let i = 0; i < n; i++) table[i] = evalCompiled(k, i === n - 1 ? max : min + i * step);
  return table;
}

/** How a layer was quantised: value = code × scale + offset; `nodataCode` (the top code) is nodata. */
export interface QuantisationSpec {
  scale: number;
  offset: number;
  nodataCode: number;
}

/**
 * Common practice, no source.
 *
 * A lookup table indexed directly by a quantised layer's codes (`app/raster-display.ts` `quantise`):
 * entry k = curve(k·scale + offset) for k < nodataCode, and entry nodataCode = curve(NaN) — NaN, or
 * `flatValue` for the aspect curve (flats are NaN in the aspect layer, so they quantise to the nodata
 * code). Length nodataCode + 1, so every Uint8/Uint16 code is a valid index. Equal to
 * {@link evaluateCurve} on the decoded value up to Float32 rounding.
 * Preconditions: scale > 0, finite offset, nodataCode ≥ 1 an integer. O(nodataCode).
 */
export function quantisedCurveTable(curve: FactorCurve, q: QuantisationSpec): Float32Array {
  const k = compile(curve);
  if (!(q.scale > 0) || !Number.isFinite(q.scale) || !Number.isFinite(q.offset))
    throw new ScoringInputError(`A quantised layer needs a positive scale and a finite offset (got ${q.scale}, ${q.offset}).`);
  if (!Number.isInteger(q.nodataCode) || q.nodataCode < 1 || q.nodataCode > 65535)
    throw new ScoringInputError(`A quantised layer's nodata code must be an integer from 1 to 65535 (got ${q.nodataCode}).`);
  const table = new Float32Array(q.nodataCode + 1);
  for (let c = 0; c < q.nodataCode; c++) table[c] = evalCompiled(k, c * q.scale + q.offset);
  table[q.nodataCode] = evalCompiled(k, NaN);
  return table;
}

/**
 * Common practice, no source.
 *
 * Read a value through a table made by {@link curveLookupTable} over [min, max]: linear
 * interpolation between the two nearest nodes; values outside [min, max] take the end entries; NaN
 * → NaN (so an aspect table does not give `flatValue` here: use {@link evaluateCurve} for flats).
 * Error bound: see {@link curveLookupTable}. O(1).
 */
export function lookupCurve(table: Float32Array, min: number, max: number, x: number): number {
  if (x !== x) return NaN;
  const n = table.length;
  const pos = ((x - min) / (max - min)) * (n - 1);
  if (pos <= 0) return table[0];
  if (pos >= n - 1) return table[n - 1];
  const i = Math.floor(pos);
  const f = pos - i;
  return table[i] + f * (table[i + 1] - table[i]);
}
