/**
 * From a reconstruction's layers to the inputs of `scoreAge` / `scorePeriod`, and the score of one
 * target (an age or a period). One function for every caller, whatever form the layers arrive in:
 * the scoring job reads full-resolution Float32 values, the browser worker and the job's display
 * check read 8-bit codes (the layer API's `?display=8`). Because both paths run this same code, the
 * browser's picture and the server's display checksum agree (issue: server equals worker).
 *
 * Common practice, no source.
 */
import { factorDef } from "./factors.ts";
import { checkPeriodAgainstAges, type PeriodSetting, type WeightSetContent } from "./weight-set.ts";
import {
  createPreservationCache,
  createScoreScratch,
  preservationModel,
  scoreAge,
  scorePeriod,
  type AgeInputs,
  type GridShape,
  type LayerData,
  type PreservationCache,
  type PreservationInputs,
  type PreservationResult,
  type ScoreResult,
  type ScoreScratch,
} from "./potential.ts";
import { horizonEvidenceGrid } from "./horizon-evidence.ts";
import { ScoringInputError } from "./errors.ts";
import { periodAgeWeights } from "./periods.ts";

/** What to score: one reconstructed age, or one of the weight set's periods. */
export type ScoreTarget = { kind: "age"; ageKa: number } | { kind: "period"; period: PeriodSetting };

/** A layer by name and age (null = age-independent); undefined when the reconstruction lacks it. */
export type LayerSource = (layer: string, ageKa: number | null) => LayerData | undefined;

export interface EvidencePoint {
  x: number;
  y: number;
  state: "intact" | "truncated";
}

/**
 * Common practice, no source.
 *
 * A class or mask layer (land_class, flooding_status, unassessed) as Uint8 codes: values rounded,
 * nodata (NaN, or the nodata code) → 255. O(n).
 */
export function classLayer(d: LayerData): Uint8Array {
  if (d.kind === "values") {
    const v = d.values;
    const out = new Uint8Array(v.length);
    for (let i = 0; i < v.length; i++) {
      const x = v[i];
      out[i] = x === x ? Math.round(x) : 255;
    }
    return out;
  }
  const { codes, scale, offset, nodataCode } = d;
  // one table over the codes: code → class
  const table = new Uint8Array(nodataCode + 1);
  for (let c = 0; c < nodataCode; c++) table[c] = Math.round(c * scale + offset);
  table[nodataCode] = 255;
  const out = new Uint8Array(codes.length);
  for (let i = 0; i < codes.length; i++) out[i] = table[codes[i]];
  return out;
}

/**
 * The ages a target scores: the age itself, or the reconstructed ages with a positive weight inside
 * the period (decision 401). Every age still gets its land classes (the period rule and the
 * preservation model read them); only these need factor layers.
 */
export function scoredAges(target: ScoreTarget, agesKa: readonly number[]): number[] {
  if (target.kind === "age") return targetAges(target, agesKa);
  checkPeriodAgainstAges(target.period, agesKa);
  const { weights } = periodAgeWeights(agesKa, { youngKa: target.period.youngKa, oldKa: target.period.oldKa });
  return agesKa.filter((_, k) => weights[k] > 0);
}

/** The ages a target needs land classes for: the age itself, or (for a period) every reconstructed age. */
export function targetAges(target: ScoreTarget, agesKa: readonly number[]): number[] {
  if (target.kind === "age") {
    if (!agesKa.includes(target.ageKa))
      throw new ScoringInputError(`${target.ageKa} ka is not one of the reconstruction's ages (${[...agesKa].sort((a, b) => b - a).join(", ")} ka).`, "ageKa");
    return [target.ageKa];
  }
  // Every age: the period rule's weights depend on each age's neighbours (decision 401), so the
  // whole list goes to scorePeriod; ages outside the window get weight 0 there.
  checkPeriodAgainstAges(target.period, agesKa);
  return [...agesKa];
}

/**
 * Common practice, no source.
 *
 * The layers every factor with a weight above 0 needs at the given ages, and the preservation
 * inputs, read through `get`. Factors derived in scoring (`shelter`) and factors whose layer the
 * reconstruction lacks are simply not given (scoreAge notes and handles them).
 * O(layers) reads; class layers are converted once per call.
 */
export function buildScoringInputs(
  content: WeightSetContent,
  grid: GridShape & { originX: number; originY: number },
  agesKa: readonly number[],
  needAges: readonly number[],
  get: LayerSource,
  evidencePoints: readonly EvidencePoint[],
  scored: readonly number[] = needAges,
  cache?: ScoringCache,
): { ages: AgeInputs[]; preservation: PreservationInputs | null } {
  const classLayer = (d: LayerData) => cachedClassLayer(d, cache);
  const ages: AgeInputs[] = [];
  for (const ageKa of needAges) {
    const lc = get("land_class", ageKa);
    if (!lc) throw new ScoringInputError(`The reconstruction has no land and sea classes at ${ageKa} ka.`);
    const layers: AgeInputs["layers"] = {};
    if (scored.includes(ageKa)) for (const f of content.factors) {
      if (!(f.weight > 0)) continue;
      const def = factorDef(f.factor);
      if (!def || f.factor === "shelter") continue;
      const d = get(def.layer, def.perAge ? ageKa : null);
      if (d) layers[f.factor] = d;
    }
    ages.push({ ageKa, landClass: classLayer(lc), layers });
  }
  let preservation: PreservationInputs | null = null;
  const tpi = get("tpi", null);
  const rise = get("rise_rate_at_flooding", null);
  const floodingAge = get("flooding_age", null);
  const status = get("flooding_status", null);
  if (content.preservation.enabled && tpi && rise && floodingAge && status) {
    const unassessed = get("unassessed", null);
    const sortedAges = [...agesKa];
    const landClassByAge = sortedAges.map((a) => {
      const already = ages.find((x) => x.ageKa === a);
      if (already) return already.landClass;
      const lc = get("land_class", a);
      if (!lc) throw new ScoringInputError(`The reconstruction has no land and sea classes at ${a} ka.`);
      return classLayer(lc);
    });
    preservation = {
      tpi,
      riseRateAtFlooding: rise,
      floodingAge,
      floodingStatus: classLayer(status),
      agesKa: sortedAges,
      landClassByAge,
      unassessed: unassessed ? classLayer(unassessed) : null,
      evidence: evidencePoints.length ? horizonEvidenceGrid(grid, [...evidencePoints], content.preservation.evidenceRadiusM) : null,
    };
  }
  return { ages, preservation };
}

/**
 * What a caller that scores again and again on the same layers (the browser worker) keeps between
 * calls: class layers decoded once per array, the preservation result while its settings, layers and
 * evidence stay the same, and scratch buffers for one age. Results that come from the scratch are
 * overwritten by the next call with the same cache.
 */
export interface ScoringCache {
  classLayers: WeakMap<LayerData, Uint8Array>;
  /** the preservation model's own cache (shelter indices, nearest ages), kept while settings change */
  preservationParts: PreservationCache;
  preservation: { key: string; refs: readonly unknown[]; result: PreservationResult } | null;
  scratch: ScoreScratch | null;
}

export function createScoringCache(): ScoringCache {
  return { classLayers: new WeakMap(), preservationParts: createPreservationCache(), preservation: null, scratch: null };
}

function cachedClassLayer(d: LayerData, cache: ScoringCache | undefined): Uint8Array {
  if (!cache) return classLayer(d);
  let c = cache.classLayers.get(d);
  if (!c) {
    c = classLayer(d);
    cache.classLayers.set(d, c);
  }
  return c;
}

export interface TargetScore extends ScoreResult {
  preservation: PreservationResult;
  ageWeights: { ageKa: number; weight: number }[];
}

/**
 * Common practice, no source.
 *
 * Score one target: inputs through {@link buildScoringInputs}, preservation once, then `scoreAge`
 * or `scorePeriod`. Throws {@link ScoringInputError} for inputs a person can fix.
 */
export function scoreTarget(
  content: WeightSetContent,
  grid: GridShape & { originX: number; originY: number },
  agesKa: readonly number[],
  target: ScoreTarget,
  get: LayerSource,
  evidencePoints: readonly EvidencePoint[],
  cache?: ScoringCache,
): TargetScore {
  const need = targetAges(target, agesKa);
  const { ages, preservation: inputs } = buildScoringInputs(content, grid, agesKa, need, get, evidencePoints, scoredAges(target, agesKa), cache);
  let preservation: PreservationResult;
  if (cache) {
    // the same settings on the same layer arrays and evidence give the same result
    const key = JSON.stringify([content.preservation, content.shelterRadiusM, agesKa]);
    const refs = inputs ? [inputs.tpi, inputs.riseRateAtFlooding, inputs.floodingAge, inputs.floodingStatus, inputs.unassessed, ...inputs.landClassByAge, evidencePoints] : [evidencePoints];
    const hit = cache.preservation;
    if (hit && hit.key === key && hit.refs.length === refs.length && hit.refs.every((r, i) => r === refs[i])) preservation = hit.result;
    else {
      preservation = preservationModel(content, grid, inputs, cache.preservationParts);
      cache.preservation = { key, refs, result: preservation };
    }
  } else preservation = preservationModel(content, grid, inputs);
  if (target.kind === "age") {
    let scratch: ScoreScratch | undefined;
    if (cache) {
      if (!cache.scratch || cache.scratch.occupation.length !== grid.width * grid.height) cache.scratch = createScoreScratch(grid);
      scratch = cache.scratch;
    }
    const r = scoreAge(content, grid, ages[0], preservation, scratch);
    return { ...r, preservation, ageWeights: [{ ageKa: target.ageKa, weight: 1 }] };
  }
  const r = scorePeriod(content, grid, target.period, ages, preservation);
  return { ...r, preservation };
}

/** A core as the evidence readers store it (app/evidence/README.md, cores). */
export interface CoreEvidence {
  x: number;
  y: number;
  horizonReached?: string | null;
  preservedLandSurface?: string | null;
}

/** An interpretation feature's kind and the vertices of its geometry (project CRS). */
export interface InterpretationEvidence {
  kind: string;
  coordinates: Array<[number, number]>;
}

/**
 * Design §4 (evidence from cores and interpretations: horizon intact or truncated); common practice,
 * no source.
 *
 * The horizon evidence the preservation model reads: a core that reached the horizon and found a
 * preserved land surface says "intact" at its position, one that reached it and found none says
 * "truncated"; a refusal, or an unknown answer, says nothing (a refusal is not a negative).
 * Interpreted peat reflectors and channel fills are old surfaces seen in the sub-bottom data:
 * "intact" at every vertex of their geometry. O(points).
 */
export function horizonEvidencePoints(cores: readonly CoreEvidence[], interpretations: readonly InterpretationEvidence[]): EvidencePoint[] {
  const out: EvidencePoint[] = [];
  for (const c of cores) {
    if (!Number.isFinite(c.x) || !Number.isFinite(c.y)) continue;
    if (String(c.horizonReached ?? "").toLowerCase() !== "yes") continue;
    const p = String(c.preservedLandSurface ?? "").toLowerCase();
    if (p === "yes") out.push({ x: c.x, y: c.y, state: "intact" });
    else if (p === "no") out.push({ x: c.x, y: c.y, state: "truncated" });
  }
  for (const f of interpretations) {
    if (f.kind !== "peat_reflector" && f.kind !== "channel_fill") continue;
    for (const [x, y] of f.coordinates) if (Number.isFinite(x) && Number.isFinite(y)) out.push({ x, y, state: "intact" });
  }
  return out;
}

/** Every vertex of a GeoJSON geometry, flattened (Point … MultiPolygon, GeometryCollection). */
export function geometryVertices(g: { type: string; coordinates?: unknown; geometries?: unknown[] } | null | undefined): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  const walk = (c: unknown): void => {
    if (!Array.isArray(c)) return;
    if (typeof c[0] === "number" && typeof c[1] === "number") out.push([c[0], c[1]]);
    else for (const x of c) walk(x);
  };
  if (!g) return out;
  if (g.type === "GeometryCollection") for (const x of (g.geometries ?? []) as Array<{ type: string; coordinates?: unknown }>) out.push(...geometryVertices(x));
  else walk(g.coordinates);
  return out;
}
