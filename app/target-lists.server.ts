// Core-target lists (design §6, issue 11): made from a published scoring (or a published model the
// caller may read), under the corer and vessel constraints, by the selection modes of
// app/scoring/target-selection.ts, ordered into a cruise plan (app/scoring/cruise-plan.ts), published
// by a lead as an unchangeable copy, exported (app/exports/), and each target tracked planned → cored
// → result with the core record of design §2. Results flow into validation through
// app/target-results.server.ts.
//
// Who sees what (design §9): owners, leads, analysts and reviewers see exact positions; everyone
// else (viewers) sees only published lists, with every position snapped to the centre of the
// project's site-generalisation grid (as app/sites.ts does for sites), and none of the fields that
// would give the exact position back (cell, distances to lines, fixes and exclusions). Every export
// of exact positions is audit-logged.
import { createHash } from "node:crypto";
import { and, asc, desc, eq, inArray } from "drizzle-orm";
import proj4 from "proj4";
import { z } from "zod";
import { db } from "./db.server";
import { datasets, projects, reconstructions, siteRecords, targetLists, targets } from "./db/schema";
import { getJson, ObjectNotFound, store } from "./storage.server";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { can, type Role } from "./permissions";
import { canonicalJson } from "./weight-sets.server";
import { getScoring, parseVersionContent, targetLabel, versionWithSet, type ScoringTarget } from "./scorings.server";
import { getModel, MODEL_RASTER_FILE, type ModelParams } from "./models.server";
import { projectClassification } from "./validations.server";
import { exclusionZones } from "./regulator.server";
import { layerGrid } from "./layers.server";
import { layerKey } from "./reconstructions.server";
import { CAUTIONS } from "./cautions";
import { readGeoTiff } from "./terrain/geotiff-read";
import { resolveCrs } from "./terrain/crs";
import { slopeAspect } from "./terrain/slope-aspect";
import type { Manifest } from "./terrain/reconstruct";
import { ScoringInputError } from "./scoring/errors";
import { classifyRaster } from "./scoring/classification";
import { applyCurve } from "./scoring/factor-curves";
import { factorDef } from "./scoring/factors";
import { shelterIndex } from "./scoring/shelter";
import { polygonMask, polygonsOfGeometries } from "./scoring/polygon-mask";
import { exclusionZone, planarBuffer, type Geometry } from "./scoring/zones";
import type { WeightedFactor } from "./scoring/weighted-sum";
import { constraintMask, defaultConstraintSet, REASON_TEXT, type ConstraintSet } from "./scoring/target-constraints";
import {
  describeTargets,
  formatDdm,
  horizonUncertainty,
  selectTargets,
  voteSpread,
  type CoreTarget,
  type ExclusionFeature,
  type PlacedGrid,
  type SelectionMode,
  type SurveyLine,
} from "./scoring/target-selection";
import { planCruise, type CruisePlan } from "./scoring/cruise-plan";
import { targetsToCsv } from "./exports/csv";
import { targetsToGeoJson } from "./exports/geojson";
import { targetsToGeoPackage } from "./exports/geopackage";
import type { ExportMeta, ExportTarget } from "./exports/target-fields";
import { indicatorsOrNull } from "./evidence/material";

export const TARGET_LISTS_VERSION = "1";

// ---- the request --------------------------------------------------------------------------------

const metres = (what: string, max = 1e6) => z.number({ error: `${what} must be a number of metres.` }).finite().min(0, `${what} must be zero or more metres.`).max(max, `${what} is more than ${max} m.`);
const count = (what: string) => z.number({ error: `The number of ${what} must be a whole number.` }).int(`The number of ${what} must be a whole number.`).min(0).max(500, `At most 500 ${what} per mode.`);
const point = z.tuple([z.number().finite(), z.number().finite()], { error: "A point is [x, y] in the project CRS." });

const coverTypeSchema = z.object({
  id: z.string().trim().min(1).max(40).regex(/^[a-z0-9_]+$/, "A cover type id is lower-case letters, digits and _."),
  label: z.string().trim().min(1).max(80),
  expectedPenetrationM: z.number().finite().positive().max(50).nullable(),
});

export const constraintsSchema = z
  .object({
    minWaterDepthM: metres("The minimum water depth", 11000),
    maxWaterDepthM: metres("The maximum water depth", 11000),
    maxSlopeDeg: z.number().finite().gt(0, "The slope limit must lie above 0°.").lt(90, "The slope limit must lie below 90°."),
    barrelLengthM: z.number().finite().positive("The barrel length must be positive.").max(50),
    requiredIntoOlderUnitM: metres("The required depth into the older unit", 50),
    coverTypes: z.array(coverTypeSchema).min(1, "The cover-type table needs at least one row.").max(50),
    defaultCoverTypeId: z.string().min(1),
    maxDistanceToSurveyLineM: metres("The distance to a survey line").nullable(),
    positioningToleranceM: metres("The positioning tolerance", 10000),
    unassessedHorizon: z.enum(["refuse", "core-to-refusal"], { error: 'Unassessed horizon cells are "refuse" or "core-to-refusal".' }),
  })
  .partial()
  .strict();

const transectSchema = z
  .object({
    kind: z.literal("transect"),
    name: z.string().trim().min(1, "Name the transect's feature.").max(80),
    /** the axis as two or more points in the project CRS, or a palaeochannel from the interpretations */
    axis: z.array(point).min(2, "An axis needs at least two points.").max(500).optional(),
    axisFrom: z.object({ datasetId: z.number().int().positive(), featureIndex: z.number().int().min(0) }).strict().optional(),
    featureWidthM: z.number().finite().positive("The feature's width must be positive.").max(1e5),
    marginWidthM: metres("The margin width", 1e5),
    halfLengthM: metres("The transect's half-length", 1e5),
    stationSpacingM: z.number().finite().positive("The station spacing must be positive.").max(1e5),
    chainagesM: z.array(z.number().finite().min(0)).min(1, "Say where the transect crosses the axis.").max(50),
  })
  .strict()
  .refine((t) => (t.axis ? 1 : 0) + (t.axisFrom ? 1 : 0) === 1, { message: "Give the transect's axis either as points or as a mapped feature (axisFrom), not both and not neither.", path: ["axis"] });

export const modeSchema = z.discriminatedUnion(
  "kind",
  [
    z.object({ kind: z.literal("best-first"), count: count("targets") }).strict(),
    transectSchema,
    z
      .object({
        kind: z.literal("control"),
        count: count("control cores"),
        /** class labels of the project classification; default the two lowest classes */
        classes: z.array(z.string().min(1)).min(1).max(10).optional(),
        seed: z.number().int().min(0).max(2 ** 31).default(1),
      })
      .strict(),
    z.object({ kind: z.literal("learn-most"), count: count("targets") }).strict(),
  ],
  { error: 'Each mode is one of "best-first", "transect", "control" or "learn-most".' },
);

export const cruiseSchema = z
  .object({
    port: z.object({ name: z.string().trim().min(1).max(80).default("Port"), x: z.number().finite(), y: z.number().finite() }).strict(),
    speedKnots: z.number().finite().positive("The transit speed must be positive.").max(40),
    stationHours: z.number().finite().min(0).max(240),
    shipDays: z.number().finite().min(0).max(365),
    hoursPerDay: z.number().finite().positive().max(24).default(24),
  })
  .strict();

export const targetListRequest = z
  .object({
    name: z.string().trim().min(1, "Name the list.").max(120),
    source: z.object({ kind: z.enum(["scoring", "model"], { error: 'The source is a "scoring" or a "model".' }), id: z.number().int().positive() }).strict(),
    constraints: constraintsSchema.default({}),
    minSpacingM: metres("The minimum spacing", 1e5).default(500),
    modes: z.array(modeSchema).min(1, "Choose at least one selection mode.").max(12),
    cruise: cruiseSchema.nullable().default(null),
    velocityMps: z.number().finite().min(1000).max(3000).default(1600),
    nearbyExclusionM: metres("The nearby-exclusion distance", 1e5).default(500),
    waypointPrefix: z.string().regex(/^[A-Z][A-Z0-9]{0,5}$/, "The waypoint prefix is 1–6 capital letters or digits, starting with a letter.").default("CT"),
    uncertaintySaturationM: z.number().finite().positive().max(1e5).default(1000),
  })
  .strict();
export type TargetListRequest = z.infer<typeof targetListRequest>;

// ---- loading the inputs -------------------------------------------------------------------------

const scoringErr = (e: unknown): never => {
  if (e instanceof ScoringInputError) throw new UserError(422, "invalid_targets", e.message, e.field);
  throw e;
};

type Rec = typeof reconstructions.$inferSelect;

async function readLayer(rec: Rec, manifest: Manifest, name: string, ageKa: number | null): Promise<Float32Array | null> {
  const l = manifest.layers.find((x) => x.name === name && (x.ageKa ?? null) === ageKa);
  if (!l) return null;
  try {
    return (await layerGrid(layerKey(rec, name, ageKa)!, manifest, l)).data;
  } catch (e) {
    if (e instanceof ObjectNotFound) throw new UserError(409, "layer_missing", `The reconstruction's layer ${name}${ageKa === null ? "" : ` at ${ageKa} ka`} is missing from storage: run the reconstruction again.`);
    throw e;
  }
}

const toU8 = (v: Float32Array) => Uint8Array.from(v, (x) => (x === x ? x : 255));

/**
 * Today's seabed elevation on the analysis grid: the analysis surface where it follows the seabed
 * (surface_source 0); where it follows the buried horizon, horizon + cover thickness. NaN elsewhere.
 */
function seabedOf(surface: Float32Array, source: Float32Array | null, cover: Float32Array | null): Float32Array {
  const out = new Float32Array(surface.length);
  for (let i = 0; i < out.length; i++) {
    const s = surface[i];
    if (source === null || source[i] === 0) out[i] = s;
    else if (source[i] === 1 && cover !== null && cover[i] === cover[i]) out[i] = s + cover[i];
    else out[i] = NaN;
  }
  return out;
}

type Feature = { type: "Feature"; geometry: Geometry | null; properties: Record<string, unknown> };

async function featuresOfKind(projectId: number, kind: string) {
  const rows = await db().select({ id: datasets.id, name: datasets.name, key: datasets.derivedKey }).from(datasets).where(and(eq(datasets.projectId, projectId), eq(datasets.kind, kind))).orderBy(asc(datasets.id));
  const out: { datasetId: number; datasetName: string; index: number; feature: Feature }[] = [];
  for (const d of rows) {
    const fc = await getJson<{ features?: Feature[] }>(d.key).catch((e) => {
      if (e instanceof ObjectNotFound) return { features: [] };
      throw e;
    });
    (fc.features ?? []).forEach((feature, index) => out.push({ datasetId: d.id, datasetName: d.name, index, feature }));
  }
  return out;
}

/** Rings and lines of a geometry as vertex lists (for "nearby exclusions"). */
function partsOf(g: Geometry): Array<Array<[number, number]>> {
  const p = (c: number[]) => [c[0], c[1]] as [number, number];
  switch (g.type) {
    case "Point": return [[p(g.coordinates)]];
    case "MultiPoint": return g.coordinates.map((c) => [p(c)]);
    case "LineString": return [g.coordinates.map(p)];
    case "MultiLineString": return g.coordinates.map((l) => l.map(p));
    case "Polygon": return g.coordinates.map((r) => r.map(p));
    case "MultiPolygon": return g.coordinates.flatMap((poly) => poly.map((r) => r.map(p)));
  }
  return [];
}

/**
 * The exclusion mask and the features for "nearby exclusions": the reviewer's exclusion zones
 * (wrecks, anomalies, find spots, each grown by uncertainty + buffer: app/regulator.server.ts) and
 * every other feature of the exclusions datasets (cables, pipelines, turbines, anchors) grown by its
 * own buffer_m. The mask holds every known site exactly — restricted and withheld ones too (the mask
 * never leaves the server; a core must not land on any of them). The nearby list shows find spots
 * only as an analyst may see them (restricted ones as their generalised cell, withheld ones not at
 * all), named "known site".
 */
async function exclusionInputs(projectId: number, grid: PlacedGrid) {
  const all = await exclusionZones(projectId, { viewer: { userId: 0, role: "owner" } });
  const shown = await exclusionZones(projectId, { viewer: { userId: 0, role: "analyst" }, buffers: all.buffersM });
  const polys: Geometry[] = all.features.map((z) => z.geometry as Geometry);
  const halfDiagonalM = Math.hypot(grid.cellSizeX, grid.cellSizeY) / 2;
  const withheld = await db().select().from(siteRecords).where(and(eq(siteRecords.projectId, projectId), eq(siteRecords.visibility, "withheld")));
  for (const r of withheld) {
    const z = exclusionZone({ kind: "find_spot", source: "known sites", label: "", geometry: { type: "Point", coordinates: [r.x, r.y] }, positionUncertaintyM: r.precisionM ?? 0 }, all.buffersM);
    polys.push(z.geometry as Geometry);
  }
  const nearby: ExclusionFeature[] = [];
  for (const z of shown.features) {
    const p = z.properties as { featureKind: string; label: string; distanceM: number };
    // distance to the zone's edge + the zone's width ≈ distance to the feature (exact for points)
    nearby.push({ name: p.featureKind === "find_spot" ? "known site" : p.label, kind: p.featureKind, bufferM: -p.distanceM, parts: partsOf(z.geometry as Geometry) });
  }
  for (const f of await featuresOfKind(projectId, "exclusions")) {
    const kind = String(f.feature.properties.kind ?? "other");
    if (kind === "wreck" || kind === "anomaly" || !f.feature.geometry) continue;
    const buf = Number(f.feature.properties.bufferM);
    const bufferM = Number.isFinite(buf) && buf > 0 ? buf : 0;
    const g = f.feature.geometry;
    const isArea = g.type === "Polygon" || g.type === "MultiPolygon";
    // Cells count by their centres, so a point or a line (a cable with no buffer) is widened to at
    // least half a cell's diagonal: every cell it passes through is refused, never stepped over.
    const reachM = isArea ? bufferM : Math.max(bufferM, halfDiagonalM);
    if (reachM > 0) polys.push(planarBuffer(g, reachM) as Geometry);
    else polys.push(g as Geometry);
    nearby.push({ name: String(f.feature.properties.name ?? `${kind} ${f.index + 1}`), kind, bufferM, parts: partsOf(g) });
  }
  const mask = polys.length ? polygonMask(grid, polygonsOfGeometries(polys).polygons) : null;
  return { mask, nearby, buffersM: all.buffersM };
}

async function surveyAreaMask(projectId: number, grid: PlacedGrid) {
  const fs = await featuresOfKind(projectId, "survey_area");
  if (!fs.length) return null;
  return polygonMask(grid, polygonsOfGeometries(fs.map((f) => f.feature.geometry)).polygons);
}

async function surveyLinesOf(projectId: number): Promise<SurveyLine[]> {
  const out: SurveyLine[] = [];
  for (const f of await featuresOfKind(projectId, "survey_lines")) {
    const g = f.feature.geometry;
    if (!g || (g.type !== "LineString" && g.type !== "MultiLineString")) continue;
    const coords = g.type === "LineString" ? g.coordinates : g.coordinates.flat();
    const ids = Array.isArray(f.feature.properties.fixIds) ? (f.feature.properties.fixIds as unknown[]).map(String) : [];
    out.push({ name: String(f.feature.properties.lineId ?? `line ${f.index + 1}`), fixes: coords.map((c, k) => ({ x: c[0], y: c[1], fix: ids[k] ?? String(k + 1) })) });
  }
  return out;
}

/** A palaeochannel's centre line from the interpretations, as the transect axis. */
async function axisFrom(projectId: number, ref: { datasetId: number; featureIndex: number }): Promise<Array<[number, number]>> {
  const [d] = await db().select().from(datasets).where(and(eq(datasets.id, ref.datasetId), eq(datasets.projectId, projectId), eq(datasets.kind, "interpretations")));
  if (!d) throw new UserError(422, "no_such_feature", `Dataset ${ref.datasetId} is not one of this project's interpretations.`, "modes");
  const fc = await getJson<{ features?: Feature[] }>(d.derivedKey);
  const f = fc.features?.[ref.featureIndex];
  if (!f || !f.geometry) throw new UserError(422, "no_such_feature", `Interpretation ${ref.featureIndex + 1} of "${d.name}" does not exist.`, "modes");
  const g = f.geometry;
  if (g.type === "LineString") return g.coordinates.map((c) => [c[0], c[1]]);
  if (g.type === "MultiLineString") return g.coordinates[0].map((c) => [c[0], c[1]]);
  throw new UserError(422, "not_a_line", `Interpretation ${ref.featureIndex + 1} of "${d.name}" is a ${g.type}, not a line: a transect axis needs a centre line.`, "modes");
}

/** The mapped feature axes a person may choose for a transect: palaeochannel lines from the interpretations. */
export async function transectAxes(projectId: number) {
  const out: { datasetId: number; featureIndex: number; label: string; vertices: number; lengthM: number }[] = [];
  for (const f of await featuresOfKind(projectId, "interpretations")) {
    const g = f.feature.geometry;
    if (String(f.feature.properties.kind) !== "palaeochannel" || !g || (g.type !== "LineString" && g.type !== "MultiLineString")) continue;
    const c = g.type === "LineString" ? g.coordinates : g.coordinates[0];
    let len = 0;
    for (let k = 1; k < c.length; k++) len += Math.hypot(c[k][0] - c[k - 1][0], c[k][1] - c[k - 1][1]);
    const name = f.feature.properties.name ?? (f.feature.properties.attributes as Record<string, unknown> | undefined)?.name;
    out.push({ datasetId: f.datasetId, featureIndex: f.index, label: `${name ? String(name) : `Palaeochannel ${f.index + 1}`} (${f.datasetName})`, vertices: c.length, lengthM: len });
  }
  return out;
}

interface SourceInputs {
  source: { kind: "scoring" | "model"; id: number; label: string };
  rec: Rec;
  manifest: Manifest;
  score: Float32Array;
  /** a model's vote spread (learn-most), or null */
  spread: Float32Array | null;
  factors: WeightedFactor[];
  factorNote: string | null;
  scoredAgeKa: number | null;
  scoringTarget: ScoringTarget | null;
}

async function sourceInputs(projectId: number, role: Role, src: { kind: "scoring" | "model"; id: number }): Promise<SourceInputs> {
  let recId: number;
  let score: Float32Array;
  let spread: Float32Array | null = null;
  let label: string;
  let versionId: number | null = null;
  let scoringTarget: ScoringTarget | null = null;
  let ageWeights: { ageKa: number; weight: number }[] = [];
  if (src.kind === "scoring") {
    const s = await getScoring(src.id);
    if (!s || s.projectId !== projectId) throw new UserError(422, "no_such_scoring", `Scoring ${src.id} is not one of this project's scorings.`, "source");
    if (s.status !== "published" || !s.layerPrefix || !s.result) throw new UserError(409, "not_published", `Scoring ${s.id} is not published (it is ${s.effectiveStatus}): make targets from it once it is.`, "source");
    const files = (s.result.files ?? []) as Array<{ name: string; file: string }>;
    const f = files.find((x) => x.name === "potential");
    if (!f) throw new UserError(409, "scoring_files_missing", `Scoring ${s.id} has no potential raster.`, "source");
    try {
      score = (await readGeoTiff(await store().getBytes(`${s.layerPrefix}/${f.file}`))).grid.data;
    } catch (e) {
      if (e instanceof ObjectNotFound) throw new UserError(409, "scoring_files_missing", `Scoring ${s.id}'s potential raster is missing from storage: score the version again.`, "source");
      throw e;
    }
    recId = s.reconstructionId;
    versionId = s.weightSetVersionId;
    scoringTarget = s.target as unknown as ScoringTarget;
    ageWeights = ((s.result.ageWeights ?? []) as { ageKa: number; weight: number }[]).filter((a) => a.weight > 0);
    label = `Scoring ${s.id}: ${s.version.setName} v${s.version.number}, ${targetLabel(scoringTarget)}`;
  } else {
    if (!can(role, "models.read")) throw new UserError(403, "may_not_read_models", "Your role may not read trained models (they peak on exact site positions): make targets from a scoring.", "source");
    const m = await getModel(src.id);
    if (!m || m.projectId !== projectId) throw new UserError(422, "no_such_model", `Model ${src.id} is not one of this project's models.`, "source");
    if (m.status !== "published" || !m.layerPrefix) throw new UserError(409, "not_published", `Model ${m.id} is not published (it is ${m.effectiveStatus}): make targets from it once it is.`, "source");
    score = (await readGeoTiff(await store().getBytes(`${m.layerPrefix}/${MODEL_RASTER_FILE}`))).grid.data;
    spread = voteSpread(score);
    recId = m.reconstructionId;
    const params = m.params as unknown as ModelParams;
    ageWeights = [{ ageKa: params.ageKa, weight: 1 }];
    label = `Model ${m.id}: ${m.name} (${params.ageKa} ka)`;
  }
  const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, recId));
  if (!rec || rec.status !== "published" || !rec.manifest) throw new UserError(409, "not_published", "The source's reconstruction is no longer published.", "source");
  const manifest = rec.manifest as unknown as Manifest;
  const n = manifest.grid.width * manifest.grid.height;
  if (score.length !== n) throw new UserError(409, "grid_mismatch", "The source's raster does not match its reconstruction's grid.", "source");
  // The age whose factor scores explain the ranking: the scored age, or a period's heaviest age.
  const scoredAgeKa = ageWeights.length ? [...ageWeights].sort((a, b) => b.weight - a.weight || a.ageKa - b.ageKa)[0].ageKa : scoringTarget?.kind === "age" ? scoringTarget.ageKa : null;
  const factors: WeightedFactor[] = [];
  let factorNote: string | null = null;
  if (versionId !== null && scoredAgeKa !== null) {
    const v = await versionWithSet(versionId);
    if (v) {
      const content = parseVersionContent(v.version.content, `Version ${v.version.version} of "${v.setName}"`);
      const g = manifest.grid;
      for (const f of content.factors) {
        if (!(f.weight > 0)) continue;
        const def = factorDef(f.factor);
        if (!def) continue;
        let values: Float32Array | null;
        if (f.factor === "shelter") {
          const lc = await readLayer(rec, manifest, "land_class", scoredAgeKa);
          values = lc ? shelterIndex(toU8(lc), { width: g.width, height: g.height, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY }, content.shelterRadiusM) : null;
        } else values = await readLayer(rec, manifest, def.layer, def.perAge ? scoredAgeKa : null);
        // absent distance layers score as the curve far away; other absent factors are left out (potential.ts rules)
        if (values === null && def.layer.startsWith("dist_")) values = new Float32Array(n).fill(Infinity);
        if (values === null) continue;
        factors.push({ name: f.factor, weight: f.weight, scores: applyCurve(f.curve, values) });
      }
      if (scoringTarget?.kind === "period") factorNote = `Each target's factor contributions are taken at ${scoredAgeKa} ka, the heaviest age of the period "${scoringTarget.name}".`;
    }
  } else if (src.kind === "model") factorNote = "A trained model has no factor weights: the targets carry the model's probability as their score, without contributions.";
  return { source: { kind: src.kind, id: src.id, label }, rec, manifest, score, spread, factors, factorNote, scoredAgeKa, scoringTarget };
}

// ---- making a list ------------------------------------------------------------------------------

export interface PlanView {
  port: { name: string; x: number; y: number; lon: number; lat: number; latDdm: string; lonDdm: string };
  settings: { speedKnots: number; stationHours: number; shipDays: number; hoursPerDay: number };
  /** ranks in visiting order */
  order: number[];
  /** ranks the ship days do not allow */
  dropped: number[];
  legs: Array<{ from: string; to: string; distanceKm: number; hours: number }>;
  totalDistanceKm: number;
  transitHours: number;
  stationHours: number;
  totalHours: number;
  availableHours: number;
  coresThatFit: number;
  fits: boolean;
}

function planView(plan: CruisePlan, port: { name: string; x: number; y: number }, settings: PlanView["settings"], list: CoreTarget[], toWgs: proj4.Converter): PlanView {
  const [lon, lat] = toWgs.forward([port.x, port.y]);
  const name = (j: number) => (j === -1 ? port.name : list[j].waypoint);
  return {
    port: { ...port, lon, lat, latDdm: formatDdm(lat, "lat"), lonDdm: formatDdm(lon, "lon") },
    settings,
    order: plan.order.map((j) => list[j].rank),
    dropped: plan.dropped.map((j) => list[j].rank),
    legs: plan.legs.map((l) => ({ from: name(l.from), to: name(l.to), distanceKm: l.distanceM / 1000, hours: l.hours })),
    totalDistanceKm: plan.totalDistanceM / 1000,
    transitHours: plan.transitHours,
    stationHours: plan.stationHours,
    totalHours: plan.totalHours,
    availableHours: plan.availableHours,
    coresThatFit: plan.order.length,
    fits: plan.fits,
  };
}

/**
 * POST /api/projects/:projectId/target-lists: reads the named published scoring (or model), the
 * reconstruction's layers, the project's survey area, exclusions, survey lines and classification;
 * applies the constraints; selects with the modes in the order given (one shared spacing); records
 * every target; plans the cruise when one is asked for. Stores a draft list. Throws UserError
 * (4xx, nothing stored) for input a person can fix. O(cells · layers) plus the selection.
 */
export async function createTargetList(project: { id: number; crsEpsg: number }, viewer: { userId: number; role: Role }, req: TargetListRequest, meta: { clientAddress?: string } = {}) {
  const constraints: ConstraintSet = { ...defaultConstraintSet(), ...req.constraints } as ConstraintSet;
  const inp = await sourceInputs(project.id, viewer.role, req.source);
  const g = inp.manifest.grid;
  const grid: PlacedGrid = { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY };
  const epsg = g.epsg ?? project.crsEpsg;
  const crs = resolveCrs(epsg);
  const { rec, manifest } = inp;

  const surface = await readLayer(rec, manifest, "analysis_surface", null);
  if (!surface) throw new UserError(409, "layer_missing", "The reconstruction has no analysis surface: run it again.", "source");
  const surfaceSource = await readLayer(rec, manifest, "surface_source", null);
  const cover = await readLayer(rec, manifest, "cover_thickness", null);
  const seabed = seabedOf(surface, surfaceSource, cover);
  const seabedSlope = slopeAspect(seabed, g.width, g.height, g.cellSizeX, g.cellSizeY).slopeDeg;
  const distLine = await readLayer(rec, manifest, "dist_survey_line", null);
  const distPick = await readLayer(rec, manifest, "dist_pick_line", null);
  const unassessedF = await readLayer(rec, manifest, "unassessed", null);
  const unassessed = unassessedF ? Uint8Array.from(unassessedF, (v) => (v === 1 ? 1 : 0)) : null;
  const survey = await surveyAreaMask(project.id, grid);
  const excl = await exclusionInputs(project.id, grid);
  const lines = await surveyLinesOf(project.id);
  const classification = await projectClassification(project.id);
  const notes: string[] = [];
  if (constraints.maxDistanceToSurveyLineM !== null && !distLine) {
    constraints.maxDistanceToSurveyLineM = null;
    notes.push("The reconstruction has no survey-line navigation: the distance-to-a-line limit was not applied.");
  }
  if (inp.factorNote) notes.push(inp.factorNote);
  if (!survey) notes.push("The project has no survey area: the whole grid counts as inside it.");

  // modes: labels → class indices, mapped axes → points
  const modes: SelectionMode[] = [];
  for (const m of req.modes) {
    if (m.kind === "best-first" || m.kind === "learn-most") modes.push({ kind: m.kind, count: m.count });
    else if (m.kind === "control") {
      const labels = classification.labels;
      const wanted = m.classes ?? labels.slice(-2);
      const idx = wanted.map((l) => {
        const k = labels.indexOf(l);
        if (k < 0) throw new UserError(422, "no_such_class", `"${l}" is not a class of the project classification (${labels.join(", ")}).`, "modes");
        return k;
      });
      modes.push({ kind: "control", count: m.count, classes: idx, seed: m.seed });
    } else {
      const axis = m.axis ? (m.axis as Array<[number, number]>) : await axisFrom(project.id, m.axisFrom!);
      modes.push({ kind: "transect", transect: { name: m.name, axis, featureWidthM: m.featureWidthM, marginWidthM: m.marginWidthM, halfLengthM: m.halfLengthM, stationSpacingM: m.stationSpacingM, chainagesM: m.chainagesM } });
    }
  }

  let mask: ReturnType<typeof constraintMask>;
  let picks: ReturnType<typeof selectTargets>;
  let described: CoreTarget[];
  try {
    mask = constraintMask(constraints, {
      grid,
      seabedElevationM: seabed,
      seabedSlopeDeg: seabedSlope,
      coverThicknessM: cover,
      coverType: null,
      distSurveyLineM: distLine,
      surveyArea: survey,
      exclusion: excl.mask,
    });
    let uncertainty: Float32Array | undefined;
    if (modes.some((m) => m.kind === "learn-most")) {
      const horizon = distPick ? horizonUncertainty(distPick, unassessed, req.uncertaintySaturationM) : null;
      if (inp.spread && horizon) {
        // the larger of the two, the vote spread scaled to 0–1 (p(1 − p) peaks at 0.25)
        uncertainty = new Float32Array(horizon.length);
        for (let i = 0; i < horizon.length; i++) uncertainty[i] = Math.max(horizon[i] === horizon[i] ? horizon[i] : 0, inp.spread[i] === inp.spread[i] ? inp.spread[i] * 4 : 0);
      } else if (inp.spread) uncertainty = Float32Array.from(inp.spread, (v) => v * 4);
      else if (horizon) uncertainty = horizon;
      else throw new UserError(422, "no_uncertainty", "Learn-most targets need an uncertainty: this reconstruction has no horizon picks and the source is not a model.", "modes");
    }
    picks = selectTargets({ grid, allowed: mask.allowed, score: inp.score, classes: classifyRaster(classification, inp.score), uncertainty }, modes, { minSpacingM: req.minSpacingM, positioningToleranceM: constraints.positioningToleranceM });
    const lcByAge: Uint8Array[] = [];
    for (const a of manifest.agesKa) {
      const lc = await readLayer(rec, manifest, "land_class", a);
      lcByAge.push(lc ? toU8(lc) : new Uint8Array(g.width * g.height).fill(255));
    }
    described = describeTargets(picks.picks, {
      grid,
      crs: { epsg: crs.epsg, proj4: crs.proj4 },
      score: inp.score,
      seabedElevationM: seabed,
      coverThicknessM: cover,
      coverType: null,
      constraints,
      velocityMps: req.velocityMps,
      surveyLines: lines,
      exclusions: excl.nearby,
      nearbyExclusionM: req.nearbyExclusionM,
      agesKa: manifest.agesKa,
      landClassByAge: lcByAge,
      factors: inp.factors,
      waypointPrefix: req.waypointPrefix,
    });
  } catch (e) {
    return scoringErr(e);
  }
  // nearby exclusion zones were given as their grown outline with bufferM = −(zone width): distance to the
  // outline − (−width) = distance to the feature; report the feature distance and the zone width.
  for (const t of described) t.nearbyExclusions = t.nearbyExclusions.map((e) => (e.bufferM < 0 ? { ...e, distanceM: e.distanceM - e.bufferM, bufferM: -e.bufferM } : e));
  notes.push(...picks.notes);
  if (described.length === 0) throw new UserError(422, "no_targets", `No cell satisfies the constraints at this spacing (${constraintSummary(mask.counts)}). Relax a constraint or the spacing.`, "constraints");

  const toWgs = proj4(crs.proj4, "EPSG:4326");
  let plan: PlanView | null = null;
  if (req.cruise) {
    const { port, ...settings } = req.cruise;
    try {
      plan = planView(planCruise(port, described, settings), port, settings, described, toWgs);
    } catch (e) {
      return scoringErr(e);
    }
  }

  const params = {
    version: TARGET_LISTS_VERSION,
    request: req,
    constraints,
    source: inp.source,
    reconstruction: { id: rec.id, name: rec.name },
    scoringTarget: inp.scoringTarget,
    contributionsAgeKa: inp.scoredAgeKa,
    crs: { epsg: crs.epsg, label: crsLabel(crs.epsg) },
    grid,
    classification: { thresholds: classification.thresholds, labels: classification.labels },
    exclusionBuffersM: excl.buffersM,
    constraintCounts: mask.counts.map((c, k) => ({ reason: REASON_TEXT[k], cells: c })).filter((r) => r.cells > 0),
    modes: picks.modes,
    notes,
  };
  const list = await db().transaction(async (tx) => {
    const [row] = await tx
      .insert(targetLists)
      .values({ projectId: project.id, name: req.name, source: { kind: req.source.kind, id: req.source.id }, params: params as unknown as Record<string, unknown>, plan: plan as unknown as Record<string, unknown> | null, createdBy: viewer.userId })
      .returning();
    await tx.insert(targets).values(described.map((t) => ({ listId: row.id, rank: t.rank, waypoint: t.waypoint, x: t.x, y: t.y, lon: t.lon, lat: t.lat, detail: detailOf(t) })));
    await recordAudit(tx, { actorUserId: viewer.userId, projectId: project.id, action: "target_list.created", detail: { listId: row.id, source: inp.source, targets: described.length }, clientAddress: meta.clientAddress });
    return row;
  });
  return list;
}

function crsLabel(epsg: number, name?: string) {
  return `EPSG:${epsg}${name ? ` (${name})` : ""}`;
}

export function constraintSummary(counts: number[]): string {
  return counts.map((c, k) => (c > 0 && k > 0 ? `${c} cells ${REASON_TEXT[k]}` : null)).filter(Boolean).join("; ") || "no cells";
}

function detailOf(t: CoreTarget): Record<string, unknown> {
  const { rank: _r, waypoint: _w, x: _x, y: _y, lon: _lo, lat: _la, ...rest } = t;
  return rest as unknown as Record<string, unknown>;
}

// ---- reading ------------------------------------------------------------------------------------

type ListRow = typeof targetLists.$inferSelect;
type TargetRow = typeof targets.$inferSelect;

export function seesExact(role: Role): boolean {
  return can(role, "sites.readExact");
}

/** The cell centre of the generalisation grid holding a point (as app/sites.ts snaps sites). O(1). */
export function generalise(x: number, y: number, cellSizeM: number): [number, number] {
  return [(Math.floor(x / cellSizeM) + 0.5) * cellSizeM, (Math.floor(y / cellSizeM) + 0.5) * cellSizeM];
}

/** A stored target as the full record describeTargets made, with its status. */
function coreTargetOf(r: TargetRow): ExportTarget {
  const d = r.detail as unknown as Partial<CoreTarget>;
  return {
    mode: "best-first",
    modeDetail: "",
    cell: -1,
    epsg: 0,
    lonDdm: formatDdm(r.lon, "lon"),
    latDdm: formatDdm(r.lat, "lat"),
    horizonDepthM: null,
    horizonTwtMs: null,
    velocityMps: NaN,
    coverTypeId: "",
    nearbyExclusions: [],
    landAgesKa: [],
    occupation: null,
    ...d,
    // JSON keeps NaN as null: numbers that were NaN come back as NaN
    contributions: (d.contributions ?? []).map((c) => ({ id: c.id, weight: c.weight ?? NaN, factorScore: c.factorScore ?? NaN, contribution: c.contribution ?? NaN })),
    waterDepthM: d.waterDepthM ?? NaN,
    score: d.score ?? NaN,
    plannedPenetrationM: d.plannedPenetrationM ?? NaN,
    expectedPenetrationM: d.expectedPenetrationM ?? NaN,
    nearestLine: d.nearestLine ? { ...d.nearestLine, distanceM: d.nearestLine.distanceM ?? NaN, fixDistanceM: d.nearestLine.fixDistanceM ?? NaN } : null,
    rank: r.rank,
    waypoint: r.waypoint,
    x: r.x,
    y: r.y,
    lon: r.lon,
    lat: r.lat,
    status: r.status,
  };
}

/** The same target with its position snapped to the generalisation grid and the fields that would give it back removed. */
function generalisedTarget(t: ExportTarget, cellSizeM: number, toWgs: proj4.Converter): ExportTarget {
  const [x, y] = generalise(t.x, t.y, cellSizeM);
  const [lon, lat] = toWgs.forward([x, y]);
  return {
    ...t,
    x,
    y,
    lon,
    lat,
    lonDdm: formatDdm(lon, "lon"),
    latDdm: formatDdm(lat, "lat"),
    cell: -1,
    modeDetail: t.mode === "transect" ? t.modeDetail.replace(/, [−+]?\d+ m$/, "") : t.modeDetail,
    nearestLine: t.nearestLine ? { line: t.nearestLine.line, fix: "", distanceM: NaN, fixDistanceM: NaN } : null,
    nearbyExclusions: t.nearbyExclusions.filter((e) => e.kind !== "find_spot").map((e) => ({ ...e, distanceM: NaN })),
  };
}

export async function projectOf(projectId: number) {
  const [p] = await db().select().from(projects).where(eq(projects.id, projectId));
  if (!p) throw new UserError(404, "no_such_project", "There is no such project.");
  return p;
}

/** The lists of a project this viewer may see (viewers: published only), newest first. */
export async function listTargetLists(projectId: number, role: Role) {
  const where = seesExact(role) ? eq(targetLists.projectId, projectId) : and(eq(targetLists.projectId, projectId), eq(targetLists.status, "published"));
  const rows = await db().select().from(targetLists).where(where).orderBy(desc(targetLists.createdAt), desc(targetLists.id));
  const counts = rows.length
    ? await db().select({ listId: targets.listId, status: targets.status }).from(targets).where(inArray(targets.listId, rows.map((r) => r.id)))
    : [];
  return rows.map((r) => {
    const mine = counts.filter((c) => c.listId === r.id);
    const p = r.params as { source?: { label?: string } };
    const plan = r.plan as PlanView | null;
    return {
      id: r.id,
      name: r.name,
      status: r.status,
      source: { ...(r.source as { kind: string; id: number }), label: p.source?.label ?? "" },
      targets: mine.length,
      byStatus: { planned: mine.filter((c) => c.status === "planned").length, cored: mine.filter((c) => c.status === "cored").length, result: mine.filter((c) => c.status === "result").length },
      plan: plan ? { coresThatFit: plan.coresThatFit, totalHours: plan.totalHours, availableHours: plan.availableHours, fits: plan.fits } : null,
      createdAt: r.createdAt.toISOString(),
      publishedAt: r.publishedAt?.toISOString() ?? null,
    };
  });
}

async function listRow(listId: number): Promise<ListRow> {
  const [l] = await db().select().from(targetLists).where(eq(targetLists.id, listId));
  if (!l) throw new UserError(404, "no_such_target_list", "There is no such target list.");
  return l;
}

async function targetRows(listId: number): Promise<TargetRow[]> {
  return db().select().from(targets).where(eq(targets.listId, listId)).orderBy(asc(targets.rank));
}

/** Further downloads of the source, each with the cautions (links to the existing raster and vector routes). */
function furtherDownloads(l: ListRow) {
  const p = l.params as { source: { kind: string; id: number }; reconstruction: { id: number }; scoringTarget: ScoringTarget | null };
  const recId = p.reconstruction.id;
  const out: { label: string; href: string }[] = [];
  if (p.source.kind === "scoring") out.push({ label: "Potential (GeoTIFF, project CRS)", href: `/api/scorings/${p.source.id}/raster/potential` });
  else out.push({ label: "Model probability (GeoTIFF, project CRS)", href: `/api/models/${p.source.id}/raster` });
  out.push({ label: "Flooding age (GeoTIFF, ka BP)", href: `/api/reconstructions/${recId}/layers/flooding_age` });
  return out;
}

/**
 * GET /api/target-lists/:id: the list, its plan and its targets as this viewer may see them.
 * Viewers: 404 for drafts; generalised positions only.
 */
export async function targetListView(listId: number, projectId: number, role: Role) {
  const l = await listRow(listId);
  if (l.projectId !== projectId) throw new UserError(404, "no_such_target_list", "There is no such target list.");
  const exact = seesExact(role);
  if (!exact && l.status !== "published") throw new UserError(404, "no_such_target_list", "There is no such target list, or it is not published yet.");
  const project = await projectOf(projectId);
  const rows = await targetRows(listId);
  const params = l.params as Record<string, unknown> & { crs: { epsg: number; label: string }; reconstruction: { id: number }; grid: PlacedGrid };
  const toWgs = proj4(resolveCrs(params.crs.epsg).proj4, "EPSG:4326");
  const manifestAges = await agesOf(params.reconstruction.id);
  const list = rows.map((r) => {
    const t = coreTargetOf(r);
    const shown = exact ? t : generalisedTarget(t, project.siteGeneralisationM, toWgs);
    return { id: r.id, status: r.status, core: exact ? r.core : publicCore(r.core), updatedAt: r.updatedAt.toISOString(), ...shown };
  });
  let plan = l.plan as PlanView | null;
  if (plan && !exact) plan = { ...plan, legs: [] };
  return {
    list: {
      id: l.id,
      projectId: l.projectId,
      name: l.name,
      status: l.status,
      source: params.source,
      params: exact ? params : { ...params, request: undefined, grid: undefined },
      plan,
      publishedHash: l.publishedHash,
      publishedAt: l.publishedAt?.toISOString() ?? null,
      createdAt: l.createdAt.toISOString(),
    },
    positions: exact ? "exact" : `generalised to the centres of ${project.siteGeneralisationM} m cells (your role sees no exact coordinates)`,
    agesKa: manifestAges,
    targets: list,
    downloads: furtherDownloads(l),
    cautions: CAUTIONS,
  };
}

function publicCore(core: unknown) {
  if (!core || typeof core !== "object") return null;
  const { x: _x, y: _y, ...rest } = core as Record<string, unknown>;
  return rest;
}

async function agesOf(recId: number): Promise<number[]> {
  const [r] = await db().select({ manifest: reconstructions.manifest }).from(reconstructions).where(eq(reconstructions.id, recId));
  return ((r?.manifest ?? null) as unknown as Manifest | null)?.agesKa ?? [];
}

export async function projectIdOfList(listId: number): Promise<number | null> {
  const [l] = await db().select({ p: targetLists.projectId }).from(targetLists).where(eq(targetLists.id, listId));
  return l?.p ?? null;
}

export async function projectIdOfTarget(targetId: number): Promise<number | null> {
  const [t] = await db().select({ p: targetLists.projectId }).from(targets).innerJoin(targetLists, eq(targetLists.id, targets.listId)).where(eq(targets.id, targetId));
  return t?.p ?? null;
}

// ---- publishing ---------------------------------------------------------------------------------

/** SHA-256 of the canonical JSON (sorted keys) of the targets as planned and the plan. O(targets). */
export function publishedHashOf(rows: readonly Pick<TargetRow, "rank" | "waypoint" | "x" | "y" | "lon" | "lat" | "detail">[], plan: unknown): string {
  const body = { targets: rows.map((r) => ({ rank: r.rank, waypoint: r.waypoint, x: r.x, y: r.y, lon: r.lon, lat: r.lat, detail: r.detail })), plan: plan ?? null };
  return createHash("sha256").update(canonicalJson(body)).digest("hex");
}

/** POST /api/target-lists/:id/publish (leads and owners): freezes the list; 409 if already published. */
export async function publishTargetList(listId: number, projectId: number, userId: number, meta: { clientAddress?: string } = {}) {
  return db().transaction(async (tx) => {
    const [l] = await tx.select().from(targetLists).where(eq(targetLists.id, listId)).for("update");
    if (!l || l.projectId !== projectId) throw new UserError(404, "no_such_target_list", "There is no such target list.");
    if (l.status === "published") throw new UserError(409, "already_published", `"${l.name}" was published on ${l.publishedAt?.toISOString().slice(0, 10)}; a published list cannot change. Make a new list instead.`);
    const rows = await tx.select().from(targets).where(eq(targets.listId, listId)).orderBy(asc(targets.rank));
    const hash = publishedHashOf(rows, l.plan);
    const [row] = await tx.update(targetLists).set({ status: "published", publishedHash: hash, publishedBy: userId, publishedAt: new Date() }).where(eq(targetLists.id, listId)).returning();
    await recordAudit(tx, { actorUserId: userId, projectId, action: "target_list.published", detail: { listId, publishedHash: hash, targets: rows.length }, clientAddress: meta.clientAddress });
    return row;
  });
}

/** Any change of a list's content: refused once published (the route's PATCH/PUT/DELETE). */
export async function refuseListChange(listId: number, projectId: number) {
  const l = await listRow(listId);
  if (l.projectId !== projectId) throw new UserError(404, "no_such_target_list", "There is no such target list.");
  if (l.status === "published") throw new UserError(409, "published_list", `"${l.name}" is published and cannot change: only each target's status and result move. Make a new list to change targets.`);
  throw new UserError(409, "not_editable", "A list's targets are not edited in place: make a new list with other settings (a draft may simply be left unpublished).");
}

// ---- statuses and results -----------------------------------------------------------------------

const yesNo = z.enum(["yes", "no", "refused"], { error: 'horizonReached is "yes", "no" or "refused" (a refusal is not a negative).' });
const dateSchema = z
  .object({
    labCode: z.string().trim().max(40).optional(),
    c14Age: z.number().finite().positive().max(60000).optional(),
    c14Sigma: z.number().finite().positive().max(10000).optional(),
    calBpFrom: z.number().finite().min(0).max(100000),
    calBpTo: z.number().finite().min(0).max(100000),
    material: z.string().trim().max(80).optional(),
    sampleDepthM: z.number().finite().min(0).max(100).optional(),
  })
  .strict();
const unitSchema = z.object({ topM: z.number().finite().min(0), baseM: z.number().finite().min(0), description: z.string().trim().max(200) }).strict().refine((u) => u.baseM >= u.topM, "A unit's base lies below its top.");

/** The core record of design §2 (app/evidence/README.md cores columns) as a target carries it. */
export const coreRecordSchema = z
  .object({
    coreId: z.string().trim().min(1).max(40).optional(),
    x: z.number().finite().optional(),
    y: z.number().finite().optional(),
    waterDepthM: z.number().finite().min(0).max(11000).optional(),
    penetrationM: z.number().finite().min(0).max(100),
    recoveryM: z.number().finite().min(0).max(100),
    horizonReached: yesNo,
    units: z.array(unitSchema).max(50).optional(),
    coredAt: z.string().max(40).optional(),
  })
  .strict()
  .refine((c) => c.recoveryM <= c.penetrationM, { message: "Recovery cannot exceed penetration.", path: ["recoveryM"] })
  .refine((c) => (c.x === undefined) === (c.y === undefined), { message: "Give the achieved position as both x and y, or neither.", path: ["x"] });

export const resultSchema = z
  .object({
    preservedLandSurface: z.enum(["yes", "no", "unknown"], { error: 'preservedLandSurface is "yes", "no" or "unknown".' }),
    /** free text ("charcoal; burnt flint"); null = none found */
    archaeologicalIndicators: z.string().trim().max(500).nullable().transform(indicatorsOrNull),
    dates: z.array(dateSchema).max(20).default([]),
    note: z.string().trim().max(2000).optional(),
  })
  .strict();

export const targetPatch = z
  .object({
    status: z.enum(["cored", "result"], { error: 'status moves forward to "cored" or "result".' }),
    core: coreRecordSchema.optional(),
    result: resultSchema.optional(),
  })
  .strict();
export type TargetPatch = z.infer<typeof targetPatch>;

const ORDER = { planned: 0, cored: 1, result: 2 } as const;

/**
 * PATCH /api/targets/:id (analysts and up): moves a target of a published list forward — planned →
 * cored (with the core record) → result (with the result) — never back; audit-logged. A jump from
 * planned to result needs both. Returns the updated row.
 */
export async function updateTarget(targetId: number, projectId: number, userId: number, patch: TargetPatch, meta: { clientAddress?: string } = {}) {
  return db().transaction(async (tx) => {
    const [row] = await tx.select({ t: targets, l: targetLists }).from(targets).innerJoin(targetLists, eq(targetLists.id, targets.listId)).where(eq(targets.id, targetId)).for("update");
    if (!row || row.l.projectId !== projectId) throw new UserError(404, "no_such_target", "There is no such target.");
    const { t, l } = row;
    if (l.status !== "published") throw new UserError(409, "not_published", `"${l.name}" is a draft: publish it before recording cores.`);
    if (ORDER[patch.status] <= ORDER[t.status]) throw new UserError(409, "status_backwards", `${t.waypoint} is already ${t.status}: a status moves forward only (planned → cored → result).`, "status");
    const prev = (t.core ?? {}) as Record<string, unknown>;
    if (t.status === "planned" && !patch.core) throw new UserError(422, "core_needed", `Record the core of ${t.waypoint} (penetration, recovery, whether it reached the horizon) to mark it cored.`, "core");
    if (patch.status === "result" && !patch.result) throw new UserError(422, "result_needed", `Record the result of ${t.waypoint} (preserved land surface, archaeological indicators, dates).`, "result");
    if (patch.status === "cored" && patch.result) throw new UserError(422, "result_with_cored", 'A result moves the status to "result".', "result");
    for (const d of patch.result?.dates ?? []) if (d.calBpFrom < d.calBpTo) throw new UserError(422, "date_order", "A calibrated range goes older → younger: calBpFrom ≥ calBpTo.", "result.dates");
    const core: Record<string, unknown> = { ...prev, ...(patch.core ?? {}), ...(patch.result ? { result: patch.result } : {}) };
    if (patch.core) {
      core.coreId ??= t.waypoint;
      if (core.x === undefined) {
        core.x = t.x;
        core.y = t.y;
        core.positionFrom = "planned target";
      } else core.positionFrom = "achieved";
    }
    const [updated] = await tx.update(targets).set({ status: patch.status, core, updatedBy: userId, updatedAt: new Date() }).where(eq(targets.id, targetId)).returning();
    await recordAudit(tx, { actorUserId: userId, projectId, action: "target.status_changed", detail: { targetId, listId: l.id, waypoint: t.waypoint, from: t.status, to: patch.status }, clientAddress: meta.clientAddress });
    return updated;
  });
}

// ---- exports ------------------------------------------------------------------------------------

export const EXPORT_FORMATS = ["csv", "geojson", "gpkg"] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

/**
 * GET /api/target-lists/:id/export?format=: the list as CSV, GeoJSON or GeoPackage with the
 * cautions. Viewers get generalised positions; an export of exact positions is audit-logged.
 */
export async function exportTargetList(listId: number, project: { id: number; slug: string; name: string; siteGeneralisationM: number }, viewer: { userId: number; role: Role }, format: string | null, meta: { clientAddress?: string } = {}) {
  if (!EXPORT_FORMATS.includes(format as ExportFormat)) throw new UserError(422, "bad_format", `format is one of ${EXPORT_FORMATS.join(", ")} (got ${format ?? "nothing"}).`, "format");
  const l = await listRow(listId);
  if (l.projectId !== project.id) throw new UserError(404, "no_such_target_list", "There is no such target list.");
  const exact = seesExact(viewer.role);
  if (!exact && l.status !== "published") throw new UserError(404, "no_such_target_list", "There is no such target list, or it is not published yet.");
  const params = l.params as { crs: { epsg: number; label: string }; notes?: string[]; source: { label: string } };
  const toWgs = proj4(resolveCrs(params.crs.epsg).proj4, "EPSG:4326");
  const rows = (await targetRows(listId)).map(coreTargetOf);
  const out = exact ? rows : rows.map((t) => generalisedTarget(t, project.siteGeneralisationM, toWgs));
  const when = new Date().toISOString();
  const plan = l.plan as PlanView | null;
  const metaOut: ExportMeta = {
    title: `${project.name} — ${l.name} (${l.status === "published" ? `published ${l.publishedAt?.toISOString().slice(0, 10)}` : "draft, not published"})`,
    crsLabel: params.crs.label,
    generatedAt: when,
    notes: [
      `Source: ${params.source.label}.`,
      ...(exact ? [] : [`Positions generalised to the centres of ${project.siteGeneralisationM} m cells: not for navigation.`]),
      ...(plan ? [`Cruise plan: ${plan.coresThatFit} cores fit ${plan.settings.shipDays} ship days (${plan.totalHours.toFixed(1)} h of ${plan.availableHours.toFixed(1)} h), visiting order ${plan.order.join(" ")}.`] : []),
      ...(l.publishedHash ? [`Published hash (SHA-256): ${l.publishedHash}`] : []),
      ...(params.notes ?? []),
    ],
  };
  const base = `${project.slug}-targets-${l.id}${exact ? "" : "-generalised"}`.replace(/[^A-Za-z0-9_.-]/g, "_");
  let body: Uint8Array | string;
  let type: string;
  let file: string;
  if (format === "csv") {
    body = targetsToCsv(out, metaOut);
    type = "text/csv; charset=utf-8";
    file = `${base}.csv`;
  } else if (format === "geojson") {
    body = JSON.stringify(targetsToGeoJson(out, metaOut));
    type = "application/geo+json";
    file = `${base}.geojson`;
  } else {
    body = await targetsToGeoPackage(out, metaOut, { epsg: params.crs.epsg });
    type = "application/geopackage+sqlite3";
    file = `${base}.gpkg`;
  }
  if (exact) await recordAudit(db(), { actorUserId: viewer.userId, projectId: project.id, action: "target_list.exported", detail: { listId, format, targets: out.length, positions: "exact" }, clientAddress: meta.clientAddress });
  return { body, type, file };
}
