/**
 * Sea-level models: piecewise-linear curves of relative sea level (RSL) against age with σ, several
 * regional curves over zones, or per-age RSL grids. Ages are calendar ka BP (thousands of years
 * before present, 0 = present, increasing into the past); levels are metres relative to present mean
 * sea level, positive up.
 *
 * The shipped default is the whole of Lambeck, K., Rouby, H., Purcell, A., Sun, Y. & Sambridge, M.
 * (2014) "Sea level and global ice volumes from the Last Glacial Maximum to the Holocene", PNAS
 * 111(43): 15296–15303, Table S3 (column esl_m) — a global, far-field approximation, not local RSL.
 */
import { LAMBECK_2014_CSV } from "./data/sea-level-global-lambeck2014";
import { type GridSpec, TerrainInputError, assertLayerSize } from "./grid";

export interface SeaLevelCurve {
  name: string;
  /** Shown wherever the curve is used, e.g. "global, far-field approximation". */
  label: string;
  citation: string;
  /** Ages, ka BP, strictly increasing. */
  ageKa: Float64Array;
  /** Sea level at each age, m relative to present mean sea level. */
  levelM: Float64Array;
  /** Uncertainty at each age, m, as published (NaN where none given). */
  sigmaM: Float64Array;
  /** Cautions to show with every result made from this curve (e.g. the vertical-land-motion warning). */
  warnings: string[];
}

export type SeaLevelModel =
  | { kind: "curve"; curve: SeaLevelCurve }
  /** Several regional curves; `zone[i]` is the index of the curve for cell i (255 = none: treated as nodata). */
  | { kind: "regional"; curves: SeaLevelCurve[]; zone: Uint8Array }
  /** Per-age RSL grids (e.g. from a glacial-isostatic model), linear in time between them; ages strictly increasing. */
  | { kind: "grids"; label: string; citation: string; agesKa: Float64Array; levels: Float32Array[] };

export const GLOBAL_FAR_FIELD_LABEL = "global, far-field approximation";
export const LAMBECK_2014_CITATION =
  "Lambeck, K., Rouby, H., Purcell, A., Sun, Y. & Sambridge, M. (2014) Sea level and global ice volumes from the Last Glacial Maximum to the Holocene. PNAS 111(43): 15296–15303, doi:10.1073/pnas.1411762111, Table S3 (esl_m).";

function findColumn(header: string[], names: string[]): number {
  for (const name of names) {
    const i = header.indexOf(name);
    if (i >= 0) return i;
  }
  return -1;
}

/**
 * Parses a curve table: a CSV with a header naming an age column (`age_ka` or `age`), a level column
 * (`esl_m`, `rsl_m`, `rsl`, `level_m` or `level`) and optionally a σ column (`esl_sigma_m`, `sigma_m`,
 * `sigma`). Rows may come in any order; they are sorted by age. Throws TerrainInputError naming the line
 * for non-numeric values, negative ages, duplicate ages, or fewer than two rows. O(k log k).
 */
export function parseSeaLevelCsv(
  text: string,
  meta: { name: string; label?: string; citation?: string },
): SeaLevelCurve {
  const lines = text.split(/\r?\n/);
  let h = 0;
  while (h < lines.length && (lines[h].trim() === "" || lines[h].trim().startsWith("#"))) h++;
  if (h >= lines.length) throw new TerrainInputError("the sea-level table is empty");
  const header = lines[h].split(",").map((s) => s.trim().toLowerCase());
  const ai = findColumn(header, ["age_ka", "age"]);
  const li = findColumn(header, ["esl_m", "rsl_m", "rsl", "level_m", "level"]);
  const si = findColumn(header, ["esl_sigma_m", "sigma_m", "sigma"]);
  if (ai < 0) throw new TerrainInputError(`line ${h + 1}: the sea-level table needs an "age_ka" column (ages in ka BP)`);
  if (li < 0) throw new TerrainInputError(`line ${h + 1}: the sea-level table needs an "rsl_m" column (sea level in m)`);
  const rows: [number, number, number, number][] = [];
  for (let k = h + 1; k < lines.length; k++) {
    const raw = lines[k].trim();
    if (raw === "" || raw.startsWith("#")) continue;
    const cells = raw.split(",").map((s) => s.trim());
    const age = Number(cells[ai]);
    const level = Number(cells[li]);
    const sigma = si >= 0 && cells[si] !== undefined && cells[si] !== "" ? Number(cells[si]) : NaN;
    if (cells[ai] === "" || !Number.isFinite(age)) throw new TerrainInputError(`line ${k + 1}: age "${cells[ai]}" is not a number`);
    if (cells[li] === "" || !Number.isFinite(level)) throw new TerrainInputError(`line ${k + 1}: sea level "${cells[li]}" is not a number`);
    if (si >= 0 && cells[si] !== undefined && cells[si] !== "" && !(sigma >= 0)) {
      throw new TerrainInputError(`line ${k + 1}: σ "${cells[si]}" must be a number ≥ 0`);
    }
    if (age < 0) throw new TerrainInputError(`line ${k + 1}: age ${age} ka is negative; ages are ka before present`);
    rows.push([age, level, sigma, k + 1]);
  }
  rows.sort((a, b) => a[0] - b[0]);
  for (let k = 1; k < rows.length; k++) {
    if (rows[k][0] === rows[k - 1][0]) {
      throw new TerrainInputError(`line ${rows[k][3]}: age ${rows[k][0]} ka appears twice (also line ${rows[k - 1][3]})`);
    }
  }
  if (rows.length < 2) throw new TerrainInputError("the sea-level table needs at least two rows");
  return {
    name: meta.name,
    label: meta.label ?? "user-supplied relative sea-level curve",
    citation: meta.citation ?? "",
    ageKa: Float64Array.from(rows, (r) => r[0]),
    levelM: Float64Array.from(rows, (r) => r[1]),
    sigmaM: Float64Array.from(rows, (r) => r[2]),
    warnings: [],
  };
}

let cachedDefault: SeaLevelCurve | null = null;

/** The shipped default: the whole Lambeck et al. (2014) table, labelled a global, far-field approximation. */
export function defaultGlobalCurve(): SeaLevelCurve {
  if (!cachedDefault) {
    cachedDefault = parseSeaLevelCsv(LAMBECK_2014_CSV, {
      name: "Lambeck et al. 2014 global ice-volume-equivalent sea level",
      label: GLOBAL_FAR_FIELD_LABEL,
      citation: LAMBECK_2014_CITATION,
    });
    cachedDefault.warnings.push(
      "This is a global, far-field approximation (ice-volume-equivalent sea level), not local relative sea level: glacial isostasy can move local sea level by metres to tens of metres. Supply a regional curve or RSL grids where you have them.",
    );
  }
  return cloneCurve(cachedDefault);
}

function cloneCurve(c: SeaLevelCurve): SeaLevelCurve {
  return { ...c, ageKa: c.ageKa.slice(), levelM: c.levelM.slice(), sigmaM: c.sigmaM.slice(), warnings: [...c.warnings] };
}

/** Oldest and youngest ages the curve covers. */
export function curveRange(curve: SeaLevelCurve): [number, number] {
  return [curve.ageKa[0], curve.ageKa[curve.ageKa.length - 1]];
}

function checkAge(curve: { ageKa: Float64Array; name: string }, ageKa: number): void {
  const a = curve.ageKa;
  if (!(ageKa >= a[0] && ageKa <= a[a.length - 1])) {
    throw new TerrainInputError(
      `age ${ageKa} ka is outside the sea-level curve "${curve.name}", which covers ${a[0]}–${a[a.length - 1]} ka BP`,
    );
  }
}

/** Index k of the segment [ageKa[k], ageKa[k+1]] holding `ageKa` (binary search, O(log k)). */
export function segmentIndex(ages: Float64Array, ageKa: number): number {
  let lo = 0;
  let hi = ages.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (ages[mid] <= ageKa) lo = mid;
    else hi = mid;
  }
  return lo;
}

function interp(ages: Float64Array, values: Float64Array, ageKa: number): number {
  const k = segmentIndex(ages, ageKa);
  const a0 = ages[k];
  const a1 = ages[k + 1];
  const f = (ageKa - a0) / (a1 - a0);
  return values[k] + f * (values[k + 1] - values[k]);
}

/**
 * Sea level (m relative to present mean sea level) at an age by linear interpolation between the
 * table rows. Throws TerrainInputError for ages outside the curve. O(log k).
 */
export function seaLevelAt(curve: SeaLevelCurve, ageKa: number): number {
  checkAge(curve, ageKa);
  return interp(curve.ageKa, curve.levelM, ageKa);
}

/** Published σ (m) at an age by linear interpolation (NaN where the table gives none). O(log k). */
export function sigmaAt(curve: SeaLevelCurve, ageKa: number): number {
  checkAge(curve, ageKa);
  return interp(curve.ageKa, curve.sigmaM, ageKa);
}

/**
 * Rate of sea-level rise at an age, m/ka, positive when the sea is rising towards the present
 * (−d level / d age), from the segment holding the age (the younger segment at a table row).
 * O(log k).
 */
export function riseRateAt(curve: SeaLevelCurve, ageKa: number): number {
  checkAge(curve, ageKa);
  const a = curve.ageKa;
  let k = segmentIndex(a, ageKa);
  if (k > 0 && ageKa === a[k]) k -= 1; // at a row, use the younger segment (the one reaching the row from the present side)
  return -(curve.levelM[k + 1] - curve.levelM[k]) / (a[k + 1] - a[k]);
}

/**
 * Adds a constant vertical-land-motion rate (formula, check-values.md): RSL(t) = esl(t) + u·t, with u in
 * mm/yr (= m/ka) positive for uplift and t in ka BP. Land rising today stood u·t lower at age t, so the
 * sea stood u·t higher relative to it; e.g. esl(10 ka) = −39.01 m with u = −1 mm/yr (subsidence) gives
 * −49.01 m. Returns a new curve carrying a warning, because a constant rate is a crude stand-in for
 * glacial-isostatic adjustment. σ is unchanged. O(k).
 */
export function withVerticalLandMotion(curve: SeaLevelCurve, upliftMmPerYr: number): SeaLevelCurve {
  if (!Number.isFinite(upliftMmPerYr)) {
    throw new TerrainInputError(`vertical land motion must be a number of mm/yr, got ${upliftMmPerYr}`);
  }
  const out = cloneCurve(curve);
  for (let k = 0; k < out.ageKa.length; k++) out.levelM[k] = curve.levelM[k] + upliftMmPerYr * out.ageKa[k];
  out.name = `${curve.name} with vertical land motion ${upliftMmPerYr} mm/yr`;
  out.warnings.push(
    `A constant vertical-land-motion rate of ${upliftMmPerYr} mm/yr has been added (RSL = esl + u·t). Land motion is rarely constant over millennia (glacial-isostatic adjustment is not linear in time): treat results as a rough sensitivity, not a local sea-level reconstruction.`,
  );
  return out;
}

/** The curve restricted to [youngKa, oldKa], with end points interpolated. O(k). */
export function clipCurve(curve: SeaLevelCurve, youngKa: number, oldKa: number): SeaLevelCurve {
  if (!(oldKa > youngKa)) throw new TerrainInputError(`age window must have oldest > youngest, got ${youngKa}–${oldKa} ka`);
  checkAge(curve, youngKa);
  checkAge(curve, oldKa);
  const ages: number[] = [youngKa];
  const levels: number[] = [interp(curve.ageKa, curve.levelM, youngKa)];
  const sig: number[] = [interp(curve.ageKa, curve.sigmaM, youngKa)];
  for (let k = 0; k < curve.ageKa.length; k++) {
    const a = curve.ageKa[k];
    if (a > youngKa && a < oldKa) {
      ages.push(a);
      levels.push(curve.levelM[k]);
      sig.push(curve.sigmaM[k]);
    }
  }
  ages.push(oldKa);
  levels.push(interp(curve.ageKa, curve.levelM, oldKa));
  sig.push(interp(curve.ageKa, curve.sigmaM, oldKa));
  return {
    ...curve,
    ageKa: Float64Array.from(ages),
    levelM: Float64Array.from(levels),
    sigmaM: Float64Array.from(sig),
    warnings: [...curve.warnings],
  };
}

/** Checks a model against a grid: zone/grid sizes, zone indices, grid-ages order. Throws TerrainInputError. */
export function validateSeaLevelModel(model: SeaLevelModel, spec: GridSpec): void {
  if (model.kind === "regional") {
    assertLayerSize(spec, model.zone, "sea-level zone layer");
    if (model.curves.length === 0 || model.curves.length > 254) {
      throw new TerrainInputError(`regional sea level needs 1 to 254 curves, got ${model.curves.length}`);
    }
    for (let i = 0; i < model.zone.length; i++) {
      const z = model.zone[i];
      if (z !== 255 && z >= model.curves.length) {
        const r = Math.floor(i / spec.width);
        throw new TerrainInputError(
          `sea-level zone ${z} at row ${r}, column ${i - r * spec.width} has no curve (there are ${model.curves.length})`,
        );
      }
    }
  } else if (model.kind === "grids") {
    if (model.levels.length !== model.agesKa.length || model.levels.length < 2) {
      throw new TerrainInputError(`RSL grids need at least two ages and one grid per age (got ${model.agesKa.length} ages, ${model.levels.length} grids)`);
    }
    for (let k = 0; k < model.levels.length; k++) assertLayerSize(spec, model.levels[k], `RSL grid for ${model.agesKa[k]} ka`);
    for (let k = 1; k < model.agesKa.length; k++) {
      if (!(model.agesKa[k] > model.agesKa[k - 1])) throw new TerrainInputError("RSL grid ages must be strictly increasing");
    }
  }
}

/** The ages a model covers, [youngest, oldest] (the intersection over regional curves). */
export function modelRange(model: SeaLevelModel): [number, number] {
  if (model.kind === "curve") return curveRange(model.curve);
  if (model.kind === "grids") return [model.agesKa[0], model.agesKa[model.agesKa.length - 1]];
  let young = -Infinity;
  let old = Infinity;
  for (const c of model.curves) {
    young = Math.max(young, c.ageKa[0]);
    old = Math.min(old, c.ageKa[c.ageKa.length - 1]);
  }
  return [young, old];
}

/**
 * Sea level for every cell at one age (Float32, NaN where a regional zone is 255). Throws
 * TerrainInputError for ages outside the model. O(n).
 */
export function seaLevelLayerAt(model: SeaLevelModel, spec: GridSpec, ageKa: number): Float32Array {
  const n = spec.width * spec.height;
  const out = new Float32Array(n);
  const [young, old] = modelRange(model);
  if (!(ageKa >= young && ageKa <= old)) {
    throw new TerrainInputError(`age ${ageKa} ka is outside the sea-level model, which covers ${young}–${old} ka BP`);
  }
  if (model.kind === "curve") {
    out.fill(seaLevelAt(model.curve, ageKa));
  } else if (model.kind === "regional") {
    const perZone = model.curves.map((c) => seaLevelAt(c, ageKa));
    for (let i = 0; i < n; i++) out[i] = model.zone[i] === 255 ? NaN : perZone[model.zone[i]];
  } else {
    const k = segmentIndex(model.agesKa, ageKa);
    const f = (ageKa - model.agesKa[k]) / (model.agesKa[k + 1] - model.agesKa[k]);
    const g0 = model.levels[k];
    const g1 = model.levels[k + 1];
    for (let i = 0; i < n; i++) out[i] = g0[i] + f * (g1[i] - g0[i]);
  }
  return out;
}

/** Labels and warnings to carry with results made from a model. */
export function modelNotes(model: SeaLevelModel): { label: string; citations: string[]; warnings: string[] } {
  if (model.kind === "curve") return { label: model.curve.label, citations: [model.curve.citation], warnings: model.curve.warnings };
  if (model.kind === "grids") return { label: model.label, citations: [model.citation], warnings: [] };
  return {
    label: model.curves.map((c) => c.label).join("; "),
    citations: model.curves.map((c) => c.citation),
    warnings: model.curves.flatMap((c) => c.warnings),
  };
}
