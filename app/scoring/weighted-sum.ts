/**
 * Weighted linear combination (WLC) of factor scores: S = Σ wᵢ·sᵢ with the weights normalised to
 * sum 1 — Malczewski, J. (2000) "On the use of weighted linear combination method in GIS: common and
 * best practice approaches", Transactions in GIS 4(1), 5–22; Eastman, J.R., Jin, W., Kyem, P.A.K. &
 * Toledano, J. (1995) Photogrammetric Engineering & Remote Sensing 61(5), 539–547.
 *
 * Occupation per age is this sum over the cells a mask allows (land and intertidal: design §4);
 * every other cell is NaN.
 */
import { ScoringInputError } from "./errors.ts";

export interface NamedWeight {
  /** the factor's name, used in messages */
  name: string;
  /** a non-negative relative weight; weights are normalised to sum 1 */
  weight: number;
}

export interface WeightedFactor extends NamedWeight {
  /** the factor's scores (0–1, after its curve), one per cell; NaN = no score */
  scores: Float32Array;
}

export interface WeightedCodedFactor extends NamedWeight {
  /** the factor's quantised codes, one per cell */
  codes: Uint8Array | Uint16Array;
  /** code → score, e.g. from `quantisedCurveTable`; 256 entries for Uint8, 65 536 for Uint16 codes */
  table: Float32Array;
}

/**
 * Malczewski, J. (2000) "On the use of weighted linear combination method in GIS: common and best
 * practice approaches", Transactions in GIS 4(1), 5–22.
 *
 * Weights normalised to sum 1, in the order given.
 * Preconditions: at least one factor; every weight finite and ≥ 0; not all zero. Anything else throws
 * {@link ScoringInputError} naming the factor. O(k) for k factors.
 */
export function normaliseWeights(factors: readonly NamedWeight[]): Float64Array {
  if (factors.length === 0) throw new ScoringInputError("A weight set needs at least one factor.");
  let total = 0;
  for (const f of factors) {
    const w = f.weight;
    if (typeof w !== "number" || Number.isNaN(w))
      throw new ScoringInputError(`The weight of "${f.name}" is not a number.`, f.name);
    if (!Number.isFinite(w)) throw new ScoringInputError(`The weight of "${f.name}" must be finite.`, f.name);
    if (w < 0) throw new ScoringInputError(`The weight of "${f.name}" is negative (${w}); weights must be 0 or more.`, f.name);
    total += w;
  }
  if (total === 0)
    throw new ScoringInputError("All weights are zero: give at least one factor a weight above 0.");
  const out = new Float64Array(factors.length);
  for (let k = 0; k < factors.length; k++) out[k] = factors[k].weight / total;
  return out;
}

/**
 * Design §4 (land and intertidal cells); common practice, no source.
 *
 * The mask of cells that can be occupied at an age: 1 where the `land_class` layer (docs/layers.md:
 * 0 land, 1 sea, 2 intertidal, 3 lake, 255 nodata) is land or intertidal, else 0. O(n).
 */
export function occupiableMask(landClass: Uint8Array): Uint8Array {
  const n = landClass.length;
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const c = landClass[i];
    out[i] = c === 0 || c === 2 ? 1 : 0;
  }
  return out;
}

function checkLength(name: string, len: number, n: number): void {
  if (len !== n)
    throw new ScoringInputError(`The layer of "${name}" has ${len} cells; the grid has ${n}. All factors must cover the same grid.`, name);
}

/** out[i] = 0 where the mask allows, NaN elsewhere */
function initOut(n: number, mask: Uint8Array | null, out: Float32Array | undefined): Float32Array {
  if (mask !== null && mask.length !== n)
    throw new ScoringInputError(`The mask has ${mask.length} cells; the grid has ${n}.`);
  if (out !== undefined && out.length !== n)
    throw new ScoringInputError(`The output array has ${out.length} cells; the grid has ${n}.`);
  const res = out ?? new Float32Array(n);
  if (mask === null) res.fill(0);
  else for (let i = 0; i < n; i++) res[i] = mask[i] !== 0 ? 0 : NaN;
  return res;
}

/**
 * Malczewski, J. (2000) "On the use of weighted linear combination method in GIS: common and best
 * practice approaches", Transactions in GIS 4(1), 5–22.
 *
 * Weighted linear combination S = Σ wᵢ·sᵢ over the cells the mask allows (mask ≠ 0; null = every
 * cell), NaN elsewhere.
 *
 * Preconditions: scores in 0–1 (after the factor curves), all layers and the mask the same length;
 * weights as {@link normaliseWeights} (normalised here). A cell where any factor with a weight above
 * 0 is NaN gives NaN — a missing factor is not read as a poor one; a factor with weight 0 is skipped,
 * so its NaN cells do not matter. Writes into `out` if given.
 *
 * Complexity: O(n·k) for n cells and k factors, factor by factor over the output (sequential
 * access), no allocation beyond the output.
 */
export function weightedLinearCombination(
  factors: readonly WeightedFactor[],
  mask: Uint8Array | null,
  out?: Float32Array,
): Float32Array {
  const w = normaliseWeights(factors);
  const n = factors[0].scores.length;
  for (const f of factors) checkLength(f.name, f.scores.length, n);
  const res = initOut(n, mask, out);
  for (let k = 0; k < factors.length; k++) {
    const wk = w[k];
    if (wk === 0) continue;
    const s = factors[k].scores;
    for (let i = 0; i < n; i++) res[i] += wk * s[i];
  }
  return res;
}

/**
 * Malczewski, J. (2000) "On the use of weighted linear combination method in GIS: common and best
 * practice approaches", Transactions in GIS 4(1), 5–22.
 *
 * The same weighted linear combination read straight from quantised layers through per-factor
 * lookup tables (the browser's live re-scoring: codes → scores → sum in one pass per factor).
 *
 * Preconditions: as {@link weightedLinearCombination}; each table must hold an entry for every code
 * its array type can hold (256 for Uint8, 65 536 for Uint16 — `quantisedCurveTable` makes such
 * tables, with the nodata code → NaN). Equals {@link weightedLinearCombination} applied to the
 * tables' scores up to Float32 rounding. Complexity O(n·k), no allocation beyond the output.
 */
export function weightedLinearCombinationFromCodes(
  factors: readonly WeightedCodedFactor[],
  mask: Uint8Array | null,
  out?: Float32Array,
): Float32Array {
  const w = normaliseWeights(factors);
  const n = factors[0].codes.length;
  for (const f of factors) {
    checkLength(f.name, f.codes.length, n);
    const need = f.codes instanceof Uint8Array ? 256 : 65536;
    if (f.table.length < need)
      throw new ScoringInputError(`The lookup table of "${f.name}" has ${f.table.length} entries; its codes need ${need}.`, f.name);
  }
  const res = initOut(n, mask, out);
  for (let k = 0; k < factors.length; k++) {
    const wk = w[k];
    if (wk === 0) continue;
    const codes = factors[k].codes;
    const table = factors[k].table;
    for (let i = 0; i < n; i++) res[i] += wk * table[codes[i]];
  }
  return res;
}
