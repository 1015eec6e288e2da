// Trained models in the product (design §4 "trained alternative", issue 10): a random forest on
// factor values of one published reconstruction, presences against a target-group background,
// spatial-block cross-validation, a model card and a probability raster at one age — by the model
// job (jobs/model.ts). Like scorings: one row per identical input set, files written per attempt,
// publication in one transaction by the attempt that owns the run (decision 009's guard).
//
// Who sees a model: capability models.read (owner, lead, analyst, reviewer). A model trained on exact
// site positions peaks on them (design §9), so viewers get neither the model, nor its card, nor its
// raster: every model route refuses them with 403. Nothing a model route returns lists a site or a
// core by position or id — the card counts them.
import { createHash } from "node:crypto";
import { and, asc, desc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import { db } from "./db.server";
import { datasets, jobRuns, models, reconstructions, siteRecords } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { getJson, store } from "./storage.server";
import { enqueueJob, jobRunStatus, effectiveRunStatus, attemptMayPublish } from "./jobs.server";
import { FACTOR_IDS, factorDef, type FactorId } from "./scoring/factors";
import { DEFAULT_FOREST_SETTINGS, trainingSet, type Evidence, type ExclusionReason } from "./scoring/forest";
import type { ProjectClassification } from "./scoring/classification";
import { geometryVertices } from "./scoring/scoring-inputs";
import { polygonsOfGeometries, type PolygonRings } from "./scoring/polygon-mask";
import { targetResultEvidence } from "./target-results.server";
import type { Manifest } from "./terrain/reconstruct";
import { readGeoTiff } from "./terrain/geotiff-read";
import { can, type Role } from "./permissions";
import { ageWindowOf, projectClassification, validateRaster, type ValidationOptions, type ValidationSubject } from "./validations.server";
import { hasArchaeologicalMaterial } from "./evidence/material";

/**
 * Bump when the model job's output changes meaning for the same inputs (evidence rules, background,
 * cross-validation, files): identical requests then train afresh instead of reusing.
 */
export const MODEL_VERSION = "1";

/** The evidence kinds the model reads besides the known sites: cores (presences, cored areas) and survey lines (corridors). */
/** Dataset kinds the trained model reads: cores (presences and searched ground), and where searches happened. */
export const MODEL_EVIDENCE_KINDS = ["cores", "survey_lines", "dredging_areas"] as const;

/** Below this many presences no model is trained, whatever the request says (cross-validation would mean nothing). */
export const MIN_SITES_FLOOR = 5;

/**
 * Factors left out unless asked for: aspect is circular (0° and 360° are neighbours), which tree
 * splits cannot see; shelter is derived at a chosen radius; flooding age has no value on ground still
 * land at the window's young end (docs/layers.md), which would drop every presence there.
 */
const NOT_BY_DEFAULT: readonly FactorId[] = ["aspect", "shelter", "flooding_age"];

export const DEFAULT_MODEL_SETTINGS = {
  trees: DEFAULT_FOREST_SETTINGS.trees,
  maxSamples: DEFAULT_FOREST_SETTINGS.maxSamples,
  minSites: DEFAULT_FOREST_SETTINGS.minPresences,
  /** at most this many background cells … */
  backgroundCells: 1000,
  /**
   * … and by default this many per presence (at least 100): random forests on presence-background
   * data do better when the background is down-sampled towards the presences (Valavi, R. et al. 2021,
   * Ecography 44(12), from memory); on the demo, 1 000 cells against 16 presences gave an
   * out-of-fold AUC of 0.53 and about 20 per presence 0.78.
   */
  backgroundPerPresence: 20,
  blockSizeM: 2000,
  folds: 5,
  seed: DEFAULT_FOREST_SETTINGS.seed,
  surveyCorridorM: 100,
  coreRadiusM: 50,
  ageToleranceKa: 1,
  shelterRadiusM: 1500,
} as const;

const positiveId = (what: string) => z.number({ error: `${what} must be a number.` }).int(`${what} must be a whole number.`).positive(`${what} must be positive.`);
const intIn = (what: string, lo: number, hi: number) =>
  z.number({ error: `${what} must be a number.` }).int(`${what} must be a whole number.`).min(lo, `${what} must be at least ${lo}.`).max(hi, `${what} must be at most ${hi}.`);
const metres = (what: string, lo: number, hi: number) =>
  z.number({ error: `${what} must be a number of metres.` }).refine((v) => Number.isFinite(v) && v >= lo && v <= hi, `${what} must be from ${lo} to ${hi} m.`);

export const modelSettingsSchema = z
  .object({
    trees: intIn("trees", 1, 500).optional(),
    maxSamples: intIn("maxSamples", 20, 20_000).optional(),
    minSites: intIn("minSites", MIN_SITES_FLOOR, 10_000).optional(),
    backgroundCells: intIn("backgroundCells", 10, 20_000).optional(),
    backgroundPerPresence: intIn("backgroundPerPresence", 1, 1_000).optional(),
    blockSizeM: metres("blockSizeM", 1, 1_000_000).optional(),
    folds: intIn("folds", 2, 10).optional(),
    seed: intIn("seed", -(2 ** 31), 2 ** 31 - 1).optional(),
    surveyCorridorM: metres("surveyCorridorM", 0, 10_000).optional(),
    coreRadiusM: metres("coreRadiusM", 0, 10_000).optional(),
    maxSitePrecisionM: metres("maxSitePrecisionM", 0, 100_000).optional(),
    ageToleranceKa: z.number({ error: "ageToleranceKa must be a number of ka." }).refine((v) => Number.isFinite(v) && v >= 0 && v <= 50, "ageToleranceKa must be from 0 to 50 ka.").optional(),
    shelterRadiusM: metres("shelterRadiusM", 1, 100_000).optional(),
  })
  .strict();

export const modelRequest = z
  .object({
    reconstructionId: positiveId("reconstructionId"),
    name: z.string({ error: "name must be text." }).trim().max(120, "name must be at most 120 characters.").optional(),
    /** the age the probability raster is predicted at (default: the age most presences are compared at) */
    ageKa: z.number({ error: "ageKa must be a number of ka BP." }).refine((v) => Number.isFinite(v), "ageKa must be a finite number of ka BP.").optional(),
    factors: z
      .array(z.enum(FACTOR_IDS as [FactorId, ...FactorId[]], { error: `each factor must be one of ${FACTOR_IDS.join(", ")}.` }))
      .min(1, "Give at least one factor.")
      .max(FACTOR_IDS.length)
      .refine((f) => new Set(f).size === f.length, "A factor is listed twice.")
      .optional(),
    settings: modelSettingsSchema.optional(),
  })
  .strict();

export type ModelRequest = z.infer<typeof modelRequest>;

export type ModelSettings = { -readonly [K in keyof typeof DEFAULT_MODEL_SETTINGS]: number } & { maxSitePrecisionM: number };

/** What a model is for, as stored in models.params (resolved: no defaults left to guess). */
export interface ModelParams {
  ageKa: number;
  /** true when the request named no age and the age most presences are compared at was taken */
  ageChosen: boolean;
  factors: FactorId[];
  settings: ModelSettings;
  classification: ProjectClassification;
}

// ---- evidence -----------------------------------------------------------------------------------

/** A site or core as the model reads it, before it is placed on a grid. Never leaves the server. */
export interface EvidenceRecord {
  kind: "site" | "core";
  id: string;
  x: number;
  y: number;
  /** site context (in_situ, derived, …) */
  context: string;
  precisionM: number | null;
  /** middle of the calibrated date range, ka BP; null when undated */
  ageKa: number | null;
  archaeologicalMaterial: boolean;
  heldOut: boolean;
}

interface CoreRow {
  coreId?: string;
  x: number;
  y: number;
  archaeologicalIndicators?: string | null;
  dates?: { calBpFrom?: number | null; calBpTo?: number | null }[];
}

const mid = (a: number | null | undefined, b: number | null | undefined): number | null => {
  const f = Number.isFinite(a) ? (a as number) : null;
  const t = Number.isFinite(b) ? (b as number) : null;
  if (f !== null && t !== null) return (f + t) / 2000;
  return f !== null ? f / 1000 : t !== null ? t / 1000 : null;
};

/**
 * The project's sites and cores as the model reads them — the cores of its datasets and the cores
 * recorded as results on its published target lists (design §6: results flow into the next model)
 * — the survey lines' vertices, the dredging areas' polygons, and a fingerprint of all of it.
 */
export async function modelEvidence(projectId: number) {
  const sites = await db().select().from(siteRecords).where(eq(siteRecords.projectId, projectId)).orderBy(asc(siteRecords.id));
  const records: EvidenceRecord[] = sites.map((s) => ({
    kind: "site",
    id: `site-${s.id}`,
    x: s.x,
    y: s.y,
    context: s.context,
    precisionM: s.precisionM,
    ageKa: mid(s.calBpFrom, s.calBpTo),
    archaeologicalMaterial: false,
    heldOut: s.heldOut,
  }));
  const ds = await db()
    .select({ id: datasets.id, kind: datasets.kind, key: datasets.derivedKey, sha256: datasets.sha256, name: datasets.name })
    .from(datasets)
    .where(and(eq(datasets.projectId, projectId), inArray(datasets.kind, [...MODEL_EVIDENCE_KINDS])))
    .orderBy(datasets.id);
  const lines: Array<Array<[number, number]>> = [];
  const areas: PolygonRings[] = [];
  const corePositions: Array<[number, number]> = [];
  for (const d of ds) {
    if (d.kind === "cores") {
      const { rows } = await getJson<{ rows: CoreRow[] }>(d.key);
      rows.forEach((c, k) => {
        corePositions.push([c.x, c.y]);
        const dated = (c.dates ?? []).find((x) => Number.isFinite(x.calBpFrom) || Number.isFinite(x.calBpTo));
        records.push({
          kind: "core",
          id: `core-${d.id}-${c.coreId ?? k + 1}`,
          x: c.x,
          y: c.y,
          context: "",
          precisionM: null,
          ageKa: dated ? mid(dated.calBpFrom, dated.calBpTo) : null,
          archaeologicalMaterial: hasArchaeologicalMaterial(c.archaeologicalIndicators),
          heldOut: false,
        });
      });
    } else if (d.kind === "dredging_areas") {
      const fc = await getJson<{ features: Array<{ geometry: { type?: string; coordinates?: unknown } | null }> }>(d.key);
      areas.push(...polygonsOfGeometries((fc.features ?? []).map((f) => f.geometry)).polygons);
    } else {
      const fc = await getJson<{ features: Array<{ geometry: Parameters<typeof geometryVertices>[0] }> }>(d.key);
      for (const f of fc.features ?? []) lines.push(geometryVertices(f.geometry));
    }
  }
  // Cores recorded on published target lists: searched ground either way, a presence when they found material.
  const results = await targetResultEvidence(projectId);
  for (const t of results) {
    corePositions.push([t.x, t.y]);
    const ageKa = t.youngKa !== null && t.oldKa !== null ? (t.youngKa + t.oldKa) / 2 : (t.youngKa ?? t.oldKa);
    records.push({ kind: "core", id: t.key, x: t.x, y: t.y, context: "", precisionM: null, ageKa, archaeologicalMaterial: t.archaeologicalMaterial, heldOut: false });
  }
  const fingerprint = createHash("sha256")
    .update(JSON.stringify({ records: records.map((r) => [r.kind, r.id, r.x, r.y, r.context, r.precisionM, r.ageKa, r.archaeologicalMaterial, r.heldOut]), datasets: ds.map((d) => `${d.kind}:${d.sha256}`) }))
    .digest("hex");
  return { records, lines, areas, corePositions, targetResults: results.length, datasets: ds.map((d) => ({ id: d.id, kind: d.kind, name: d.name })), fingerprint };
}

/** The reconstructed age nearest `ageKa`, or null when the nearest is further than the tolerance. */
export function nearestAge(agesKa: readonly number[], ageKa: number, toleranceKa: number): number | null {
  let best: number | null = null;
  for (const a of agesKa) if (best === null || Math.abs(a - ageKa) < Math.abs(best - ageKa)) best = a;
  return best !== null && Math.abs(best - ageKa) <= toleranceKa + 1e-9 ? best : null;
}

export interface PlacedEvidence {
  evidence: Evidence[];
  /** held-out sites kept out of training (they are for validation) */
  heldOut: number;
  /** presences without a calibrated date, compared at the model's age */
  undated: number;
  /** presences whose date is further than the tolerance from every reconstructed age */
  outsideAges: number;
}

/**
 * Places sites and cores on the grid and at an age: the cell under the position (−1 outside), the
 * reconstructed age nearest the middle of the calibrated range (within `ageToleranceKa`; else an age
 * that is not in the stack, so the forest lists it as "no reconstructed age"), undated records at the
 * model's age. A site's position is adequate when its stated precision is at most
 * `maxSitePrecisionM`. Held-out sites are left out altogether (counted). O(records).
 */
export function placeEvidence(records: readonly EvidenceRecord[], grid: Manifest["grid"], agesKa: readonly number[], modelAgeKa: number, settings: Pick<ModelSettings, "maxSitePrecisionM" | "ageToleranceKa">): PlacedEvidence {
  const out: Evidence[] = [];
  let heldOut = 0;
  let undated = 0;
  let outsideAges = 0;
  for (const r of records) {
    if (r.heldOut) {
      heldOut++;
      continue;
    }
    const col = Math.floor((r.x - grid.originX) / grid.cellSizeX);
    const row = Math.floor((grid.originY - r.y) / grid.cellSizeY);
    const cell = Number.isFinite(col) && Number.isFinite(row) && col >= 0 && col < grid.width && row >= 0 && row < grid.height ? row * grid.width + col : -1;
    let ageKa: number;
    if (r.ageKa === null) {
      ageKa = modelAgeKa;
      if (r.kind === "core" ? r.archaeologicalMaterial : r.context === "in_situ") undated++;
    } else {
      const a = nearestAge(agesKa, r.ageKa, settings.ageToleranceKa);
      if (a === null) {
        ageKa = NaN;
        if (r.kind === "core" ? r.archaeologicalMaterial : r.context === "in_situ") outsideAges++;
      } else ageKa = a;
    }
    if (r.kind === "site")
      out.push({ kind: "site", id: r.id, context: r.context, positionAdequate: r.precisionM !== null && r.precisionM <= settings.maxSitePrecisionM, cell, ageKa });
    else out.push({ kind: "core", id: r.id, archaeologicalMaterial: r.archaeologicalMaterial, cell, ageKa });
  }
  return { evidence: out, heldOut, undated, outsideAges };
}

/** Counts per exclusion reason, in words: "1 derived find, 3 cores without archaeological material (not an absence)". */
export function exclusionWords(excluded: Partial<Record<ExclusionReason, number>>): string {
  return Object.entries(excluded)
    .map(([r, n]) => `${n} ${r}`)
    .join(", ");
}

/** A request refused because too few presences remain: the numbers go with the message. */
export class ModelRefused extends UserError {
  constructor(
    message: string,
    readonly detail: { presences: number; sites: number; cores: number; minimum: number; excluded: Partial<Record<ExclusionReason, number>>; heldOut: number },
  ) {
    super(422, "too_few_sites", message, "settings.minSites");
  }
}

/** The refusal's message, the same words the job uses. */
export function tooFewMessage(d: ModelRefused["detail"]): string {
  const ex = exclusionWords(d.excluded);
  return (
    `The model needs at least ${d.minimum} presences (in-situ sites with an adequate position and cores with archaeological material); ` +
    `only ${d.presences} remain (${d.sites} site${d.sites === 1 ? "" : "s"}, ${d.cores} core${d.cores === 1 ? "" : "s"})` +
    (ex ? `. Left out: ${ex}` : "") +
    (d.heldOut ? `; ${d.heldOut} held-out site${d.heldOut === 1 ? " is" : "s are"} kept for validation` : "") +
    ". Derived, trawled and dredged finds never train a model."
  );
}

function countPresences(placed: PlacedEvidence, agesKa: readonly number[], cellCount: number) {
  // The forest's own rules (trainingSet) on a stand-in stack with a value in every cell: all it
  // cannot know here is a factor without a value at a presence's cell (the job checks that too).
  const zeros = new Float32Array(cellCount);
  const set = trainingSet({ evidence: placed.evidence, background: [], stack: { factorIds: ["slope"], ages: agesKa.map((a) => ({ ageKa: a, layers: [zeros] })) }, cellCount, maxSamples: 1e9, seed: 1 });
  const excluded: Partial<Record<ExclusionReason, number>> = {};
  for (const x of set.excluded) excluded[x.reason] = (excluded[x.reason] ?? 0) + 1;
  const perAge = new Map<number, number>();
  for (let i = 0; i < set.presences; i++) perAge.set(set.ageKa[i], (perAge.get(set.ageKa[i]) ?? 0) + 1);
  return { presences: set.presences, sites: set.sites, cores: set.cores, excluded, perAge };
}

// ---- requests -----------------------------------------------------------------------------------

function formatAges(ages: readonly number[]) {
  return [...ages].sort((a, b) => b - a).join(", ") + " ka";
}

/**
 * Checks a model request against the project (reconstruction published and the project's, age one
 * of its ages, factors present in it, enough presences) and returns what the job needs and the
 * inputs hash. Throws UserError naming the problem — {@link ModelRefused} with the numbers when too
 * few presences remain; nothing is written.
 */
export async function resolveModelRequest(projectId: number, req: ModelRequest) {
  const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, req.reconstructionId));
  if (!rec || rec.projectId !== projectId) throw new UserError(422, "no_such_reconstruction", `Reconstruction ${req.reconstructionId} is not one of this project's reconstructions.`, "reconstructionId");
  if (rec.status !== "published" || !rec.manifest) throw new UserError(409, "not_published", `Reconstruction ${rec.id} is not published yet (it is ${rec.status}): train a model once its layers are published.`, "reconstructionId");
  const manifest = rec.manifest as unknown as Manifest;
  const classification = await projectClassification(projectId);

  const settings: ModelSettings = { ...(DEFAULT_MODEL_SETTINGS as Omit<ModelSettings, "maxSitePrecisionM">), maxSitePrecisionM: Math.max(manifest.grid.cellSizeX, manifest.grid.cellSizeY), ...req.settings };
  if (settings.minSites < MIN_SITES_FLOOR) settings.minSites = MIN_SITES_FLOOR;
  const gridWidthM = manifest.grid.width * manifest.grid.cellSizeX;
  const gridHeightM = manifest.grid.height * manifest.grid.cellSizeY;
  if (settings.blockSizeM < Math.max(manifest.grid.cellSizeX, manifest.grid.cellSizeY))
    throw new UserError(422, "block_too_small", `A cross-validation block must be at least one cell wide (${Math.max(manifest.grid.cellSizeX, manifest.grid.cellSizeY)} m); got ${settings.blockSizeM} m.`, "settings.blockSizeM");
  if (Math.ceil(gridWidthM / settings.blockSizeM) * Math.ceil(gridHeightM / settings.blockSizeM) < settings.folds)
    throw new UserError(422, "blocks_too_large", `With ${settings.blockSizeM} m blocks the ${Math.round(gridWidthM)} × ${Math.round(gridHeightM)} m grid has fewer blocks than the ${settings.folds} folds: use smaller blocks or fewer folds.`, "settings.blockSizeM");

  const available = new Set(manifest.layers.filter((l) => l.stats.validCount > 0 || l.ageKa !== null).map((l) => l.name));
  let factors: FactorId[];
  if (req.factors) {
    const missing = req.factors.filter((f) => !available.has(factorDef(f)!.layer));
    if (missing.length) throw new UserError(422, "no_such_factor_layer", `Reconstruction ${rec.id} has no layer for ${missing.join(", ")}: leave ${missing.length === 1 ? "it" : "them"} out or reconstruct with ${missing.length === 1 ? "it" : "them"}.`, "factors");
    factors = [...req.factors];
  } else {
    factors = FACTOR_IDS.filter((f) => !NOT_BY_DEFAULT.includes(f) && available.has(factorDef(f)!.layer));
    if (factors.length === 0) throw new UserError(422, "no_factors", `Reconstruction ${rec.id} has no factor layers to train on.`, "factors");
  }

  if (req.ageKa !== undefined && !manifest.agesKa.includes(req.ageKa))
    throw new UserError(422, "no_such_age", `${req.ageKa} ka is not one of the reconstruction's ages (${formatAges(manifest.agesKa)}).`, "ageKa");

  const ev = await modelEvidence(projectId);
  const n = manifest.grid.width * manifest.grid.height;
  // The age most presences are compared at is the default age of the raster; undated presences go
  // to the model's age, so they are counted once it is known.
  const provisionalAge = req.ageKa ?? [...manifest.agesKa].sort((a, b) => b - a)[0];
  let placed = placeEvidence(ev.records, manifest.grid, manifest.agesKa, provisionalAge, settings);
  let counted = countPresences(placed, manifest.agesKa, n);
  let ageKa = provisionalAge;
  if (req.ageKa === undefined) {
    const dated = placeEvidence(ev.records.filter((r) => r.ageKa !== null), manifest.grid, manifest.agesKa, provisionalAge, settings);
    const perAge = countPresences(dated, manifest.agesKa, n).perAge;
    let best = -1;
    for (const a of [...manifest.agesKa].sort((x, y) => y - x)) {
      const c = perAge.get(a) ?? 0;
      if (c > best) {
        best = c;
        ageKa = a;
      }
    }
    placed = placeEvidence(ev.records, manifest.grid, manifest.agesKa, ageKa, settings);
    counted = countPresences(placed, manifest.agesKa, n);
  }
  if (counted.presences < settings.minSites) {
    const detail = { presences: counted.presences, sites: counted.sites, cores: counted.cores, minimum: settings.minSites, excluded: counted.excluded, heldOut: placed.heldOut };
    throw new ModelRefused(tooFewMessage(detail), detail);
  }

  const params: ModelParams = { ageKa, ageChosen: req.ageKa === undefined, factors, settings, classification };
  const fingerprint = { model: MODEL_VERSION, reconstruction: rec.inputsHash, engine: rec.engineVersion, params, evidence: ev.fingerprint };
  const inputsHash = createHash("sha256").update(JSON.stringify(fingerprint)).digest("hex");
  return { reconstruction: rec, manifest, params, inputsHash, presences: counted.presences };
}

/**
 * Starts a model, or returns the existing one for identical inputs (a failed or cancelled one is
 * started again on the same row). Throws UserError for a bad request; nothing is written then.
 */
export async function startModel(project: { id: number }, userId: number, req: ModelRequest, meta: { clientAddress?: string } = {}) {
  const r = await resolveModelRequest(project.id, req);
  const n = r.manifest.grid.width * r.manifest.grid.height;
  const name = req.name?.trim() || `Forest at ${r.params.ageKa} ka`;
  return db().transaction(async (tx) => {
    const inserted = await tx
      .insert(models)
      .values({ projectId: project.id, reconstructionId: r.reconstruction.id, name, params: r.params as unknown as Record<string, unknown>, inputsHash: r.inputsHash, createdBy: userId })
      .onConflictDoNothing({ target: [models.projectId, models.inputsHash] })
      .returning();
    let row = inserted[0];
    if (!row) {
      [row] = await tx.select().from(models).where(and(eq(models.projectId, project.id), eq(models.inputsHash, r.inputsHash))).for("update");
      const run = row.jobRunId ? (await tx.select().from(jobRuns).where(eq(jobRuns.id, row.jobRunId)))[0] : undefined;
      const ended = !run || run.state === "failed" || run.state === "cancelled";
      if (row.status === "published" || (row.status === "running" && !ended)) return { model: row, reused: true };
      [row] = await tx.update(models).set({ status: "running", error: null, result: null, card: null, layerPrefix: null, publishedAt: null }).where(eq(models.id, row.id)).returning();
    }
    const workSize = n * (r.params.settings.folds + 2) + r.params.settings.trees * r.params.settings.maxSamples;
    const jobRunId = await enqueueJob({ kind: "model", projectId: project.id, startedBy: userId, payload: { modelId: row.id }, workSize }, tx);
    [row] = await tx.update(models).set({ jobRunId }).where(eq(models.id, row.id)).returning();
    await recordAudit(tx, {
      actorUserId: userId,
      projectId: project.id,
      action: "model.started",
      detail: { modelId: row.id, jobRunId, reconstructionId: r.reconstruction.id, ageKa: r.params.ageKa, factors: r.params.factors, presences: r.presences },
      clientAddress: meta.clientAddress,
    });
    return { model: row, reused: false };
  });
}

// ---- rows, publication, views -------------------------------------------------------------------

type ModelRow = typeof models.$inferSelect;
type RunRow = typeof jobRuns.$inferSelect;

/** The status people see: a run whose job ended without publishing reads as failed or cancelled. */
export function modelStatus(m: ModelRow, run: RunRow | null | undefined) {
  return effectiveRunStatus(m.status, run);
}

function selectModels() {
  return db().select({ m: models, run: jobRuns, reconstructionName: reconstructions.name }).from(models).leftJoin(jobRuns, eq(jobRuns.id, models.jobRunId)).innerJoin(reconstructions, eq(reconstructions.id, models.reconstructionId));
}

type Joined = Awaited<ReturnType<ReturnType<typeof selectModels>["where"]>>[number];

function withStatus(j: Joined) {
  return { ...j.m, effectiveStatus: modelStatus(j.m, j.run), run: j.run, reconstructionName: j.reconstructionName };
}

export type ModelWithRun = ReturnType<typeof withStatus>;

/** A project's models, newest first. */
export async function listModels(projectId: number) {
  const rows = await selectModels().where(eq(models.projectId, projectId)).orderBy(desc(models.createdAt), desc(models.id));
  return rows.map(withStatus);
}

export async function getModel(id: number) {
  const [row] = await selectModels().where(eq(models.id, id));
  return row ? withStatus(row) : null;
}

/** The attempt-specific prefix under which a model attempt writes its files. */
export function modelAttemptPrefix(projectId: number, modelId: number, runId: string, attempt: number) {
  return `models/p${projectId}/m${modelId}/${runId}-a${attempt}`;
}

export const MODEL_RASTER_FILE = "probability.tif";
export const MODEL_FOREST_FILE = "forest.json";
export const MODEL_PREVIEW_FILE = "probability-display.tif";

/**
 * Publishes a model's card, result and files — only if this attempt still owns the run. Returns
 * false when another took over.
 */
export async function publishModel(modelId: number, runId: string, attempt: number, prefix: string, card: Record<string, unknown>, result: Record<string, unknown>): Promise<boolean> {
  return db().transaction(async (tx) => {
    const rows = await tx
      .update(models)
      .set({ status: "published", card, result, layerPrefix: prefix, publishedAt: new Date(), error: null })
      .where(and(eq(models.id, modelId), eq(models.jobRunId, runId), eq(models.status, "running"), attemptMayPublish(runId, attempt)))
      .returning({ id: models.id, projectId: models.projectId });
    if (rows.length) await recordAudit(tx, { actorUserId: null, projectId: rows[0].projectId, action: "model.published", detail: { modelId, runId, attempt } });
    return rows.length > 0;
  });
}

/** The display-resolution first look a running model shows before its full-resolution raster. */
export interface ModelPreview {
  /** storage key of the preview GeoTIFF (this attempt's prefix) */
  key: string;
  width: number;
  height: number;
  step: number;
}

const previewShape = (p: ModelPreview) => ({ width: p.width, height: p.height, step: p.step });

/**
 * Records the display-resolution preview on the running model (its result holds only the preview
 * until publication) — only while this attempt may still publish (the same guard).
 */
export async function publishModelPreview(modelId: number, runId: string, attempt: number, preview: ModelPreview): Promise<boolean> {
  const rows = await db()
    .update(models)
    .set({ result: { preview } })
    .where(and(eq(models.id, modelId), eq(models.jobRunId, runId), eq(models.status, "running"), attemptMayPublish(runId, attempt)))
    .returning({ id: models.id });
  return rows.length > 0;
}

/**
 * The bytes a picture of the model is drawn from: the published probability raster, or — while the
 * model still runs — its display-resolution preview once there is one.
 */
export async function modelPictureBytes(modelId: number) {
  const m = await getModel(modelId);
  if (!m) throw new UserError(404, "no_such_model", "There is no such model.");
  const preview = (m.result as { preview?: ModelPreview } | null)?.preview;
  if (m.effectiveStatus === "running" && preview) {
    try {
      return { model: m, bytes: await store().getBytes(preview.key), preview: true };
    } catch {
      // an attempt that ended removed its files; the next one writes its own preview
      throw new UserError(409, "no_preview_yet", `Model ${m.id} is still training: its first look is not ready yet.`);
    }
  }
  return { ...(await modelRasterBytes(modelId)), preview: false };
}

export async function markModelEnded(modelId: number, runId: string, status: "failed" | "cancelled", error: string, card: Record<string, unknown> | null = null) {
  await db()
    .update(models)
    .set({ status, error, ...(card ? { card } : {}) })
    .where(and(eq(models.id, modelId), eq(models.jobRunId, runId), eq(models.status, "running")));
}

/** A model as pages and the API show it (models.read only: see the file's head). */
export function modelView(m: ModelWithRun) {
  const params = m.params as unknown as ModelParams;
  return {
    id: m.id,
    projectId: m.projectId,
    name: m.name,
    status: m.effectiveStatus,
    ageKa: params.ageKa,
    params,
    reconstruction: { id: m.reconstructionId, name: m.reconstructionName },
    inputsHash: m.inputsHash,
    jobId: m.jobRunId,
    job: m.run ? jobRunStatus(m.run) : null,
    progress: m.run ? m.run.fraction : m.status === "published" ? 1 : 0,
    error: m.error ?? (m.effectiveStatus === "failed" ? (m.run?.message ?? null) : null),
    /** the model card; for a refused run, what the job counted before it refused */
    card: m.card ?? null,
    // published: the result; still training: only its display-resolution first look, once there is one
    result: m.status === "published" ? m.result : m.effectiveStatus === "running" && (m.result as { preview?: unknown } | null)?.preview ? { preview: previewShape((m.result as { preview: ModelPreview }).preview) } : null,
    downloads: m.status === "published" ? [{ name: "probability", href: `/api/models/${m.id}/raster` }] : [],
    createdAt: m.createdAt.toISOString(),
    publishedAt: m.publishedAt?.toISOString() ?? null,
  };
}

function slug(text: string): string {
  const s = text
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "");
  return s.slice(0, 60) || "x";
}

/** A published model's probability raster (GeoTIFF bytes), or 409 while it is not published. */
export async function modelRasterBytes(modelId: number) {
  const m = await getModel(modelId);
  if (!m) throw new UserError(404, "no_such_model", "There is no such model.");
  if (m.status !== "published" || !m.layerPrefix) throw new UserError(409, "not_published", `Model ${m.id} is not published (it is ${m.effectiveStatus}): its raster can be downloaded once it is.`);
  const bytes = await store().getBytes(`${m.layerPrefix}/${MODEL_RASTER_FILE}`);
  return { model: m, bytes };
}

/** The download's file name: project, model and age, ASCII only (a header value). */
export function modelRasterFileName(project: { slug: string }, modelId: number, ageKa: number): string {
  return `${slug(project.slug)}-model-${modelId}-${String(ageKa).replace(".", "p")}ka-probability.tif`;
}

// ---- validation ---------------------------------------------------------------------------------

/** The validation subject of a published model: its probability raster at its age (app/validations.server.ts). */
export async function modelSubject(m: ModelWithRun): Promise<ValidationSubject> {
  const params = m.params as unknown as ModelParams;
  const result = m.result as { grid: ValidationSubject["grid"] };
  const [rec] = await db().select({ manifest: reconstructions.manifest }).from(reconstructions).where(eq(reconstructions.id, m.reconstructionId));
  const agesKa = ((rec?.manifest ?? null) as unknown as Manifest | null)?.agesKa ?? [params.ageKa];
  const g = result.grid;
  return {
    kind: "model",
    id: m.id,
    projectId: m.projectId,
    label: `Model: ${m.name}`,
    inputsHash: m.inputsHash,
    grid: { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY },
    window: ageWindowOf({ kind: "age", ageKa: params.ageKa }, agesKa),
    // a probability has no preservation part: nothing is unassessed
    load: async () => ({ potential: (await readGeoTiff(await store().getBytes(`${m.layerPrefix}/${MODEL_RASTER_FILE}`))).grid.data, unassessed: null }),
  };
}

/**
 * GET /api/models/:id/validation: the model's probability raster held against the project's sites
 * and cores exactly as a scoring's potential is (validateRaster), stored and reused the same way.
 * 409 while the model is not published. The caller must hold models.read (the route checks).
 */
export async function modelValidation(projectId: number, modelId: number, viewer: { userId: number; role: Role }, options: ValidationOptions = {}) {
  const m = await getModel(modelId);
  if (!m || m.projectId !== projectId) throw new UserError(404, "no_such_model", `Model ${modelId} is not one of this project's models.`);
  if (m.status !== "published" || !m.layerPrefix || !m.result) throw new UserError(409, "not_published", `Model ${m.id} is not published (it is ${m.effectiveStatus}): validate it once it is.`);
  return validateRaster(await modelSubject(m), viewer, options);
}

/** Published models as options of the validation page's picker — none for roles without models.read. */
export async function modelValidationOptions(projectId: number, role: Role): Promise<{ kind: "model"; id: number; label: string }[]> {
  if (!can(role, "models.read")) return [];
  return (await listModels(projectId)).filter((m) => m.effectiveStatus === "published").map((m) => ({ kind: "model" as const, id: m.id, label: `${m.name} (${(m.params as unknown as ModelParams).ageKa} ka)` }));
}
