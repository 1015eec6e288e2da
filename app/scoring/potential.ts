/**
 * The scoring pipeline (design §4): site potential = occupation × preservation.
 *
 * - Occupation per age: the weighted linear combination of factor curves over land and intertidal
 *   cells (Malczewski, J. (2000) Transactions in GIS 4(1), 5–22; Eastman et al. (1995)
 *   Photogrammetric Engineering & Remote Sensing 61(5), 539–547), read from layers given either as
 *   values (Float32, the scoring job at full resolution) or as quantised codes (8 or 16 bits with a
 *   scale and offset, the browser's Web Worker over the display grid) — the same function serves
 *   both, so on the same inputs they give the same result (`potentialChecksum` shows it).
 * - Preservation (age-independent): its own model, switchable off — a weighted mean of position
 *   below local base level, time in the shoreface erosion zone and shelter when the cell drowned,
 *   overridden near core and interpretation evidence; cells without horizon data are unassessed,
 *   never low.
 * - Periods: occupation per age combined by the time-weighted mean of decision 401
 *   (`periods.ts`), multiplied by preservation once.
 *
 * Pure: typed arrays in and out, no per-cell allocation in the loops.
 */
import { ScoringInputError } from "./errors.ts";
import { applyCurve, evaluateCurve, quantisedCurveTable, validateCurve, type FactorCurve } from "./factor-curves.ts";
import { normaliseWeights } from "./weighted-sum.ts";
import { combinePeriod, periodAgeWeights } from "./periods.ts";
import { factorDef, type FactorId } from "./factors.ts";
import { shelterIndex } from "./shelter.ts";
import { EVIDENCE_INTACT, EVIDENCE_TRUNCATED } from "./horizon-evidence.ts";
import { checkPeriodAgainstAges, type PeriodSetting, type WeightSetContent } from "./weight-set.ts";

export interface GridShape {
  width: number;
  height: number;
  cellSizeX: number;
  cellSizeY: number;
}

/** A layer as values (Float32, NaN = nodata) or as quantised codes (value = code × scale + offset; nodataCode = nodata) */
export type LayerData =
  | { kind: "values"; values: Float32Array }
  | { kind: "codes"; codes: Uint8Array | Uint16Array; scale: number; offset: number; nodataCode: number };

export interface AgeInputs {
  ageKa: number;
  /** land_class at this age: 0 land, 1 sea, 2 intertidal, 3 lake, 255 nodata */
  landClass: Uint8Array;
  /**
   * factor layers by factor id (static layers may be the same object at every age). `shelter` is
   * never given: it is derived from landClass with content.shelterRadiusM. A missing or all-nodata
   * layer: see {@link scoreAge}.
   */
  layers: Partial<Record<FactorId, LayerData>>;
}

export interface PreservationInputs {
  tpi: LayerData;
  /** m/ka (layer rise_rate_at_flooding), NaN unless finally drowned */
  riseRateAtFlooding: LayerData;
  /** ka BP (layer flooding_age) */
  floodingAge: LayerData;
  /** layer flooding_status: 0 land at young end, 1 drowned in window, 2 sea throughout, 255 nodata */
  floodingStatus: Uint8Array;
  /** land_class of every reconstructed age (to take shelter at the age nearest each cell's flooding age) */
  agesKa: number[];
  landClassByAge: Uint8Array[];
  /** layer `unassessed` (1 = horizon unassessed); null when the reconstruction has no horizon data at all */
  unassessed: Uint8Array | null;
  /** per cell 0 no evidence, 1 intact, 2 truncated — from horizonEvidenceGrid(); null when none */
  evidence: Uint8Array | null;
}

export interface PreservationResult {
  active: boolean;
  /** in words for the page: what preservation does here, or why it is off */
  reason: string;
  /** 0–1 per cell; NaN where unassessed, nodata or sea throughout the window; null when inactive */
  score: Float32Array | null;
  /** 1 where the horizon is unassessed (and no evidence decides the cell); null when inactive */
  unassessed: Uint8Array | null;
}

export interface ScoreResult {
  /** 0–1 on occupiable cells (land, intertidal), NaN elsewhere */
  occupation: Float32Array;
  /** occupation × preservation (when active); NaN where not occupiable OR unassessed */
  potential: Float32Array;
  /** 1 where occupiable but preservation unassessed (its own class, never low) */
  unassessed: Uint8Array;
  /** e.g. "No lake margins at 12 ka: distance to a lake margin scored as far away." */
  notes: string[];
}

/**
 * Buffers {@link scoreAge} can reuse between calls (the Web Worker re-scores on every slider move
 * without allocating). The result of a call made with a scratch holds the scratch's arrays: copy
 * them before the next call if they must be kept. The shelter index is cached here by the identity
 * of the land-class array, the radius and the cell sizes — do not change a land-class array in place
 * between calls with the same scratch.
 */
export interface ScoreScratch {
  occupation: Float32Array;
  potential: Float32Array;
  unassessed: Uint8Array;
  /** one factor's scores (values layers go through their curve here before they are added) */
  scores: Float32Array;
  shelterCache: ShelterCache | null;
}

export interface ShelterCache {
  landClass: Uint8Array;
  radiusM: number;
  cellSizeX: number;
  cellSizeY: number;
  values: Float32Array;
}

export const PRESERVATION_OFF_REASON =
  "Preservation is switched off in this weight set: the potential shown is the occupation score alone.";
export const PRESERVATION_NO_HORIZON_REASON =
  "This reconstruction has no buried-horizon data, so preservation cannot be assessed and is off: the potential shown is the occupation score alone.";
export const PRESERVATION_ON_REASON =
  "Preservation is on: the occupation score is multiplied by how likely traces are to survive — position below local base level, time in the shoreface erosion zone and shelter when the cell drowned — set to 1 or 0 near cores and interpretations that show the horizon intact or truncated. Cells without horizon data are shown as unassessed, not as low.";

// ---- helpers ---------------------------------------------------------------------------------------

function checkGrid(grid: GridShape): number {
  const { width, height, cellSizeX, cellSizeY } = grid;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1)
    throw new ScoringInputError(`The grid needs a whole number of rows and columns (got ${width} × ${height}).`);
  if (!(cellSizeX > 0) || !(cellSizeY > 0) || !Number.isFinite(cellSizeX) || !Number.isFinite(cellSizeY))
    throw new ScoringInputError(`The grid's cell sizes must be positive (got ${cellSizeX} × ${cellSizeY} m).`);
  return width * height;
}

function checkLength(what: string, len: number, n: number): void {
  if (len !== n) throw new ScoringInputError(`The ${what} layer has ${len} cells; the grid has ${n}.`);
}

function checkLayer(what: string, layer: LayerData, n: number): void {
  if (layer.kind === "values") {
    if (!(layer.values instanceof Float32Array)) throw new ScoringInputError(`The ${what} layer's values must be a Float32Array.`);
    checkLength(what, layer.values.length, n);
    return;
  }
  if (layer.kind !== "codes") throw new ScoringInputError(`The ${what} layer must be given as "values" or "codes".`);
  const { codes, scale, offset, nodataCode } = layer;
  if (!(codes instanceof Uint8Array) && !(codes instanceof Uint16Array))
    throw new ScoringInputError(`The ${what} layer's codes must be a Uint8Array or Uint16Array.`);
  checkLength(what, codes.length, n);
  const top = codes instanceof Uint8Array ? 255 : 65535;
  if (!(scale > 0) || !Number.isFinite(scale) || !Number.isFinite(offset))
    throw new ScoringInputError(`The ${what} layer needs a positive scale and a finite offset (got ${scale}, ${offset}).`);
  if (!Number.isInteger(nodataCode) || nodataCode < 1 || nodataCode > top)
    throw new ScoringInputError(`The ${what} layer's nodata code must be a whole number from 1 to ${top} (got ${nodataCode}).`);
}

/** True when the layer has at least one cell that is not nodata. O(n) worst case, stops at the first. */
function hasValidCell(layer: LayerData): boolean {
  if (layer.kind === "values") {
    const v = layer.values;
    for (let i = 0; i < v.length; i++) if (v[i] === v[i]) return true;
    return false;
  }
  const c = layer.codes;
  const nd = layer.nodataCode;
  for (let i = 0; i < c.length; i++) if (c[i] < nd) return true;
  return false;
}

/**
 * Code → score for a quantised layer: {@link quantisedCurveTable}, padded with NaN up to every code
 * the array type can hold (codes above the nodata code read as nodata).
 */
function codeTable(curve: FactorCurve, layer: Extract<LayerData, { kind: "codes" }>): Float32Array {
  const t = quantisedCurveTable(curve, layer);
  const need = layer.codes instanceof Uint8Array ? 256 : 65536;
  if (t.length >= need) return t;
  const padded = new Float32Array(need).fill(NaN);
  padded.set(t);
  return padded;
}

/** The layer's values as Float32 (values: the array itself; codes: decoded into `out`). O(n). */
function decodeLayer(layer: LayerData, out: Float32Array): Float32Array {
  if (layer.kind === "values") return layer.values;
  const { codes, scale, offset, nodataCode } = layer;
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i];
    out[i] = c < nodataCode ? c * scale + offset : NaN;
  }
  return out;
}

/** The curve's score per cell into `out` (values through the curve, codes through a table). O(n). */
function curveScoresInto(curve: FactorCurve, layer: LayerData, out: Float32Array): Float32Array {
  if (layer.kind === "values") return applyCurve(curve, layer.values, out);
  const table = codeTable(curve, layer);
  const codes = layer.codes;
  for (let i = 0; i < codes.length; i++) out[i] = table[codes[i]];
  return out;
}

function withLabel<T>(label: string, f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (e instanceof ScoringInputError) throw new ScoringInputError(`${label}: ${e.message}`, e.field ?? label);
    throw e;
  }
}

function formatKa(ageKa: number): string {
  return `${Number(ageKa.toFixed(3))} ka`;
}

/**
 * Common practice, no source.
 *
 * Buffers for {@link scoreAge} on this grid (occupation, potential, unassessed, one factor's
 * scores). O(n) memory.
 */
export function createScoreScratch(grid: GridShape): ScoreScratch {
  const n = checkGrid(grid);
  return {
    occupation: new Float32Array(n),
    potential: new Float32Array(n),
    unassessed: new Uint8Array(n),
    scores: new Float32Array(n),
    shelterCache: null,
  };
}

/** The shelter index of a land-class layer, from the cache when the same array was scored before. */
function cachedShelter(landClass: Uint8Array, grid: GridShape, radiusM: number, ctx: Ctx): Float32Array {
  const c = ctx.shelterCache;
  if (c && c.landClass === landClass && c.radiusM === radiusM && c.cellSizeX === grid.cellSizeX && c.cellSizeY === grid.cellSizeY)
    return c.values;
  const values = shelterIndex(landClass, grid, radiusM);
  ctx.shelterCache = { landClass, radiusM, cellSizeX: grid.cellSizeX, cellSizeY: grid.cellSizeY, values };
  return values;
}

interface Ctx {
  scores: Float32Array | null;
  shelterCache: ShelterCache | null;
}

// One weighted term of the sum. kind: 0 a constant score, 1 a Float32 layer of values, 2 codes.
const TERM_CONST = 0, TERM_VALUES = 1, TERM_CODES = 2;
interface Term {
  kind: number;
  weight: number;
  curve: FactorCurve;
  constant: number;
  values: Float32Array | null;
  codes: Uint8Array | Uint16Array | null;
  table: Float32Array | null;
}

/**
 * Occupation at one age into `out` (length n): the WLC over occupiable cells, NaN elsewhere.
 * Returns the notes. See {@link scoreAge} for the rules.
 */
function occupationInto(content: WeightSetContent, grid: GridShape, n: number, age: AgeInputs, out: Float32Array, ctx: Ctx): string[] {
  const lc = age.landClass;
  if (!(lc instanceof Uint8Array)) throw new ScoringInputError(`The land and sea layer at ${formatKa(age.ageKa)} must be a Uint8Array.`);
  checkLength(`land and sea (${formatKa(age.ageKa)})`, lc.length, n);
  const labels = content.factors.map((f) => {
    const def = factorDef(f.factor);
    if (!def) throw new ScoringInputError(`Unknown factor "${f.factor}".`, "factors");
    return def.label;
  });
  // refuses negative, NaN and all-zero weights, naming the factor
  const w0 = normaliseWeights(content.factors.map((f, k) => ({ name: labels[k], weight: f.weight })));
  const notes: string[] = [];
  const terms: Term[] = [];
  const at = formatKa(age.ageKa);
  for (let k = 0; k < content.factors.length; k++) {
    if (w0[k] === 0) continue;
    const f = content.factors[k];
    const label = labels[k];
    withLabel(label, () => validateCurve(f.curve));
    const term: Term = { kind: TERM_CONST, weight: w0[k], curve: f.curve, constant: 0, values: null, codes: null, table: null };
    if (f.factor === "shelter") {
      term.kind = TERM_VALUES;
      term.values = cachedShelter(lc, grid, content.shelterRadiusM, ctx);
      terms.push(term);
      continue;
    }
    const layer = age.layers[f.factor];
    if (layer !== undefined && layer !== null) withLabel(label, () => checkLayer(label.toLowerCase(), layer, n));
    if (layer === undefined || layer === null || !hasValidCell(layer)) {
      if (f.factor.startsWith("dist_")) {
        // the feature does not exist at this age: every cell is far from it
        term.constant = evaluateCurve(f.curve, Infinity);
        notes.push(
          `No ${label.replace(/^Distance to (a |an |the )?/i, "").toLowerCase()} at ${at}: ${label.toLowerCase()} is scored as far away (${Number(term.constant.toFixed(3))}) everywhere.`,
        );
        terms.push(term);
      } else {
        notes.push(`No data for ${label.toLowerCase()} at ${at}: it is left out and the other weights are rescaled to sum 1.`);
      }
      continue;
    }
    if (layer.kind === "values") {
      term.kind = TERM_VALUES;
      term.values = layer.values;
    } else {
      term.kind = TERM_CODES;
      term.codes = layer.codes;
      term.table = withLabel(label, () => codeTable(f.curve, layer));
    }
    terms.push(term);
  }
  if (terms.length === 0)
    throw new ScoringInputError(`Nothing to score at ${at}: every factor with a weight above 0 has no data there.`, "factors");
  let total = 0;
  for (const t of terms) total += t.weight;
  for (const t of terms) t.weight /= total;

  // Constant terms (absent distance layers) start the sum: base on occupiable cells (land,
  // intertidal), NaN elsewhere.
  let base = 0;
  for (const t of terms) if (t.kind === TERM_CONST) base += t.weight * t.constant;
  for (let i = 0; i < n; i++) {
    const c = lc[i];
    out[i] = c === 0 || c === 2 ? base : NaN;
  }
  // Coded terms through tables premultiplied by their weight, four factors per pass over the output
  // (fewer reads and writes of it than one pass per factor), then the remainder.
  const tables: Float32Array[] = [];
  const codeArrays: (Uint8Array | Uint16Array)[] = [];
  for (const t of terms) {
    if (t.kind !== TERM_CODES) continue;
    const src = t.table!;
    const tw = new Float32Array(src.length);
    for (let c = 0; c < src.length; c++) tw[c] = t.weight * src[c];
    tables.push(tw);
    codeArrays.push(t.codes!);
  }
  const nc = tables.length;
  let k = 0;
  for (; k + 3 < nc; k += 4) {
    const ta = tables[k], ca = codeArrays[k], tb = tables[k + 1], cb = codeArrays[k + 1];
    const tc = tables[k + 2], cc = codeArrays[k + 2], td = tables[k + 3], cd = codeArrays[k + 3];
    for (let i = 0; i < n; i++) out[i] += ta[ca[i]] + tb[cb[i]] + tc[cc[i]] + td[cd[i]];
  }
  for (; k + 1 < nc; k += 2) {
    const ta = tables[k], ca = codeArrays[k], tb = tables[k + 1], cb = codeArrays[k + 1];
    for (let i = 0; i < n; i++) out[i] += ta[ca[i]] + tb[cb[i]];
  }
  if (k < nc) {
    const ta = tables[k], ca = codeArrays[k];
    for (let i = 0; i < n; i++) out[i] += ta[ca[i]];
  }
  // Value layers (the job): each through its curve into the scratch, then added.
  for (const t of terms) {
    if (t.kind !== TERM_VALUES) continue;
    if (ctx.scores === null) ctx.scores = new Float32Array(n);
    const s = applyCurve(t.curve, t.values!, ctx.scores);
    const wk = t.weight;
    for (let i = 0; i < n; i++) out[i] += wk * s[i];
  }
  return notes;
}

function checkPreservation(preservation: PreservationResult, n: number): void {
  if (!preservation.active) return;
  if (!preservation.score || !preservation.unassessed)
    throw new ScoringInputError("An active preservation result needs its score and unassessed layers.");
  checkLength("preservation", preservation.score.length, n);
  checkLength("preservation unassessed", preservation.unassessed.length, n);
}

/**
 * potential = occupation × preservation where assessed; NaN and unassessed = 1 where `occupiable` but
 * preservation is unassessed. Inactive preservation: potential = occupation.
 */
function applyPreservation(
  occupation: Float32Array,
  occupiable: Uint8Array | null,
  landClass: Uint8Array | null,
  preservation: PreservationResult,
  potential: Float32Array,
  unassessed: Uint8Array,
): void {
  const n = occupation.length;
  if (!preservation.active) {
    potential.set(occupation);
    unassessed.fill(0);
    return;
  }
  const ps = preservation.score!;
  const pu = preservation.unassessed!;
  for (let i = 0; i < n; i++) {
    let occ: boolean;
    if (landClass !== null) {
      const c = landClass[i];
      occ = c === 0 || c === 2;
    } else occ = occupiable![i] !== 0;
    if (occ && pu[i] === 1) {
      potential[i] = NaN;
      unassessed[i] = 1;
    } else {
      potential[i] = occupation[i] * ps[i];
      unassessed[i] = 0;
    }
  }
}

/**
 * Malczewski, J. (2000) "On the use of weighted linear combination method in GIS: common and best
 * practice approaches", Transactions in GIS 4(1), 5–22; factor curves after Eastman, J.R. et al.
 * (1995) Photogrammetric Engineering & Remote Sensing 61(5), 539–547. The handling of absent layers
 * and of preservation is our own (design §4; common practice, no source).
 *
 * Scores one age: occupation = Σ wₖ·curveₖ(factorₖ) over occupiable cells (land_class 0 land or 2
 * intertidal), NaN elsewhere, with the weights normalised to sum 1 (negative, NaN or all-zero weights
 * are refused with {@link ScoringInputError} naming the factor); potential = occupation ×
 * preservation score when preservation is active, NaN and `unassessed` = 1 on occupiable cells whose
 * horizon is unassessed.
 *
 * Layers: each factor's layer may be values (Float32, NaN = nodata; through its curve directly) or
 * codes (Uint8/Uint16 with scale, offset and nodata code; through a lookup table from
 * `quantisedCurveTable`, one per factor per call), in any mix. `shelter` is computed from the land
 * class with `content.shelterRadiusM` (`shelter.ts`). Factors of weight 0 are skipped (their layers
 * may be absent). A factor of weight > 0 whose layer is absent or all nodata: a distance factor
 * (`dist_*`) scores as its curve at +∞ — the feature does not exist at this age, so it is far away
 * (0 for a decreasing linear or sigmoid curve, the limit 0 for J-shaped); any other factor is left out
 * and the remaining weights renormalised; both are reported in `notes`. Nothing left → error. A cell
 * where a present factor's layer is nodata gives NaN (a missing factor is not read as a poor one),
 * except through the aspect curve, which scores nodata as a flat (`flatValue`).
 *
 * Preconditions: every layer width·height cells, row 0 north; `preservation` from
 * {@link preservationModel} on the same grid. With `scratch` (from {@link createScoreScratch}) no
 * array of n cells is allocated (except the shelter index when the land class changes) and the
 * result holds the scratch's arrays.
 *
 * Complexity: O(n·k) for n cells and k factors — one sequential pass per factor — plus O(n) for
 * the mask, the shelter index (if weighted) and preservation; tables O(256) or O(65 536) per coded
 * factor.
 */
export function scoreAge(
  content: WeightSetContent,
  grid: GridShape,
  age: AgeInputs,
  preservation: PreservationResult,
  scratch?: ScoreScratch,
): ScoreResult {
  const n = checkGrid(grid);
  checkPreservation(preservation, n);
  if (scratch) {
    checkLength("scratch", scratch.occupation.length, n);
    if (scratch.potential.length !== n || scratch.unassessed.length !== n || scratch.scores.length !== n)
      throw new ScoringInputError(`The scratch buffers do not match the grid of ${n} cells.`);
  }
  const ctx: Ctx = scratch ?? { scores: null, shelterCache: null };
  const occupation = scratch ? scratch.occupation : new Float32Array(n);
  const notes = occupationInto(content, grid, n, age, occupation, ctx);
  const potential = scratch ? scratch.potential : new Float32Array(n);
  const unassessed = scratch ? scratch.unassessed : new Uint8Array(n);
  applyPreservation(occupation, null, age.landClass, preservation, potential, unassessed);
  return { occupation, potential, unassessed, notes };
}

/**
 * Our own rule: decision 401 (docs/decisions/401-period-rule.md), the time-weighted mean of
 * `periods.ts`; occupation per age as {@link scoreAge}. Common practice, no source.
 *
 * A period's score: occupation at each age with positive weight in the window (ages of weight 0 are
 * not scored), combined by `combinePeriod` with the period's rule ("zero": ages when the cell was sea
 * or lake count 0; "skip": left out), then multiplied by preservation once. `unassessed` = 1 where the
 * cell was occupiable at some age of the window and preservation is unassessed. `notes` gathers the
 * ages' notes and says when the window reaches past the reconstruction's ages. `ageWeights` gives
 * each age's share of the window (sums to 1).
 *
 * Preconditions: `ages` the reconstruction's ages (distinct), every layer on this grid; a period that
 * overlaps the ages (else {@link ScoringInputError} naming the period).
 *
 * Complexity: O(n·k·m') for m' ages of positive weight; m' Float32 layers of n cells at once.
 */
export function scorePeriod(
  content: WeightSetContent,
  grid: GridShape,
  period: PeriodSetting,
  ages: AgeInputs[],
  preservation: PreservationResult,
): ScoreResult & { ageWeights: { ageKa: number; weight: number }[] } {
  const n = checkGrid(grid);
  checkPreservation(preservation, n);
  if (ages.length === 0) throw new ScoringInputError(`Period "${period.name}": the reconstruction has no ages to score.`, "periods");
  const agesKa = ages.map((a) => a.ageKa);
  checkPeriodAgainstAges(period, agesKa);
  const window = { youngKa: period.youngKa, oldKa: period.oldKa };
  const pw = periodAgeWeights(agesKa, window);
  const ctx: Ctx = { scores: null, shelterCache: null };
  const perAge: Float32Array[] = [];
  const ever = new Uint8Array(n);
  const notes: string[] = [];
  let unused: Float32Array | null = null;
  for (let k = 0; k < ages.length; k++) {
    if (pw.weights[k] === 0) {
      // not read by combinePeriod (weight 0): one shared placeholder
      unused ??= new Float32Array(n).fill(NaN);
      perAge.push(unused);
      continue;
    }
    const occ = new Float32Array(n);
    notes.push(...occupationInto(content, grid, n, ages[k], occ, ctx));
    const lc = ages[k].landClass;
    for (let i = 0; i < n; i++) {
      const c = lc[i];
      if (c === 0 || c === 2) ever[i] = 1;
    }
    perAge.push(occ);
  }
  const occupation = combinePeriod(perAge, agesKa, window, period.rule);
  const potential = new Float32Array(n);
  const unassessed = new Uint8Array(n);
  applyPreservation(occupation, ever, null, preservation, potential, unassessed);
  if (ages.length === 1) notes.push(`The reconstruction has one age (${formatKa(agesKa[0])}): the period "${period.name}" is scored on it alone.`);
  else if (pw.coveredShare < 1 - 1e-9)
    notes.push(
      `The period "${period.name}" (${period.youngKa}–${period.oldKa} ka) reaches past the reconstruction's ages: it is scored on ${Number(pw.coveredYoungKa.toFixed(3))}–${Number(pw.coveredOldKa.toFixed(3))} ka only.`,
    );
  return { occupation, potential, unassessed, notes, ageWeights: ages.map((a, k) => ({ ageKa: a.ageKa, weight: pw.weights[k] })) };
}

/**
 * What {@link preservationModel} can keep between calls on the same reconstruction (the Web Worker,
 * when a preservation weight or curve moves): the shelter index of each age's land-class array and
 * each cell's nearest age, and the shelter index at that age. Keyed by the identity of the arrays: do
 * not change them in place.
 */
export interface PreservationCache {
  shelter: WeakMap<Uint8Array, ShelterCache>;
  nearest: { floodingAge: LayerData; floodingStatus: Uint8Array; agesKey: string; nearest: Int32Array; used: Uint8Array } | null;
  /** the shelter index at each cell's nearest age, for one radius */
  atFlooding: { nearest: Int32Array; radiusM: number; cellSizeX: number; cellSizeY: number; values: Float32Array } | null;
}

/** Common practice, no source. An empty {@link PreservationCache}. O(1). */
export function createPreservationCache(): PreservationCache {
  return { shelter: new WeakMap(), nearest: null, atFlooding: null };
}

/**
 * Per cell, the index (into `inputs.agesKa`) of the reconstructed age nearest its flooding age (a
 * tie → the older age; never drowned → the youngest age; no flooding age or nodata → −1), and which
 * ages are used. O(n log m).
 */
function nearestAges(inputs: PreservationInputs, n: number, m: number, tmp: Float32Array, cache: PreservationCache | undefined) {
  const ages = inputs.agesKa;
  const agesKey = ages.join(",");
  const c = cache?.nearest;
  if (c && c.floodingAge === inputs.floodingAge && c.floodingStatus === inputs.floodingStatus && c.agesKey === agesKey) return c;
  const order = Array.from(ages.keys()).sort((a, b) => ages[a] - ages[b]);
  const sorted = order.map((k) => ages[k]);
  const status = inputs.floodingStatus;
  const floodAge = decodeLayer(inputs.floodingAge, tmp);
  const nearest = new Int32Array(n);
  const used = new Uint8Array(m);
  for (let i = 0; i < n; i++) {
    const st = status[i];
    const f = floodAge[i];
    let k = -1;
    if (st === 255) k = -1;
    else if (f === f) {
      // binary search: first sorted age ≥ f, then the nearer of it and the one before (tie → older)
      let lo = 0;
      let hi = m;
      while (lo < hi) {
        const mid = (lo + hi) >>> 1;
        if (sorted[mid] < f) lo = mid + 1;
        else hi = mid;
      }
      let j: number;
      if (lo === 0) j = 0;
      else if (lo === m) j = m - 1;
      else j = f - sorted[lo - 1] < sorted[lo] - f ? lo - 1 : lo;
      k = order[j];
    } else if (st === 0) k = order[0];
    nearest[i] = k;
    if (k >= 0) used[k] = 1;
  }
  const r = { floodingAge: inputs.floodingAge, floodingStatus: status, agesKey, nearest, used };
  if (cache) cache.nearest = r;
  return r;
}

/**
 * Per cell, the shelter index at the reconstructed age nearest its flooding age (NaN where there is
 * none: see {@link nearestAges}). O(n) per age used, plus the shelter index of each (cached).
 */
function shelterAtFlooding(
  radiusM: number,
  grid: GridShape,
  inputs: PreservationInputs,
  n: number,
  m: number,
  tmp: Float32Array,
  cache: PreservationCache | undefined,
): Float32Array {
  const near = nearestAges(inputs, n, m, tmp, cache);
  const c = cache?.atFlooding;
  if (c && c.nearest === near.nearest && c.radiusM === radiusM && c.cellSizeX === grid.cellSizeX && c.cellSizeY === grid.cellSizeY)
    return c.values;
  const { nearest, used } = near;
  const out = new Float32Array(n).fill(NaN);
  for (let k = 0; k < m; k++) {
    if (used[k] === 0) continue;
    const lc = inputs.landClassByAge[k];
    let sh: Float32Array;
    const hit = cache?.shelter.get(lc);
    if (hit && hit.radiusM === radiusM && hit.cellSizeX === grid.cellSizeX && hit.cellSizeY === grid.cellSizeY) sh = hit.values;
    else {
      sh = shelterIndex(lc, grid, radiusM);
      cache?.shelter.set(lc, { landClass: lc, radiusM, cellSizeX: grid.cellSizeX, cellSizeY: grid.cellSizeY, values: sh });
    }
    for (let i = 0; i < n; i++) if (nearest[i] === k) out[i] = sh[i];
  }
  if (cache) cache.atFlooding = { nearest, radiusM, cellSizeX: grid.cellSizeX, cellSizeY: grid.cellSizeY, values: out };
  return out;
}

/**
 * Design §4 (preservation as its own model); the components and their combination are our own
 * (common practice, no source).
 *
 * Per cell, the weighted mean (weights normalised; a component of weight 0 is skipped) of
 * - base level: the base-level curve on TPI (m; negative in valleys and hollows, which keep old
 *   surfaces);
 * - shoreface erosion: the curve on the time the cell spent in the shoreface erosion zone,
 *   erosionDepthM / riseRateAtFlooding (m ÷ m/ka = ka); a cell never drowned in the window
 *   (flooding_status 0) scores 1, a cell sea throughout (status 2) NaN; a rate ≤ 0 is an endless
 *   time (the curve at +∞);
 * - shelter: the shelter curve on the shelter index (`shelter.ts`, radius `content.shelterRadiusM`)
 *   at the reconstructed age nearest the cell's flooding age (a tie goes to the older age, when the
 *   cell was still dry); cells never drowned take the youngest age;
 * then cells with evidence (`horizonEvidenceGrid`) are set to 1 (intact) or 0 (truncated) — evidence
 * decides even where the horizon is otherwise unassessed, since a core or an interpretation is
 * horizon data; every other cell whose horizon is unassessed gets NaN and `unassessed` = 1, never a
 * low score. Nodata (flooding_status 255) gives NaN.
 *
 * Inactive (score null, `reason` says which, in words for the page) when
 * `content.preservation.enabled` is false, or when `inputs` is null or `inputs.unassessed` is null
 * (the reconstruction has no horizon data at all).
 *
 * Preconditions: every layer on `grid`; `agesKa` and `landClassByAge` the same length, at least one
 * age. With `cache` (from {@link createPreservationCache}) the shelter indices and nearest ages of an
 * earlier call on the same arrays are reused. Throws {@link ScoringInputError}. Complexity: O(n) per component, O(n log m) to find the
 * nearest of m ages, O(n) per age whose shelter is needed; a few Float32 arrays of n.
 */
export function preservationModel(
  content: WeightSetContent,
  grid: GridShape,
  inputs: PreservationInputs | null,
  cache?: PreservationCache,
): PreservationResult {
  const p = content.preservation;
  if (!p.enabled) return { active: false, reason: PRESERVATION_OFF_REASON, score: null, unassessed: null };
  if (inputs === null || inputs.unassessed === null)
    return { active: false, reason: PRESERVATION_NO_HORIZON_REASON, score: null, unassessed: null };
  const n = checkGrid(grid);
  checkLayer("TPI", inputs.tpi, n);
  checkLayer("rise rate at flooding", inputs.riseRateAtFlooding, n);
  checkLayer("flooding age", inputs.floodingAge, n);
  checkLength("flooding status", inputs.floodingStatus.length, n);
  checkLength("unassessed", inputs.unassessed.length, n);
  if (inputs.evidence !== null) checkLength("horizon evidence", inputs.evidence.length, n);
  const m = inputs.agesKa.length;
  if (m === 0 || inputs.landClassByAge.length !== m)
    throw new ScoringInputError(`Preservation needs the land and sea layer of every age (${inputs.landClassByAge.length} layers for ${m} ages).`);
  for (let k = 0; k < m; k++) {
    if (!Number.isFinite(inputs.agesKa[k])) throw new ScoringInputError(`The reconstruction's ages must be finite numbers (got ${inputs.agesKa[k]}).`);
    checkLength(`land and sea (${formatKa(inputs.agesKa[k])})`, inputs.landClassByAge[k].length, n);
  }
  const w = normaliseWeights([
    { name: "preservation: below local base level", weight: p.baseLevel.weight },
    { name: "preservation: shoreface erosion", weight: p.shorefaceErosion.weight },
    { name: "preservation: shelter", weight: p.shelter.weight },
  ]);
  const depth = p.shorefaceErosion.erosionDepthM;
  if (!(depth > 0) || !Number.isFinite(depth))
    throw new ScoringInputError(`The erosion depth must be a positive number of metres (got ${depth}).`, "erosionDepthM");
  const status = inputs.floodingStatus;
  const score = new Float32Array(n); // zeros
  const tmp = new Float32Array(n);

  if (w[0] > 0) {
    const s = withLabel("Preservation, below local base level", () => curveScoresInto(p.baseLevel.curve, inputs.tpi, tmp));
    const wk = w[0];
    for (let i = 0; i < n; i++) score[i] += wk * s[i];
  }

  if (w[1] > 0) {
    withLabel("Preservation, shoreface erosion", () => validateCurve(p.shorefaceErosion.curve));
    const wk = w[1];
    const rr = inputs.riseRateAtFlooding;
    if (rr.kind === "codes") {
      // one score per code: curve(erosionDepthM / rate)
      const size = rr.codes instanceof Uint8Array ? 256 : 65536;
      const times = new Float32Array(size);
      for (let c = 0; c < size; c++) {
        const r = c < rr.nodataCode ? c * rr.scale + rr.offset : NaN;
        times[c] = r > 0 ? depth / r : r === r ? Infinity : NaN;
      }
      const tab = applyCurve(p.shorefaceErosion.curve, times, times);
      const codes = rr.codes;
      for (let i = 0; i < n; i++) {
        const st = status[i];
        score[i] += wk * (st === 0 ? 1 : st === 1 ? tab[codes[i]] : NaN);
      }
    } else {
      const rate = rr.values;
      const time = tmp;
      for (let i = 0; i < n; i++) {
        const r = rate[i];
        time[i] = status[i] === 1 ? (r > 0 ? depth / r : r === r ? Infinity : NaN) : NaN;
      }
      applyCurve(p.shorefaceErosion.curve, time, time);
      for (let i = 0; i < n; i++) {
        const st = status[i];
        score[i] += wk * (st === 0 ? 1 : st === 1 ? time[i] : NaN);
      }
    }
  }

  if (w[2] > 0) {
    withLabel("Preservation, shelter", () => validateCurve(p.shelter.curve));
    const atFlooding = shelterAtFlooding(content.shelterRadiusM, grid, inputs, n, m, tmp, cache);
    const s = applyCurve(p.shelter.curve, atFlooding, tmp);
    const wk = w[2];
    for (let i = 0; i < n; i++) score[i] += wk * s[i];
  }

  const un = new Uint8Array(n);
  const ua = inputs.unassessed;
  const ev = inputs.evidence;
  for (let i = 0; i < n; i++) {
    if (status[i] === 255 || ua[i] === 255) score[i] = NaN;
    else if (ev !== null && ev[i] === EVIDENCE_INTACT) score[i] = 1;
    else if (ev !== null && ev[i] === EVIDENCE_TRUNCATED) score[i] = 0;
    else if (ua[i] === 1) {
      score[i] = NaN;
      un[i] = 1;
    }
  }
  return { active: true, reason: PRESERVATION_ON_REASON, score, unassessed: un };
}

/**
 * FNV-1a, 32-bit (Fowler, Noll & Vo; common practice, no published source).
 *
 * A checksum of a score layer, to show the browser's result equals the server's on the same inputs:
 * FNV-1a over the little-endian bytes of each Float32, every NaN hashed as the one canonical NaN
 * (0x7fc00000) and −0 as +0, so the sum does not depend on how an engine spells NaN. 8 hex digits.
 * O(n).
 */
export function potentialChecksum(a: Float32Array): string {
  const bits = new Uint32Array(a.buffer, a.byteOffset, a.length);
  let h = 0x811c9dc5;
  for (let i = 0; i < bits.length; i++) {
    let b = bits[i];
    if ((b & 0x7f800000) === 0x7f800000 && (b & 0x007fffff) !== 0) b = 0x7fc00000;
    else if (b === 0x80000000) b = 0;
    h = Math.imul(h ^ (b & 0xff), 0x01000193);
    h = Math.imul(h ^ ((b >>> 8) & 0xff), 0x01000193);
    h = Math.imul(h ^ ((b >>> 16) & 0xff), 0x01000193);
    h = Math.imul(h ^ (b >>> 24), 0x01000193);
  }
  return (h >>> 0).toString(16).padStart(8, "0");
}
