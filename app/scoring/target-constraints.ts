/**
 * What a corer and a vessel can really do (design §6, issue 11): the access constraints that turn a
 * score map into cells a core can be taken from, and for every refused cell the first constraint it
 * fails ("why not here").
 *
 * Facts of the trade behind the defaults (practice, shared/check-values.md "Facts of the trade"):
 * vibrocorer barrels are commonly 3 m or 6 m; in stiff clay, gravel lags, till or dense sand expect
 * refusal at 1–3 m; a useful core passes the cover and 0.5–1 m into the older unit; recovery is
 * shorter than penetration. Exclusion zones are drawn around discrete features from their mapped
 * extent plus position uncertainty, commonly with a 50 m buffer, 100 m or more around wrecks; the
 * regulator sets the figure (the caller rasterises features and buffers into the exclusion mask).
 */
import { euclideanDistance } from "../terrain/distance-transform.ts";
import { ScoringInputError } from "./errors.ts";
import type { GridShape } from "./potential.ts";

/** One row of the user's cover-type table: how far a corer is expected to get through this cover. */
export interface CoverType {
  /** stable id, e.g. "gravel_lag" */
  id: string;
  /** words for the page and the exports */
  label: string;
  /** expected penetration, m below seabed; null = no early refusal expected (the barrel length applies) */
  expectedPenetrationM: number | null;
}

/**
 * Default cover types (practice, check-values.md "Facts of the trade": stiff clay, gravel lags, till or
 * dense sand refuse at 1–3 m). Within that range the defaults are a cautious pick, not a source: 1 m for
 * gravel lag and till (the worst refusers), 2 m for stiff clay and dense sand. Soft mud and loose sand
 * are given no early refusal (the barrel decides). The user edits the table per project.
 */
export const DEFAULT_COVER_TYPES: readonly CoverType[] = [
  { id: "soft_mud", label: "Soft mud or silt", expectedPenetrationM: null },
  { id: "loose_sand", label: "Loose sand", expectedPenetrationM: null },
  { id: "stiff_clay", label: "Stiff clay", expectedPenetrationM: 2 },
  { id: "dense_sand", label: "Dense sand", expectedPenetrationM: 2 },
  { id: "gravel_lag", label: "Gravel lag", expectedPenetrationM: 1 },
  { id: "till", label: "Till (glacial diamict)", expectedPenetrationM: 1 },
];

/** A corer, a vessel and a survey: the limits a target must respect. */
export interface ConstraintSet {
  /** shallowest water the vessel may work in, m (positive down) */
  minWaterDepthM: number;
  /** deepest water the corer can be deployed in, m */
  maxWaterDepthM: number;
  /** steepest seabed the corer frame stands on, degrees */
  maxSlopeDeg: number;
  /** barrel length, m (practice: commonly 3 or 6) — the most any core can penetrate */
  barrelLengthM: number;
  /** how far into the older unit below the horizon a useful core must go, m (practice: 0.5–1) */
  requiredIntoOlderUnitM: number;
  /** the cover-type table; the `coverType` layer indexes it */
  coverTypes: CoverType[];
  /** cover type assumed where the cover-type layer is missing or 255 */
  defaultCoverTypeId: string;
  /** furthest a target may lie from a survey line (so the core ties to the seismic), m; null = no limit */
  maxDistanceToSurveyLineM: number | null;
  /** positioning tolerance (vessel position + corer offset), m: allowed ground narrower than this is refused */
  positioningToleranceM: number;
  /**
   * Cells where the horizon is unassessed: "refuse" (default — the core's purpose cannot be checked)
   * or "core-to-refusal" (allowed; the plan is to drive the full expected penetration).
   */
  unassessedHorizon: "refuse" | "core-to-refusal";
}

/** Defaults from practice (check-values.md "Facts of the trade"); depths, slope and distance are project choices. */
export function defaultConstraintSet(): ConstraintSet {
  return {
    minWaterDepthM: 5,
    maxWaterDepthM: 120,
    maxSlopeDeg: 5,
    barrelLengthM: 6,
    requiredIntoOlderUnitM: 1,
    coverTypes: DEFAULT_COVER_TYPES.map((c) => ({ ...c })),
    defaultCoverTypeId: "soft_mud",
    maxDistanceToSurveyLineM: 250,
    positioningToleranceM: 10,
    unassessedHorizon: "refuse",
  };
}

/** The layers the constraints read, all on one grid (row 0 north, index = row·width + col). */
export interface ConstraintLayers {
  grid: GridShape;
  /** today's seabed elevation, m relative to present mean sea level, positive up (water depth = −elevation); NaN nodata */
  seabedElevationM: Float32Array;
  /** seabed slope, degrees (Horn 1981 on the seabed — not the `slope` layer, which follows the analysis surface); NaN nodata */
  seabedSlopeDeg: Float32Array;
  /** layer `cover_thickness`: depth to the horizon below seabed, m; NaN where unassessed. null = no horizon data */
  coverThicknessM: Float32Array | null;
  /** index into ConstraintSet.coverTypes per cell, 255 = unknown (the default type applies); null = default everywhere */
  coverType: Uint8Array | null;
  /** layer `dist_survey_line`, m; null when the reconstruction has no line navigation */
  distSurveyLineM: Float32Array | null;
  /** 1 inside the survey area (rasterised by the caller); null = the whole grid */
  surveyArea: Uint8Array | null;
  /** 1 inside an exclusion feature or its buffer (rasterised by the caller); null = none */
  exclusion: Uint8Array | null;
}

/** First-failing-reason codes, in the order they are tested. */
export const REASON_ALLOWED = 0;
export const REASON_NODATA = 1;
export const REASON_OUTSIDE_SURVEY_AREA = 2;
export const REASON_EXCLUSION = 3;
export const REASON_TOO_SHALLOW = 4;
export const REASON_TOO_DEEP = 5;
export const REASON_TOO_STEEP = 6;
export const REASON_HORIZON_UNASSESSED = 7;
export const REASON_HORIZON_BEYOND_PENETRATION = 8;
export const REASON_FAR_FROM_LINE = 9;
export const REASON_NARROWER_THAN_TOLERANCE = 10;

/** Words for each reason code, for "why not here" and the legend. */
export const REASON_TEXT: readonly string[] = [
  "allowed",
  "no seabed data here",
  "outside the survey area",
  "inside an exclusion zone or its buffer",
  "water shallower than the vessel's minimum",
  "water deeper than the corer's maximum",
  "seabed steeper than the corer frame's limit",
  "the horizon is unassessed here",
  "the horizon plus the required depth into the older unit lies beyond the expected penetration",
  "too far from a survey line to tie the core to the seismic",
  "the allowed ground here is narrower than the positioning tolerance",
];

export interface ConstraintResult {
  /** 1 where a core may be taken */
  allowed: Uint8Array;
  /** first failing reason per cell (REASON_* codes; 0 = allowed) */
  reason: Uint8Array;
  /** cells per reason code */
  counts: number[];
}

function finite(x: number): boolean {
  return typeof x === "number" && Number.isFinite(x);
}

/**
 * Common practice, no source (defaults from check-values.md "Facts of the trade").
 *
 * Checks a constraint set; throws {@link ScoringInputError} naming the field for: non-finite or
 * negative numbers, min depth above max depth, a slope outside (0, 90), a barrel not > 0, an empty or
 * duplicated cover-type table, a penetration ≤ 0 or beyond the barrel, an unknown default cover type.
 * O(cover types).
 */
export function checkConstraintSet(set: ConstraintSet): void {
  const nonNeg: Array<[keyof ConstraintSet, string]> = [
    ["minWaterDepthM", "minimum water depth"],
    ["maxWaterDepthM", "maximum water depth"],
    ["requiredIntoOlderUnitM", "required depth into the older unit"],
    ["positioningToleranceM", "positioning tolerance"],
  ];
  for (const [k, what] of nonNeg) {
    const v = set[k] as number;
    if (!finite(v) || v < 0) throw new ScoringInputError(`The ${what} must be a number of metres, zero or more (got ${v}).`, k);
  }
  if (set.minWaterDepthM > set.maxWaterDepthM)
    throw new ScoringInputError(
      `The minimum water depth (${set.minWaterDepthM} m) is greater than the maximum (${set.maxWaterDepthM} m).`,
      "minWaterDepthM",
    );
  if (!finite(set.maxSlopeDeg) || set.maxSlopeDeg <= 0 || set.maxSlopeDeg >= 90)
    throw new ScoringInputError(`The corer frame's slope limit must lie between 0° and 90° (got ${set.maxSlopeDeg}).`, "maxSlopeDeg");
  if (!finite(set.barrelLengthM) || set.barrelLengthM <= 0)
    throw new ScoringInputError(`The barrel length must be a positive number of metres (got ${set.barrelLengthM}).`, "barrelLengthM");
  if (set.maxDistanceToSurveyLineM !== null && (!finite(set.maxDistanceToSurveyLineM) || set.maxDistanceToSurveyLineM < 0))
    throw new ScoringInputError(
      `The distance to a survey line must be a number of metres, zero or more, or no limit (got ${set.maxDistanceToSurveyLineM}).`,
      "maxDistanceToSurveyLineM",
    );
  if (set.unassessedHorizon !== "refuse" && set.unassessedHorizon !== "core-to-refusal")
    throw new ScoringInputError(`Unassessed horizon cells must be "refuse" or "core-to-refusal".`, "unassessedHorizon");
  if (!Array.isArray(set.coverTypes) || set.coverTypes.length === 0)
    throw new ScoringInputError("The cover-type table needs at least one row.", "coverTypes");
  if (set.coverTypes.length > 255) throw new ScoringInputError("The cover-type table holds at most 255 rows.", "coverTypes");
  const seen = new Set<string>();
  for (const c of set.coverTypes) {
    if (!c.id || seen.has(c.id)) throw new ScoringInputError(`Cover type "${c.id}" is missing or listed twice.`, "coverTypes");
    seen.add(c.id);
    const p = c.expectedPenetrationM;
    if (p !== null && (!finite(p) || p <= 0))
      throw new ScoringInputError(`The expected penetration for "${c.label}" must be a positive number of metres (got ${p}).`, "coverTypes");
    if (p !== null && p > set.barrelLengthM)
      throw new ScoringInputError(
        `The expected penetration for "${c.label}" (${p} m) is longer than the barrel (${set.barrelLengthM} m).`,
        "coverTypes",
      );
  }
  if (!seen.has(set.defaultCoverTypeId))
    throw new ScoringInputError(`The default cover type "${set.defaultCoverTypeId}" is not in the table.`, "defaultCoverTypeId");
}

/**
 * Practice (check-values.md: refusal at 1–3 m in stiff cover; barrels 3 or 6 m).
 *
 * Expected penetration per cover-type index (the table's value, or the barrel length where the type
 * expects no early refusal), with index 255 = the default type. Returns a 256-entry table.
 * Preconditions: a checked set. O(cover types).
 */
export function penetrationTable(set: ConstraintSet): Float64Array {
  const t = new Float64Array(256);
  const def = set.coverTypes.findIndex((c) => c.id === set.defaultCoverTypeId);
  const pen = (c: CoverType) => c.expectedPenetrationM ?? set.barrelLengthM;
  for (let k = 0; k < 256; k++) t[k] = pen(set.coverTypes[k < set.coverTypes.length ? k : def]);
  return t;
}

function checkLayers(set: ConstraintSet, layers: ConstraintLayers): number {
  const { width, height, cellSizeX, cellSizeY } = layers.grid;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1)
    throw new ScoringInputError(`The grid needs a whole number of rows and columns (got ${width} × ${height}).`);
  if (!(cellSizeX > 0) || !(cellSizeY > 0)) throw new ScoringInputError(`The grid's cell sizes must be positive (got ${cellSizeX} × ${cellSizeY} m).`);
  const n = width * height;
  const arrays: Array<[string, ArrayLike<number> | null]> = [
    ["seabed elevation", layers.seabedElevationM],
    ["seabed slope", layers.seabedSlopeDeg],
    ["cover thickness", layers.coverThicknessM],
    ["cover type", layers.coverType],
    ["distance to a survey line", layers.distSurveyLineM],
    ["survey area", layers.surveyArea],
    ["exclusion", layers.exclusion],
  ];
  for (const [what, a] of arrays)
    if (a !== null && a.length !== n) throw new ScoringInputError(`The ${what} layer has ${a.length} cells; the grid has ${n}.`);
  if (set.maxDistanceToSurveyLineM !== null && layers.distSurveyLineM === null)
    throw new ScoringInputError(
      "A distance to a survey line is set, but the reconstruction has no survey-line navigation (layer dist_survey_line): upload the line navigation or remove the limit.",
      "maxDistanceToSurveyLineM",
    );
  if (layers.coverType) {
    const k = set.coverTypes.length;
    for (let i = 0; i < n; i++) {
      const c = layers.coverType[i];
      if (c !== 255 && c >= k)
        throw new ScoringInputError(`The cover-type layer uses code ${c}, but the table has only ${k} rows (codes 0–${k - 1}, 255 unknown).`, "coverType");
    }
  }
  return n;
}

/**
 * Common practice, no source (constraints of design §6; facts of the trade from check-values.md).
 *
 * The cells a core may be taken from, and for each refused cell the first failing constraint, tested
 * in this order: nodata (seabed elevation or slope NaN) → outside the survey area → exclusion → too
 * shallow (depth < min) → too deep (depth > max) → too steep (slope > max) → horizon unassessed (only
 * with a horizon layer and `unassessedHorizon: "refuse"`) → horizon + required depth into the older
 * unit > expected penetration for the cell's cover type → farther than the set distance from a survey
 * line (NaN distance counts as too far) → narrower than the positioning tolerance.
 * Water depth = −seabed elevation (present mean sea level; tides are not modelled). Limits are
 * inclusive (depth = max is allowed). Without a horizon layer (null) the depth check is skipped.
 * The last test refuses an otherwise allowed cell whose centre lies closer than the positioning
 * tolerance to the centre of a refused cell (an exact Euclidean distance transform, Felzenszwalb &
 * Huttenlocher 2012): a core aimed there could land on refused ground. Cells outside the grid are not
 * counted as refused (give a survey-area mask to make the edge count).
 * Preconditions: a set passing {@link checkConstraintSet} (it is called); layers on the grid — else
 * {@link ScoringInputError}. O(n) time, O(n) memory; no per-cell allocation.
 */
export function constraintMask(set: ConstraintSet, layers: ConstraintLayers): ConstraintResult {
  checkConstraintSet(set);
  const n = checkLayers(set, layers);
  const reason = new Uint8Array(n);
  const pen = penetrationTable(set);
  const { seabedElevationM: elev, seabedSlopeDeg: slope, coverThicknessM: cover, coverType, distSurveyLineM: dist, surveyArea, exclusion } = layers;
  const { minWaterDepthM: dMin, maxWaterDepthM: dMax, maxSlopeDeg, requiredIntoOlderUnitM: into } = set;
  const lineMax = set.maxDistanceToSurveyLineM;
  const refuseUnassessed = set.unassessedHorizon === "refuse";
  for (let i = 0; i < n; i++) {
    const e = elev[i];
    const s = slope[i];
    let r = REASON_ALLOWED;
    if (e !== e || s !== s) r = REASON_NODATA;
    else if (surveyArea !== null && surveyArea[i] !== 1) r = REASON_OUTSIDE_SURVEY_AREA;
    else if (exclusion !== null && exclusion[i] === 1) r = REASON_EXCLUSION;
    else if (-e < dMin) r = REASON_TOO_SHALLOW;
    else if (-e > dMax) r = REASON_TOO_DEEP;
    else if (s > maxSlopeDeg) r = REASON_TOO_STEEP;
    else if (cover !== null) {
      const c = cover[i];
      if (c !== c) {
        if (refuseUnassessed) r = REASON_HORIZON_UNASSESSED;
      } else if (c + into > pen[coverType === null ? 255 : coverType[i]]) r = REASON_HORIZON_BEYOND_PENETRATION;
    }
    if (r === REASON_ALLOWED && lineMax !== null && dist !== null) {
      const d = dist[i];
      if (!(d <= lineMax)) r = REASON_FAR_FROM_LINE;
    }
    reason[i] = r;
  }
  const tol = set.positioningToleranceM;
  if (tol > 0) {
    const { width, height, cellSizeX, cellSizeY } = layers.grid;
    const refused = new Uint8Array(n);
    for (let i = 0; i < n; i++) refused[i] = reason[i] !== REASON_ALLOWED ? 1 : 0;
    const d = euclideanDistance(refused, width, height, cellSizeX, cellSizeY);
    for (let i = 0; i < n; i++) if (reason[i] === REASON_ALLOWED && d[i] < tol) reason[i] = REASON_NARROWER_THAN_TOLERANCE;
  }
  const allowed = new Uint8Array(n);
  const counts = new Array<number>(REASON_TEXT.length).fill(0);
  for (let i = 0; i < n; i++) {
    allowed[i] = reason[i] === REASON_ALLOWED ? 1 : 0;
    counts[reason[i]]++;
  }
  return { allowed, reason, counts };
}

/** A cell's values against each constraint, for the "why not here" panel and for tests. */
export interface CellCheck {
  reason: number;
  text: string;
  waterDepthM: number;
  slopeDeg: number;
  coverThicknessM: number | null;
  coverTypeId: string;
  expectedPenetrationM: number;
  /** cover + required depth into the older unit, m; with an unassessed horizon cored to refusal, the expected penetration */
  plannedPenetrationM: number | null;
  distanceToSurveyLineM: number | null;
}

/**
 * Common practice, no source.
 *
 * One cell's values against the constraints and its reason code from a {@link constraintMask} result
 * (so the words match the map). Preconditions: the same set and layers the result came from. O(1).
 */
export function explainCell(set: ConstraintSet, layers: ConstraintLayers, result: ConstraintResult, cell: number): CellCheck {
  const pen = penetrationTable(set);
  const k = layers.coverType === null ? 255 : layers.coverType[cell];
  const typeIndex = k === 255 ? set.coverTypes.findIndex((c) => c.id === set.defaultCoverTypeId) : k;
  const cover = layers.coverThicknessM === null ? null : layers.coverThicknessM[cell];
  const expected = pen[k];
  let planned: number | null = null;
  if (cover !== null && cover === cover) planned = cover + set.requiredIntoOlderUnitM;
  else if (cover !== null && set.unassessedHorizon === "core-to-refusal") planned = expected;
  const reason = result.reason[cell];
  return {
    reason,
    text: REASON_TEXT[reason],
    waterDepthM: -layers.seabedElevationM[cell],
    slopeDeg: layers.seabedSlopeDeg[cell],
    coverThicknessM: cover !== null && cover === cover ? cover : null,
    coverTypeId: set.coverTypes[typeIndex].id,
    expectedPenetrationM: expected,
    plannedPenetrationM: planned,
    distanceToSurveyLineM: layers.distSurveyLineM === null ? null : layers.distSurveyLineM[cell],
  };
}

/**
 * Common practice, no source (design §6: "features narrower than the positioning tolerance refused").
 *
 * For a transect across a mapped feature: throws {@link ScoringInputError} when the feature is
 * narrower than the positioning tolerance (a core aimed at its axis could land outside it).
 * Preconditions: finite widths ≥ 0. O(1).
 */
export function checkFeatureWidth(featureWidthM: number, positioningToleranceM: number): void {
  if (!finite(featureWidthM) || featureWidthM <= 0)
    throw new ScoringInputError(`The feature's width must be a positive number of metres (got ${featureWidthM}).`, "featureWidthM");
  if (featureWidthM < positioningToleranceM)
    throw new ScoringInputError(
      `The feature is ${featureWidthM} m wide, narrower than the positioning tolerance of ${positioningToleranceM} m: a core aimed at its axis could land outside it.`,
      "featureWidthM",
    );
}
