// The review desk (design §7, issue 12): what a heritage reviewer reads before leasing or
// development — the conflict table (does each asset's impact depth reach the preserved horizon, and
// what mitigation follows), lease-block figures, exclusion zones around discrete features and
// graded mitigation zones from potential — and the exclusion buffers the reviewer sets.
//
// Which potential: the project's adopted weight-set version, scored at full resolution — the newest
// published scoring of that version, or the scoring named by `scoringId` (any published scoring of
// the project). The figures read that scoring's rasters and its reconstruction's layers (cover
// thickness, horizon unassessed, land class per age); all are immutable once published, so the loaded
// inputs are cached per scoring.
//
// Known sites (design §9): counts in blocks and zones around find spots follow app/sites.server.ts —
// exact only for callers who may see exact positions; for everyone else generalised to the project's
// cells, and counts below the project's minimum shown as "< n". A call without a viewer is treated
// as the least privileged.
import { storedClassification, toProjectClassification } from "./validations.server";
import { and, desc, eq, inArray } from "drizzle-orm";
import proj4 from "proj4";
import { z } from "zod";
import { db } from "./db.server";
import { datasets, exclusionSettings, projects, reconstructions, scorings } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { getJson, ObjectNotFound, store } from "./storage.server";
import { layerKey } from "./reconstructions.server";
import { layerGrid } from "./layers.server";
import { readGeoTiff } from "./terrain/geotiff-read";
import { resolveCrs } from "./terrain/crs";
import type { Manifest } from "./terrain/reconstruct";
import { adoptedVersion } from "./weight-sets.server";
import { targetLabel, type ScoringTarget } from "./scorings.server";
import { sitesFor, type Viewer } from "./sites.server";
import { can } from "./permissions";
import { classifyRaster, type ProjectClassification } from "./scoring/classification";
import { ScoringInputError } from "./scoring/errors";
import { areaM2, blockFigures as figuresOfBlock, maskedSummary, pointInArea, rasterisePolygon, type AreaGeometry, type BlockFigures, type BlockInputs, type PlacedGrid } from "./scoring/block-figures";
import {
  assetMitigation,
  DEFAULT_EXCLUSION_BUFFERS_M,
  DEFAULT_REACH_MARGIN_M,
  EXCLUSION_FEATURE_KINDS,
  EXCLUSION_KIND_LABELS,
  exclusionZone,
  impactReach,
  MAX_EXCLUSION_BUFFER_M,
  MITIGATION_MEASURES,
  mitigationZones as zonesFromClasses,
  planarBuffer,
  REACH_LABELS,
  type AreaOut,
  type DiscreteFeature,
  type ExclusionBuffers,
  type Geometry,
  type MitigationId,
  type Position,
  type Reach,
} from "./scoring/zones";

export const REGULATOR_CAUTION =
  "Model output is a planning aid: a low score is not evidence of absence, and unassessed ground is unknown, not low. " +
  "Fieldwork and reporting follow local heritage law and licensed archaeological practice; seabed work needs an unexploded-ordnance risk assessment; " +
  "human remains mean stopping work and notifying the competent authority; descendant and Indigenous communities are consulted under the applicable rules.";

export const MITIGATION_RULE =
  "Horizon unassessed under the asset → targeted survey to assess it first. Works stay above the horizon → finds-reporting protocol. " +
  "Works reach it → the grade of the highest potential class under the asset and its buffer (highest class: targeted survey; then coring, watching brief; lowest: finds-reporting protocol). " +
  "Works may reach it (within 1 m of the shallowest cover, or part of the footprint unassessed) → one grade milder. Modelled potential leads to graded mitigation, never to exclusion.";

export const REACH_RULE =
  "Depth to the preserved horizon is the cover thickness (seabed to horizon) of the cells whose centres lie under the asset and its buffer. " +
  "Reaches: the impact depth is at least the shallowest cover there. May reach: it comes within 1 m of it, or part of the footprint is unassessed. Stays above: otherwise. Unassessed: no cell there has an assessed horizon.";

// ---------------------------------------------------------------------------------------------
// The project classification

/**
 * The project classification as stored (projects.classification): thresholds given highest first
 * are used as they are; the column's default lists them lowest first ([0.25, 0.5, 0.75] with labels
 * "low" … "very high"), which is read the other way round.
 */
export function classificationOf(stored: Record<string, unknown> | null | undefined): ProjectClassification {
  // one reader of projects.classification for every module (either stored order)
  return toProjectClassification(storedClassification(stored));
}

// ---------------------------------------------------------------------------------------------
// Which scoring

export interface DeskOptions {
  /** a published scoring of the project; default: the newest published scoring of the adopted version */
  scoringId?: number | null;
  /** who asks (for known sites); none = least privileged */
  viewer?: Viewer | null;
}

/** Parses a `?scoring=` parameter: absent → null; not a positive whole number → 400. */
export function scoringParam(value: string | null): number | null {
  if (value === null || value === "") return null;
  if (!/^\d{1,9}$/.test(value) || Number(value) === 0) throw new UserError(400, "bad_scoring", `scoring must be the id of a published scoring of this project, not "${value}".`, "scoring");
  return Number(value);
}

async function chooseScoring(projectId: number, scoringId: number | null | undefined) {
  if (scoringId != null) {
    const [s] = await db().select().from(scorings).where(eq(scorings.id, scoringId));
    if (!s || s.projectId !== projectId) throw new UserError(404, "no_such_scoring", `Scoring ${scoringId} is not one of this project's scorings.`, "scoring");
    if (s.status !== "published" || !s.layerPrefix || !s.result) throw new UserError(409, "not_published", `Scoring ${scoringId} is not published (it is ${s.status}): the desk reads published scorings only.`, "scoring");
    return s;
  }
  const adopted = await adoptedVersion(projectId);
  if (!adopted)
    throw new UserError(409, "no_adopted_version", "The project has not adopted a weight-set version yet: a lead adopts one on the Weights page, an analyst scores it at full resolution, and the desk reads that scoring.");
  const [s] = await db()
    .select()
    .from(scorings)
    .where(and(eq(scorings.projectId, projectId), eq(scorings.weightSetVersionId, adopted.version.id), eq(scorings.status, "published")))
    .orderBy(desc(scorings.publishedAt), desc(scorings.id))
    .limit(1);
  if (!s)
    throw new UserError(
      409,
      "no_scoring_of_adopted_version",
      `The adopted weight set "${adopted.set.name}" v${adopted.version.version} has no published full-resolution scoring yet: an analyst scores it on its page (Full resolution), or POST /api/projects/${projectId}/scorings with { reconstructionId, weightSetVersionId: ${adopted.version.id}, target }.`,
    );
  return s;
}

// ---------------------------------------------------------------------------------------------
// Inputs (cached per scoring: published files never change)

interface DeskInputs {
  scoring: { id: number; target: ScoringTarget; targetLabel: string; weightSet: Record<string, unknown> | null; reconstruction: { id: number; name: string }; publishedAt: string | null };
  grid: PlacedGrid;
  epsg: number;
  potential: Float32Array;
  /** occupiable but unassessed (the scoring's raster), null when preservation was off */
  unassessedScore: Uint8Array | null;
  /** the reconstruction's horizon layers, null without a horizon */
  cover: Float32Array | null;
  thinCover: Uint8Array | null;
  landClassByAge: { ageKa: number; landClass: Uint8Array }[];
  agesKa: number[];
}

const cache = new Map<number, Promise<DeskInputs>>();
const CACHE_SIZE = 3;

const toU8 = (v: Float32Array) => Uint8Array.from(v, (x) => (x === x ? x : 255));

async function loadInputs(s: typeof scorings.$inferSelect): Promise<DeskInputs> {
  const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, s.reconstructionId));
  if (!rec || !rec.manifest) throw new UserError(409, "not_published", `The reconstruction of scoring ${s.id} is no longer published.`);
  const manifest = rec.manifest as unknown as Manifest;
  const g = manifest.grid;
  const grid: PlacedGrid = { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY };
  const [project] = await db().select({ crsEpsg: projects.crsEpsg }).from(projects).where(eq(projects.id, s.projectId));
  const result = s.result as { files?: Array<{ name: string; file: string }>; weightSet?: Record<string, unknown> };
  const file = (name: string) => result.files?.find((f) => f.name === name);
  const raster = async (name: string) => {
    const f = file(name);
    if (!f) return null;
    try {
      return (await readGeoTiff(await store().getBytes(`${s.layerPrefix}/${f.file}`))).grid.data;
    } catch (e) {
      if (e instanceof ObjectNotFound) throw new UserError(409, "scoring_files_missing", `Scoring ${s.id}'s ${name} raster is missing from storage: score the version again.`);
      throw e;
    }
  };
  const layer = async (name: string, ageKa: number | null) => {
    const l = manifest.layers.find((x) => x.name === name && (x.ageKa ?? null) === ageKa);
    if (!l) return null;
    try {
      return (await layerGrid(layerKey(rec, name, ageKa)!, manifest, l)).data;
    } catch (e) {
      if (e instanceof ObjectNotFound) throw new UserError(409, "layer_missing", `The reconstruction's layer ${name}${ageKa === null ? "" : ` at ${ageKa} ka`} is missing from storage: run the reconstruction again.`);
      throw e;
    }
  };
  const potential = await raster("potential");
  if (!potential) throw new UserError(409, "scoring_files_missing", `Scoring ${s.id} has no potential raster.`);
  const n = g.width * g.height;
  if (potential.length !== n) throw new UserError(409, "grid_mismatch", `Scoring ${s.id}'s potential does not match its reconstruction's grid.`);
  const un = await raster("unassessed");
  const cover = await layer("cover_thickness", null);
  const thin = await layer("thin_cover", null);
  const landClassByAge: DeskInputs["landClassByAge"] = [];
  for (const a of manifest.agesKa) {
    const lc = await layer("land_class", a);
    if (lc) landClassByAge.push({ ageKa: a, landClass: toU8(lc) });
  }
  const target = s.target as unknown as ScoringTarget;
  return {
    scoring: { id: s.id, target, targetLabel: targetLabel(target), weightSet: result.weightSet ?? null, reconstruction: { id: rec.id, name: rec.name || `Reconstruction ${rec.id}` }, publishedAt: s.publishedAt?.toISOString() ?? null },
    grid,
    epsg: g.epsg ?? project?.crsEpsg ?? 0,
    potential,
    unassessedScore: un ? Uint8Array.from(un, (x) => (x === 1 ? 1 : 0)) : null,
    cover,
    thinCover: thin ? Uint8Array.from(thin, (x) => (x === 1 ? 1 : 0)) : null,
    landClassByAge,
    agesKa: [...manifest.agesKa].sort((a, b) => b - a),
  };
}

async function inputsFor(projectId: number, scoringId: number | null | undefined): Promise<DeskInputs> {
  const s = await chooseScoring(projectId, scoringId);
  let p = cache.get(s.id);
  if (!p) {
    p = loadInputs(s);
    cache.set(s.id, p);
    p.catch(() => cache.delete(s.id));
    while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value!);
  }
  return p;
}

async function projectRow(projectId: number) {
  const [p] = await db().select().from(projects).where(eq(projects.id, projectId));
  if (!p) throw new UserError(404, "no_such_project", "There is no such project.");
  return p;
}

type StoredFeature = { type: "Feature"; geometry: Geometry | null; properties: Record<string, unknown> };

/** The features of the project's vector datasets of a kind (project CRS), with their dataset. */
async function featuresOf(projectId: number, kinds: string[]) {
  const rows = await db().select({ id: datasets.id, kind: datasets.kind, name: datasets.name, key: datasets.derivedKey }).from(datasets).where(and(eq(datasets.projectId, projectId), inArray(datasets.kind, kinds))).orderBy(datasets.id);
  const out: { dataset: { id: number; kind: string; name: string }; feature: StoredFeature; index: number }[] = [];
  for (const d of rows) {
    let fc: { features?: StoredFeature[] };
    try {
      fc = await getJson<{ features?: StoredFeature[] }>(d.key);
    } catch (e) {
      if (e instanceof ObjectNotFound) {
        console.error(`[regulator] dataset ${d.id} (${d.kind}) has no stored object ${d.key}; left out`);
        continue;
      }
      throw e;
    }
    (fc.features ?? []).forEach((feature, index) => {
      if (feature.geometry) out.push({ dataset: { id: d.id, kind: d.kind, name: d.name }, feature, index });
    });
  }
  return out;
}

function scoringSummary(inp: DeskInputs, classification: ProjectClassification) {
  return {
    ...inp.scoring,
    classification: { kind: classification.kind, thresholds: classification.thresholds, labels: classification.labels },
    grid: { ...inp.grid, epsg: inp.epsg },
  };
}

// ---------------------------------------------------------------------------------------------
// Footprints

/** Marks the cells a geometry touches: its vertices' cells and, along lines and rings, samples every half cell. */
function touchCells(geometry: Geometry, grid: PlacedGrid, mask: Uint8Array) {
  const mark = (x: number, y: number) => {
    const c = Math.floor((x - grid.originX) / grid.cellSizeX);
    const r = Math.floor((grid.originY - y) / grid.cellSizeY);
    if (c >= 0 && r >= 0 && c < grid.width && r < grid.height) mask[r * grid.width + c] = 1;
  };
  const step = Math.min(grid.cellSizeX, grid.cellSizeY) / 2;
  const line = (pts: Position[]) => {
    for (let k = 0; k < pts.length; k++) {
      mark(pts[k][0], pts[k][1]);
      if (k === 0) continue;
      const [x0, y0] = pts[k - 1];
      const [x1, y1] = pts[k];
      const steps = Math.min(100_000, Math.ceil(Math.hypot(x1 - x0, y1 - y0) / step));
      for (let j = 1; j < steps; j++) mark(x0 + ((x1 - x0) * j) / steps, y0 + ((y1 - y0) * j) / steps);
    }
  };
  switch (geometry.type) {
    case "Point": return mark(geometry.coordinates[0], geometry.coordinates[1]);
    case "MultiPoint": return geometry.coordinates.forEach((p) => mark(p[0], p[1]));
    case "LineString": return line(geometry.coordinates);
    case "MultiLineString": return geometry.coordinates.forEach(line);
    case "Polygon": return geometry.coordinates.forEach(line);
    case "MultiPolygon": return geometry.coordinates.forEach((p) => p.forEach(line));
  }
}

/** The cells under a geometry grown by `bufferM`: centres inside the buffered area, plus every cell the geometry itself touches. */
function footprintMask(geometry: Geometry, bufferM: number, grid: PlacedGrid): Uint8Array {
  const mask = new Uint8Array(grid.width * grid.height);
  const isArea = geometry.type === "Polygon" || geometry.type === "MultiPolygon";
  if (bufferM > 0 || isArea) rasterisePolygon((bufferM > 0 ? planarBuffer(geometry, bufferM) : geometry) as AreaGeometry, grid, mask);
  touchCells(geometry, grid, mask);
  return mask;
}

const numberOr = (v: unknown, d: number) => (typeof v === "number" && Number.isFinite(v) ? v : d);
const round = (v: number | null, digits = 2) => (v === null ? null : Math.round(v * 10 ** digits) / 10 ** digits);

// ---------------------------------------------------------------------------------------------
// The conflict table

export interface ConflictRow {
  assetId: string;
  kind: string | null;
  dataset: string;
  geometryType: string;
  impactDepthM: number;
  bufferM: number;
  /** cells under the asset and its buffer */
  cells: number;
  areaKm2: number;
  /** depth to the preserved horizon = cover thickness, m below seabed, over assessed cells */
  depthToHorizonM: { min: number | null; median: number | null; max: number | null };
  /** share of the footprint's assessed cells whose cover is thinner than the sub-bottom system resolves */
  thinCoverShare: number | null;
  /** share of the footprint where the horizon is unassessed (no cover value) */
  unassessedShare: number;
  reach: Reach;
  reachLabel: string;
  /** highest class with any cell under the asset (label), null if none */
  highestClass: string | null;
  /** 0 = highest; null if none */
  highestClassIndex: number | null;
  /** shares of the footprint per class, then unassessed (by the scoring) and not scored */
  classShares: { label: string; share: number }[];
  scoringUnassessedShare: number;
  notScoredShare: number;
  maxPotential: number | null;
  mitigation: { id: MitigationId; label: string; text: string };
}

/**
 * The conflict table: one row per development_footprint feature (design §7). Throws UserError (409)
 * when there is no scoring to read. Rows keep the upload's order; the page sorts.
 */
export async function conflictTable(projectId: number, opts: DeskOptions & { marginM?: number } = {}) {
  const project = await projectRow(projectId);
  const classification = classificationOf(project.classification);
  const inp = await inputsFor(projectId, opts.scoringId);
  const k = classification.labels.length;
  const features = await featuresOf(projectId, ["development_footprint"]);
  const cellKm2 = (inp.grid.cellSizeX * inp.grid.cellSizeY) / 1e6;
  const blockInputs: BlockInputs = { grid: inp.grid, potential: inp.potential, unassessed: inp.unassessedScore, classification, landClassByAge: [] };
  const margin = opts.marginM ?? DEFAULT_REACH_MARGIN_M;
  const rows: ConflictRow[] = [];
  const notes: string[] = [];
  for (const { dataset, feature, index } of features) {
    const p = feature.properties;
    const bufferM = Math.max(0, numberOr(p.bufferM, 0));
    const impactDepthM = numberOr(p.impactDepthM, 0);
    let mask: Uint8Array;
    try {
      mask = footprintMask(feature.geometry!, bufferM, inp.grid);
    } catch (e) {
      if (e instanceof ScoringInputError) {
        notes.push(`${String(p.assetId ?? `asset ${index + 1}`)} (${dataset.name}) left out: ${e.message}`);
        continue;
      }
      throw e;
    }
    const f = figuresOfBlock(blockInputs, mask);
    const cover = inp.cover ? maskedSummary(inp.cover, mask) : { cells: f.cells, valued: 0, min: null, median: null, max: null };
    const unassessedShare = f.cells > 0 ? 1 - cover.valued / f.cells : 1;
    let thin: number | null = null;
    if (inp.thinCover && inp.cover && cover.valued > 0) {
      let t = 0;
      for (let i = 0; i < mask.length; i++) if (mask[i] && inp.thinCover[i] === 1 && inp.cover[i] === inp.cover[i]) t++;
      thin = t / cover.valued;
    }
    const reach = f.cells === 0 ? "unassessed" : impactReach(impactDepthM, cover.min, unassessedShare, margin);
    const hi = f.classes.findIndex((c) => c.cells > 0);
    const mitigation = assetMitigation(reach, hi >= 0 ? hi : null, k);
    const m = MITIGATION_MEASURES.find((x) => x.id === mitigation)!;
    if (f.cells === 0) notes.push(`${String(p.assetId)} lies outside the analysis grid: nothing is known under it.`);
    rows.push({
      assetId: String(p.assetId ?? `asset ${index + 1}`),
      kind: (p.kind as string | null) ?? null,
      dataset: dataset.name,
      geometryType: feature.geometry!.type,
      impactDepthM,
      bufferM,
      cells: f.cells,
      areaKm2: f.cells * cellKm2,
      depthToHorizonM: { min: round(cover.min), median: round(cover.median), max: round(cover.max) },
      thinCoverShare: thin,
      unassessedShare,
      reach,
      reachLabel: REACH_LABELS[reach],
      highestClass: hi >= 0 ? classification.labels[hi] : null,
      highestClassIndex: hi >= 0 ? hi : null,
      classShares: f.classes.map((c) => ({ label: c.label, share: c.share })),
      scoringUnassessedShare: f.unassessed.share,
      notScoredShare: f.notScored.share,
      maxPotential: f.maxPotential,
      mitigation: { id: m.id, label: m.label, text: m.text },
    });
  }
  if (!inp.cover) notes.push("The reconstruction has no buried horizon: the depth to a preserved horizon is unassessed everywhere.");
  if (!features.length) notes.push("The project has no development footprint: upload one (Data → Development footprint) with an impact depth per asset.");
  return { scoring: scoringSummary(inp, classification), marginM: margin, reachRule: REACH_RULE, mitigationRule: MITIGATION_RULE, rows, notes, caution: REGULATOR_CAUTION };
}

const csvCell = (v: unknown) => {
  const s = v === null || v === undefined ? "" : typeof v === "number" ? String(Math.round(v * 1e4) / 1e4) : String(v);
  return /[",\n;\r]/.test(s) || /^[=+\-@]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
};
const csv = (head: string[], rows: unknown[][]) => [head, ...rows].map((r) => r.map(csvCell).join(",")).join("\r\n") + "\r\n";

/** The conflict table as CSV (no site positions in it). */
export function conflictsCsv(table: Awaited<ReturnType<typeof conflictTable>>): string {
  const labels = table.scoring.classification.labels;
  return csv(
    ["asset_id", "kind", "dataset", "geometry", "impact_depth_m", "buffer_m", "area_km2", "depth_to_horizon_min_m", "depth_to_horizon_median_m", "thin_cover_share", "horizon_unassessed_share", "reach", "highest_class", "max_potential", ...labels.map((l) => `share_${l.replace(/\W+/g, "_")}`), "share_unassessed_scoring", "share_not_scored", "mitigation", "scoring_id", "target"],
    table.rows.map((r) => [r.assetId, r.kind, r.dataset, r.geometryType, r.impactDepthM, r.bufferM, r.areaKm2, r.depthToHorizonM.min, r.depthToHorizonM.median, r.thinCoverShare, r.unassessedShare, r.reachLabel, r.highestClass, r.maxPotential, ...r.classShares.map((c) => c.share), r.scoringUnassessedShare, r.notScoredShare, r.mitigation.label, table.scoring.id, table.scoring.targetLabel]),
  );
}

// ---------------------------------------------------------------------------------------------
// Lease-block figures

export interface BlockSites {
  /** the count shown: a number, or "< n" when suppressed */
  shown: string;
  /** the number, when it may be shown */
  count: number | null;
  /** exact positions counted (true) or generalised cells (false) */
  exact: boolean;
}

export interface BlockRow extends BlockFigures {
  name: string;
  dataset: string;
  /** planar area of the polygon (project CRS), km² */
  areaKm2: number;
  sites: BlockSites;
}

/**
 * Figures per lease block (design §7): area and share per class of the project classification,
 * share unassessed, mean and max potential, known sites inside (design §9), ages at which the block
 * was land. Throws UserError (409) when there is no scoring to read.
 */
export async function blockFigures(projectId: number, opts: DeskOptions = {}) {
  const project = await projectRow(projectId);
  const classification = classificationOf(project.classification);
  const inp = await inputsFor(projectId, opts.scoringId);
  const features = await featuresOf(projectId, ["lease_blocks"]);
  const exactViewer = !!opts.viewer && can(opts.viewer.role, "sites.readExact");
  const view = opts.viewer ? await sitesFor(project, opts.viewer) : await sitesFor(project, { userId: 0, role: "viewer" });
  const blockInputs: BlockInputs = { grid: inp.grid, potential: inp.potential, unassessed: inp.unassessedScore, classification, landClassByAge: inp.landClassByAge };
  const rows: BlockRow[] = [];
  const notes: string[] = [];
  for (const { dataset, feature, index } of features) {
    const g = feature.geometry!;
    if (g.type !== "Polygon" && g.type !== "MultiPolygon") {
      notes.push(`${dataset.name}: feature ${index + 1} is a ${g.type}, not a block polygon; left out.`);
      continue;
    }
    const area = g as AreaGeometry;
    const f = figuresOfBlock(blockInputs, rasterisePolygon(area, inp.grid));
    let count = 0;
    for (const s of view.exact) if (pointInArea(area, s.x, s.y)) count++;
    for (const c of view.generalised.cells) if (pointInArea(area, c.x, c.y)) count += c.count;
    const suppress = !exactViewer && count < project.siteMinCount;
    rows.push({
      name: String(feature.properties.name ?? `block ${index + 1}`),
      dataset: dataset.name,
      areaKm2: areaM2(area) / 1e6,
      ...f,
      sites: { shown: suppress ? `< ${project.siteMinCount}` : String(count), count: suppress ? null : count, exact: exactViewer },
    });
  }
  if (!features.length) notes.push("The project has no lease blocks: upload them (Data → Lease blocks) to see figures per block.");
  if (exactViewer && view.generalised.cells.length + view.generalised.suppressed > 0)
    notes.push("Some records are restricted by their community's custodian: they are counted by their generalised cell, and those in sparse cells are not counted.");
  if (!exactViewer)
    notes.push(`Known sites are counted by their generalised ${project.siteGeneralisationM} m cells; counts below ${project.siteMinCount} are shown as "< ${project.siteMinCount}" (design §9).`);
  return {
    scoring: scoringSummary(inp, classification),
    sitesRule: exactViewer ? "exact" : "generalised",
    rows,
    notes,
    caution: REGULATOR_CAUTION,
  };
}

/** Block figures as CSV: the sites column carries what the caller may see ("< n" when suppressed). */
export function blockFiguresCsv(table: Awaited<ReturnType<typeof blockFigures>>): string {
  const labels = table.scoring.classification.labels;
  return csv(
    ["block", "dataset", "area_km2", "grid_area_km2", ...labels.map((l) => `share_${l.replace(/\W+/g, "_")}`), "share_unassessed", "share_not_scored", "mean_potential", "max_potential", "known_sites", "land_ages_ka", "partly_land_ages_ka", "scoring_id", "target"],
    table.rows.map((r) => [r.name, r.dataset, r.areaKm2, r.gridAreaKm2, ...r.classes.map((c) => c.share), r.unassessed.share, r.notScored.share, r.meanPotential, r.maxPotential, r.sites.shown, r.landAgesKa.join(" "), r.partlyLandAgesKa.join(" "), table.scoring.id, table.scoring.targetLabel]),
  );
}

// ---------------------------------------------------------------------------------------------
// Exclusion settings

export const exclusionBuffersSchema = z
  .object(
    Object.fromEntries(
      EXCLUSION_FEATURE_KINDS.map((k) => [
        k,
        z
          .number({ error: `${k} must be a number of metres.` })
          .refine((v) => Number.isFinite(v), `${k} must be a finite number of metres.`)
          .refine((v) => v >= 0 && v <= MAX_EXCLUSION_BUFFER_M, `The ${EXCLUSION_KIND_LABELS[k].toLowerCase()} buffer must lie between 0 and ${MAX_EXCLUSION_BUFFER_M} m.`)
          .optional(),
      ]),
    ) as Record<(typeof EXCLUSION_FEATURE_KINDS)[number], z.ZodOptional<z.ZodNumber>>,
  )
  .strict()
  .refine((o) => Object.keys(o).length > 0, `Give at least one buffer: ${EXCLUSION_FEATURE_KINDS.join(", ")} (m).`);

/** The project's exclusion buffers (defaults for kinds never set) and who set them. */
export async function getExclusionSettings(projectId: number) {
  const [row] = await db().select().from(exclusionSettings).where(eq(exclusionSettings.projectId, projectId));
  const buffersM: ExclusionBuffers = { ...DEFAULT_EXCLUSION_BUFFERS_M };
  for (const k of EXCLUSION_FEATURE_KINDS) {
    const v = row?.buffersM?.[k];
    if (typeof v === "number" && Number.isFinite(v)) buffersM[k] = v;
  }
  return {
    buffersM,
    defaultsM: DEFAULT_EXCLUSION_BUFFERS_M,
    labels: EXCLUSION_KIND_LABELS,
    maxM: MAX_EXCLUSION_BUFFER_M,
    updatedBy: row?.updatedBy ?? null,
    updatedAt: row?.updatedAt?.toISOString() ?? null,
    source: "Practice (check-values.md): exclusion zones commonly take a 50 m buffer, often 100 m or more around wrecks; the regulator sets the figure.",
  };
}

/** Sets some or all buffers (validated by {@link exclusionBuffersSchema}), audit-logged in the same transaction. */
export async function setExclusionSettings(projectId: number, userId: number, body: z.infer<typeof exclusionBuffersSchema>, meta: { clientAddress?: string } = {}) {
  const before = (await getExclusionSettings(projectId)).buffersM;
  const after: ExclusionBuffers = { ...before };
  for (const k of EXCLUSION_FEATURE_KINDS) if (body[k] !== undefined) after[k] = body[k]!;
  await db().transaction(async (tx) => {
    await tx
      .insert(exclusionSettings)
      .values({ projectId, buffersM: after, updatedBy: userId, updatedAt: new Date() })
      .onConflictDoUpdate({ target: exclusionSettings.projectId, set: { buffersM: after, updatedBy: userId, updatedAt: new Date() } });
    await recordAudit(tx, { actorUserId: userId, projectId, action: "exclusions.buffers_set", detail: { before, after }, clientAddress: meta.clientAddress });
  });
  return getExclusionSettings(projectId);
}

// ---------------------------------------------------------------------------------------------
// Zones

export interface ZoneFeature {
  type: "Feature";
  /** project CRS */
  geometry: AreaOut;
  properties: Record<string, unknown>;
}

const positionUncertainty = (attrs: unknown): number => {
  const a = (attrs ?? {}) as Record<string, unknown>;
  for (const key of ["position_uncertainty_m", "positionUncertaintyM", "uncertainty_m", "precision_m", "precisionM"]) {
    const v = Number(a[key]);
    if (Number.isFinite(v) && v >= 0) return v;
  }
  return 0;
};

/**
 * Exclusion zones (design §7): wrecks and anomalies from the exclusions datasets, anomalies judged
 * archaeological from the interpretations, and find spots (known sites) — each grown by its position
 * uncertainty plus the buffer for its kind (the reviewer's, or `buffers` when given). Find spots
 * follow design §9: exact records for callers who may see them; for everyone else one zone per
 * generalised cell shown (the cell square grown by the buffer), suppressed cells left out.
 * Features in the project CRS; see {@link zonesToWgs84}.
 */
export async function exclusionZones(projectId: number, opts: { viewer?: Viewer | null; buffers?: ExclusionBuffers } = {}) {
  const project = await projectRow(projectId);
  const settings = await getExclusionSettings(projectId);
  const buffers = opts.buffers ?? settings.buffersM;
  const discrete: DiscreteFeature[] = [];
  for (const { dataset, feature, index } of await featuresOf(projectId, ["exclusions", "interpretations"])) {
    const p = feature.properties;
    const kind = dataset.kind === "exclusions" ? (p.kind === "wreck" ? "wreck" : p.kind === "anomaly" ? "anomaly" : null) : p.kind === "anomaly_archaeological" ? "anomaly" : null;
    if (!kind) continue;
    discrete.push({
      kind,
      source: dataset.name,
      label: String(p.name ?? (kind === "wreck" ? `wreck ${index + 1}` : `anomaly ${index + 1}`)),
      geometry: feature.geometry!,
      positionUncertaintyM: positionUncertainty(p.attributes),
      dataBufferM: dataset.kind === "exclusions" ? numberOr(p.bufferM, 0) : null,
    });
  }
  const view = await sitesFor(project, opts.viewer ?? { userId: 0, role: "viewer" });
  const exactViewer = !!opts.viewer && can(opts.viewer.role, "sites.readExact");
  for (const s of view.exact) discrete.push({ kind: "find_spot", source: "known sites", label: s.label, geometry: { type: "Point", coordinates: [s.x, s.y] }, positionUncertaintyM: s.precisionM ?? 0 });
  const half = view.generalised.cellSizeM / 2;
  for (const c of view.generalised.cells) {
    const sq = [[c.x - half, c.y - half], [c.x + half, c.y - half], [c.x + half, c.y + half], [c.x - half, c.y + half], [c.x - half, c.y - half]];
    discrete.push({ kind: "find_spot", source: `known sites, generalised to ${view.generalised.cellSizeM} m cells`, label: `${c.count} sites in this cell`, geometry: { type: "Polygon", coordinates: [sq] }, positionUncertaintyM: 0 });
  }
  const features: ZoneFeature[] = [];
  const notes: string[] = [];
  for (const d of discrete) {
    try {
      const z = exclusionZone(d, buffers);
      features.push({
        type: "Feature",
        geometry: z.geometry,
        properties: {
          zone: "exclusion",
          featureKind: d.kind,
          featureKindLabel: EXCLUSION_KIND_LABELS[d.kind],
          label: d.label,
          source: d.source,
          positionUncertaintyM: z.feature.positionUncertaintyM,
          reviewerBufferM: z.reviewerBufferM,
          bufferM: z.bufferM,
          distanceM: z.distanceM,
          areaKm2: areaM2(z.geometry) / 1e6,
        },
      });
    } catch (e) {
      if (e instanceof ScoringInputError) notes.push(`${d.label} (${d.source}): ${e.message}`);
      else throw e;
    }
  }
  if (!exactViewer && view.generalised.suppressed > 0) notes.push(`${view.generalised.suppressed} known sites lie in generalised cells holding fewer than ${project.siteMinCount}: their zones are not shown to you (design §9).`);
  return { buffersM: buffers, settings, sitesRule: exactViewer ? "exact" : "generalised", exactFindSpots: view.exact.length, features, notes };
}

/** Zones around exact find spots reveal the sites' positions: each response that carries them is logged like a site export. */
export async function logExactZoneExport(projectId: number, userId: number, findSpots: number, meta: { clientAddress?: string } = {}) {
  await recordAudit(db(), { actorUserId: userId, projectId, action: "sites.zones_exported", detail: { findSpots }, clientAddress: meta.clientAddress });
}

/**
 * Mitigation zones from the classes of the desk's scoring: one MultiPolygon per grade of mitigation
 * plus a targeted-survey zone where the horizon is unassessed (app/scoring/zones.ts). Never
 * exclusion. Features in the project CRS; see {@link zonesToWgs84}.
 */
export async function mitigationZones(projectId: number, opts: DeskOptions = {}) {
  const project = await projectRow(projectId);
  const classification = classificationOf(project.classification);
  const inp = await inputsFor(projectId, opts.scoringId);
  const zones = zonesFromClasses(classifyRaster(classification, inp.potential), inp.unassessedScore, classification, inp.grid);
  const features: ZoneFeature[] = zones.map((z) => ({
    type: "Feature",
    geometry: { type: "MultiPolygon", coordinates: z.coordinates },
    properties: { zone: "mitigation", measure: z.measure, label: z.label, text: z.text, basis: z.basis, classes: z.classes, cells: z.cells, areaKm2: z.areaKm2 },
  }));
  return {
    scoring: scoringSummary(inp, classification),
    features,
    notes: ["Modelled potential leads to graded mitigation, not exclusion (practice). Ground that was sea or lake at the scored age has no class and no zone here; it may have been land at other ages."],
    caution: REGULATOR_CAUTION,
  };
}

/** Zone features as an RFC 7946 FeatureCollection in WGS 84 (lon/lat, exteriors counter-clockwise). */
export function zonesToWgs84(features: ZoneFeature[], epsg: number) {
  const from = resolveCrs(epsg).proj4;
  const conv = proj4(from, "WGS84");
  const ring = (r: Position[]) => r.map((p) => conv.forward([p[0], p[1]]).map((v) => Math.round(v * 1e8) / 1e8));
  return {
    type: "FeatureCollection" as const,
    features: features.map((f) => ({
      type: "Feature" as const,
      geometry: f.geometry.type === "Polygon" ? { type: "Polygon" as const, coordinates: f.geometry.coordinates.map(ring) } : { type: "MultiPolygon" as const, coordinates: f.geometry.coordinates.map((p) => p.map(ring)) },
      properties: f.properties,
    })),
  };
}

/** The documentation of zone properties the API returns beside the features. */
export const ZONE_PROPERTIES_DOC = {
  exclusion: {
    zone: '"exclusion"',
    featureKind: `one of ${EXCLUSION_FEATURE_KINDS.join(", ")}`,
    label: "the feature's name or id (a generalised cell says how many sites it holds)",
    source: "the dataset it came from",
    positionUncertaintyM: "position uncertainty added (m): a site's precision, a feature's stated uncertainty, else 0",
    reviewerBufferM: "the reviewer's buffer for the kind (m)",
    bufferM: "the buffer used (m): the reviewer's, or the data's own when wider",
    distanceM: "total distance from the mapped extent (m) = positionUncertaintyM + bufferM",
    areaKm2: "area of the zone (km², planar in the project CRS)",
  },
  mitigation: {
    zone: '"mitigation"',
    measure: MITIGATION_MEASURES.map((m) => m.id).join(", "),
    label: "the measure in words",
    text: "what the measure asks for",
    basis: "the potential classes it covers, or that the horizon is unassessed",
    classes: "class labels covered",
    cells: "grid cells in the zone",
    areaKm2: "area of the zone (km²)",
  },
} as const;

// ---------------------------------------------------------------------------------------------
// A small map for the desk (and the report): potential classes, blocks, asset footprints, exclusion zones

/** viridis at 9 stops (van der Walt & Smith, matplotlib 2015; CC0), as app/raster-display.ts draws potential. */
const VIRIDIS_STOPS = [[68, 1, 84], [71, 44, 122], [59, 81, 139], [44, 113, 142], [33, 144, 141], [39, 173, 129], [92, 200, 99], [170, 220, 50], [253, 231, 37]];
function viridisAt(t: number): [number, number, number] {
  const x = Math.min(1, Math.max(0, t)) * (VIRIDIS_STOPS.length - 1);
  const i = Math.min(VIRIDIS_STOPS.length - 2, Math.floor(x));
  const f = x - i;
  const a = VIRIDIS_STOPS[i], b = VIRIDIS_STOPS[i + 1];
  return [0, 1, 2].map((k) => Math.round(a[k] + (b[k] - a[k]) * f)) as [number, number, number];
}

/** The colours of the desk map's legend: each class (highest first), unassessed, not scored, and the overlays. */
export function deskMapLegend(classification: ProjectClassification) {
  const k = classification.labels.length;
  return {
    classes: classification.labels.map((label, c) => ({ label, rgb: viridisAt(k > 1 ? 1 - c / (k - 1) : 1) })),
    unassessed: { label: "unassessed (hatched grey)", rgb: [150, 150, 150] as [number, number, number] },
    notScored: { label: "not scored at this age (sea or lake)", rgb: [38, 52, 68] as [number, number, number] },
    blocks: { label: "lease block (white outline)", rgb: [255, 255, 255] as [number, number, number] },
    assets: { label: "development asset and its buffer (orange)", rgb: [236, 120, 36] as [number, number, number] },
    exclusions: { label: "exclusion zone (red outline)", rgb: [214, 40, 30] as [number, number, number] },
  };
}

/**
 * The desk's map as a PNG (at most 640 px on its longer side): the scoring's classes in viridis
 * (highest brightest), unassessed cells hatched grey, unscored cells dark; lease blocks outlined in
 * white, asset footprints filled orange, exclusion zones outlined red (find spots as the viewer may
 * see them). The same colours as {@link deskMapLegend}; meaning never rests on colour alone (the
 * tables beside it carry every figure).
 */
export async function deskMapPng(projectId: number, opts: DeskOptions = {}) {
  const { encodePng } = await import("./png.server");
  const project = await projectRow(projectId);
  const classification = classificationOf(project.classification);
  const inp = await inputsFor(projectId, opts.scoringId);
  const legend = deskMapLegend(classification);
  const g = inp.grid;
  const step = Math.max(1, Math.ceil(Math.max(g.width, g.height) / 640));
  const W = Math.ceil(g.width / step);
  const H = Math.ceil(g.height / step);
  const rgba = new Uint8Array(W * H * 4);
  const classes = classifyRaster(classification, inp.potential);
  const put = (px: number, py: number, rgb: readonly number[]) => {
    if (px < 0 || py < 0 || px >= W || py >= H) return;
    const o = (py * W + px) * 4;
    rgba[o] = rgb[0];
    rgba[o + 1] = rgb[1];
    rgba[o + 2] = rgb[2];
    rgba[o + 3] = 255;
  };
  for (let py = 0; py < H; py++)
    for (let px = 0; px < W; px++) {
      const i = Math.min(g.height - 1, py * step) * g.width + Math.min(g.width - 1, px * step);
      if (inp.unassessedScore && inp.unassessedScore[i] === 1) put(px, py, (px + py) % 4 < 2 ? legend.unassessed.rgb : [110, 110, 110]);
      else if (classes[i] !== 255) put(px, py, legend.classes[classes[i]].rgb);
      else put(px, py, legend.notScored.rgb);
    }
  // overlays in pixel coordinates
  const toPx = (p: Position): [number, number] => [(p[0] - g.originX) / g.cellSizeX / step, (g.originY - p[1]) / g.cellSizeY / step];
  const line = (a: Position, b: Position, rgb: readonly number[]) => {
    const [x0, y0] = toPx(a);
    const [x1, y1] = toPx(b);
    const n = Math.min(20_000, Math.ceil(Math.hypot(x1 - x0, y1 - y0) * 2) + 1);
    for (let j = 0; j <= n; j++) put(Math.floor(x0 + ((x1 - x0) * j) / n), Math.floor(y0 + ((y1 - y0) * j) / n), rgb);
  };
  const outline = (geom: AreaOut | AreaGeometry, rgb: readonly number[]) => {
    const polys = geom.type === "Polygon" ? [geom.coordinates] : geom.coordinates;
    for (const rings of polys) for (const ring of rings) for (let k = 0; k + 1 < ring.length; k++) line(ring[k] as Position, ring[k + 1] as Position, rgb);
  };
  for (const { feature } of await featuresOf(projectId, ["development_footprint"])) {
    try {
      const mask = footprintMask(feature.geometry!, Math.max(0, numberOr(feature.properties.bufferM, 0)), g);
      for (let i = 0; i < mask.length; i++) if (mask[i]) put(Math.floor((i % g.width) / step), Math.floor(Math.floor(i / g.width) / step), legend.assets.rgb);
    } catch (e) {
      if (!(e instanceof ScoringInputError)) throw e;
    }
  }
  for (const { feature } of await featuresOf(projectId, ["lease_blocks"])) {
    const t = feature.geometry!.type;
    if (t === "Polygon" || t === "MultiPolygon") outline(feature.geometry as AreaGeometry, legend.blocks.rgb);
  }
  for (const z of (await exclusionZones(projectId, { viewer: opts.viewer })).features) outline(z.geometry, legend.exclusions.rgb);
  return { png: encodePng(W, H, rgba), width: W, height: H, scoringId: inp.scoring.id, legend };
}
