// The scoring job (design §4): a weight-set version applied to a published reconstruction at full
// resolution, for one age or one period. It reads the reconstruction's layers the version needs
// (docs/layers.md names), the project's horizon evidence (cores and interpretations), runs the
// same app/scoring/ pipeline as the browser worker, writes potential, occupation and (when active)
// preservation and its unassessed mask as GeoTIFFs under this attempt's own prefix, computes the
// statistics, and publishes — only if this attempt still owns the run (decision 009's guard).
//
// It also scores the display path — every input quantised to 8 bits exactly as the layer API's
// `?display=8` sends it to the browser, scored from the codes — and stores that result's checksum
// with the inputs it used, so the browser worker's output can be checked equal to the server's.
import { createHash } from "node:crypto";
import { and, eq, inArray } from "drizzle-orm";
import { db } from "../app/db.server";
import { datasets, projects, scorings } from "../app/db/schema";
import { getJson, store } from "../app/storage.server";
import { displayCopy } from "../app/raster-display";
import { displayGridFor } from "../app/display.server";
import { writeGeoTiff } from "../app/terrain/geotiff-write";
import { nodeDeflate } from "../app/terrain/geotiff-deflate-node";
import { resolveCrs } from "../app/terrain/crs";
import type { GridSpec } from "../app/terrain/grid";
import type { Manifest } from "../app/terrain/reconstruct";
import { factorDef } from "../app/scoring/factors";
import { ScoringInputError } from "../app/scoring/errors";
import type { WeightSetContent } from "../app/scoring/weight-set";
import { potentialChecksum, type GridShape, type ScoreResult } from "../app/scoring/potential";
import {
  geometryVertices,
  horizonEvidencePoints,
  scoreTarget,
  scoredAges,
  targetAges,
  type CoreEvidence,
  type InterpretationEvidence,
  type LayerSource,
  type ScoreTarget,
  type TargetScore,
} from "../app/scoring/scoring-inputs";
import {
  EVIDENCE_DATASET_KINDS,
  markScoringEnded,
  publishScoring,
  scoringAttemptPrefix,
  scoringFileName,
  targetLabel,
  type ScoringTarget,
} from "../app/scorings.server";
import { defineJob, JobUserError, markRowEnded } from "./wrapper";
import { layerId, loadReconstructionLayers, publishedReconstructionAndVersion, wantLayer, type WantedLayer } from "./reconstruction-layers";

export interface ScoringPayload {
  scoringId: number;
}

/** Provisional classes of the potential (design: the project's own classification comes later). */
export const PROVISIONAL_CLASSES = [
  { name: "low", from: 0, to: 0.25 },
  { name: "medium", from: 0.25, to: 0.5 },
  { name: "high", from: 0.5, to: 0.75 },
  { name: "very high", from: 0.75, to: 1 },
] as const;

export const HISTOGRAM_BINS = 20;

/** The age-independent layers the preservation model reads (docs/layers.md); land_class at every age besides. */
const PRESERVATION_LAYERS = ["tpi", "rise_rate_at_flooding", "flooding_age", "flooding_status", "unassessed"];

const CAUTION =
  "A planning aid, not evidence: a low score is not evidence of absence, and unassessed ground is unknown, not low. " +
  "Fieldwork follows local heritage law and licensed archaeological practice.";

function sha256(bytes: Uint8Array | Uint16Array | Float32Array): string {
  return createHash("sha256").update(new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength)).digest("hex");
}

/** Horizon evidence points from the project's cores and interpretations (app/evidence/README.md shapes). */
async function evidenceFromDatasets(projectId: number) {
  const rows = await db()
    .select({ id: datasets.id, kind: datasets.kind, key: datasets.derivedKey, name: datasets.name })
    .from(datasets)
    .where(and(eq(datasets.projectId, projectId), inArray(datasets.kind, [...EVIDENCE_DATASET_KINDS])))
    .orderBy(datasets.id);
  const cores: CoreEvidence[] = [];
  const interpretations: InterpretationEvidence[] = [];
  for (const d of rows) {
    if (d.kind === "cores") {
      const { rows: rs } = await getJson<{ rows: CoreEvidence[] }>(d.key);
      cores.push(...rs);
    } else {
      const fc = await getJson<{ features: Array<{ geometry: Parameters<typeof geometryVertices>[0]; properties: { kind?: string } }> }>(d.key);
      for (const f of fc.features) interpretations.push({ kind: String(f.properties.kind ?? ""), coordinates: geometryVertices(f.geometry) });
    }
  }
  const points = horizonEvidencePoints(cores, interpretations);
  return { points, datasets: rows.map((r) => ({ id: r.id, kind: r.kind, name: r.name })) };
}

interface Stats {
  occupiable: { cells: number; areaKm2: number };
  unassessed: { cells: number; areaKm2: number };
  potential: { cells: number; min: number | null; max: number | null; mean: number | null; median: number | null };
  histogram: { from: number; to: number; bins: number; counts: number[] };
  provisionalClassification: {
    note: string;
    classes: { name: string; from: number; to: number; cells: number; areaKm2: number; share: number }[];
    unassessed: { cells: number; areaKm2: number; share: number };
    /** occupiable cells that are neither classed nor unassessed (no preservation score, e.g. nodata in an input); normally 0 */
    unscored: { cells: number; areaKm2: number; share: number };
  };
}

/**
 * Statistics of a score over its occupiable cells (finite occupation): potential summary, a
 * histogram over 0–1 and the provisional classes (lower bound inclusive; 1 falls in the top class),
 * unassessed cells counted apart. O(n) plus a sort of the finite potentials for the median.
 */
export function scoringStatistics(score: ScoreResult, cellAreaKm2: number): Stats {
  const n = score.potential.length;
  let occupiable = 0;
  let unassessed = 0;
  let count = 0;
  let sum = 0;
  let min = Infinity;
  let max = -Infinity;
  const hist = new Array<number>(HISTOGRAM_BINS).fill(0);
  const classCells = new Array<number>(PROVISIONAL_CLASSES.length).fill(0);
  const finite = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const o = score.occupation[i];
    if (o === o) occupiable++;
    if (score.unassessed[i] === 1) unassessed++;
    const p = score.potential[i];
    if (p !== p) continue;
    finite[count++] = p;
    sum += p;
    if (p < min) min = p;
    if (p > max) max = p;
    hist[Math.min(HISTOGRAM_BINS - 1, Math.max(0, Math.floor(p * HISTOGRAM_BINS)))]++;
    classCells[p < 0.25 ? 0 : p < 0.5 ? 1 : p < 0.75 ? 2 : 3]++;
  }
  let median: number | null = null;
  if (count > 0) {
    const sorted = finite.subarray(0, count).sort();
    median = count % 2 ? sorted[(count - 1) / 2] : (sorted[count / 2 - 1] + sorted[count / 2]) / 2;
  }
  const unscored = Math.max(0, occupiable - count - unassessed);
  const area = (cells: number) => cells * cellAreaKm2;
  const share = (cells: number) => (occupiable > 0 ? cells / occupiable : 0);
  return {
    occupiable: { cells: occupiable, areaKm2: area(occupiable) },
    unassessed: { cells: unassessed, areaKm2: area(unassessed) },
    potential: { cells: count, min: count ? min : null, max: count ? max : null, mean: count ? sum / count : null, median },
    histogram: { from: 0, to: 1, bins: HISTOGRAM_BINS, counts: hist },
    provisionalClassification: {
      note: "Provisional classification (fixed breaks at 0.25, 0.5 and 0.75); the project's own classification comes later. Shares are of the occupiable area; unassessed ground is its own class, never low.",
      classes: PROVISIONAL_CLASSES.map((c, k) => ({ name: c.name, from: c.from, to: c.to, cells: classCells[k], areaKm2: area(classCells[k]), share: share(classCells[k]) })),
      unassessed: { cells: unassessed, areaKm2: area(unassessed), share: share(unassessed) },
      unscored: { cells: unscored, areaKm2: area(unscored), share: share(unscored) },
    },
  };
}

export const scoringJob = defineJob<ScoringPayload>("scoring", async (ctx) => {
  const [s] = await db().select().from(scorings).where(eq(scorings.id, ctx.payload.scoringId));
  if (!s) throw new JobUserError("The scoring was deleted before it could run.");
  const prefix = scoringAttemptPrefix(s.projectId, s.id, ctx.runId, ctx.attempt);
  const written: string[] = [];
  try {
    ctx.progress(0.01, "loading inputs");
    const { rec, manifest, v, content } = await publishedReconstructionAndVersion(s.reconstructionId, s.weightSetVersionId, {
      notPublished: "The reconstruction is no longer published; it cannot be scored.",
      versionGone: "The weight-set version was deleted before the scoring could run.",
    });
    const target = s.target as unknown as ScoringTarget;
    const [project] = await db().select({ crsEpsg: projects.crsEpsg }).from(projects).where(eq(projects.id, s.projectId));

    const g = manifest.grid;
    const grid: GridShape = { width: g.width, height: g.height, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY };
    const n = g.width * g.height;
    const epsg = g.epsg ?? project?.crsEpsg ?? null;
    const spec: GridSpec = { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, crs: epsg ? { epsg, proj4: resolveCrs(epsg).proj4 } : null };

    // The layers the pipeline will ask for (scoring-inputs.ts buildScoringInputs): land_class at
    // each needed age, each weighed factor's layer at each scored age (per age or static; shelter
    // is derived), and — with preservation on — tpi, rise_rate_at_flooding, flooding_age,
    // flooding_status, unassessed and land_class at every age. Each is read once, in full.
    const scoreTargetOf: ScoreTarget = target.kind === "age" ? { kind: "age", ageKa: target.ageKa } : { kind: "period", period: { name: target.name, youngKa: target.youngKa, oldKa: target.oldKa, rule: target.rule } };
    let needAges: number[];
    let scored: number[];
    try {
      needAges = targetAges(scoreTargetOf, manifest.agesKa);
      scored = scoredAges(scoreTargetOf, manifest.agesKa);
    } catch (e) {
      if (e instanceof ScoringInputError) throw new JobUserError(e.message);
      throw e;
    }
    const wanted: WantedLayer[] = [];
    const want = (name: string, ageKa: number | null) => wantLayer(wanted, name, ageKa);
    for (const a of needAges) want("land_class", a);
    // Factor layers only at the ages the target scores (a period's ages of positive weight).
    for (const a of scored) {
      for (const f of content.factors) {
        const def = factorDef(f.factor);
        if (!(f.weight > 0) || !def || f.factor === "shelter") continue;
        want(def.layer, def.perAge ? a : null);
      }
    }
    if (content.preservation.enabled) {
      for (const name of PRESERVATION_LAYERS) want(name, null);
      for (const a of manifest.agesKa) want("land_class", a);
    }

    const loaded = await loadReconstructionLayers(ctx, rec, manifest, wanted, { from: 0.02, to: 0.47, what: "score it" });
    const idOf = layerId;

    ctx.progress(0.48, "reading horizon evidence");
    const evidence = content.preservation.enabled ? await evidenceFromDatasets(s.projectId) : { points: [], datasets: [] };
    ctx.throwIfCancelled();

    // The display copies: each layer quantised to 8 bits, as the layer API's ?display=8 sends it.
    const quantised = new Map<string, ReturnType<typeof displayCopy>>();
    // … on the display grid the map and the browser's live scoring use (app/display.server.ts)
    const dgrid = displayGridFor(g);
    const source = (path: "values" | "codes"): LayerSource => (name, ageKa) => {
      const id = idOf(name, ageKa);
      const l = loaded.get(id);
      if (!l) {
        // The pipeline looks for the preservation inputs even when preservation is off (and then
        // ignores them); anything else it asks for must have been read, or a factor would silently
        // be scored as absent.
        const ignorable = !content.preservation.enabled && PRESERVATION_LAYERS.includes(name) && ageKa === null;
        if (!ignorable && !wanted.some((w) => w.name === name && w.ageKa === ageKa)) throw new Error(`the scoring pipeline asked for ${id}, which the job did not read`);
        return undefined;
      }
      if (path === "values") return { kind: "values", values: l.values };
      let q = quantised.get(id);
      if (!q) quantised.set(id, (q = displayCopy(l.values, g.width, g.height, dgrid.step, name, 8)));
      return { kind: "codes", codes: q.data, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode };
    };
    const gridAt = { ...grid, originX: g.originX, originY: g.originY };

    let full: TargetScore;
    let display: TargetScore;
    try {
      ctx.progress(0.5, "scoring at full resolution");
      full = scoreTarget(content, gridAt, manifest.agesKa, scoreTargetOf, source("values"), evidence.points);
      ctx.throwIfCancelled();
      ctx.progress(0.65, "scoring the display copy");
      display = scoreTarget(content, { width: dgrid.width, height: dgrid.height, cellSizeX: dgrid.cellSizeX, cellSizeY: dgrid.cellSizeY, originX: dgrid.originX, originY: dgrid.originY }, manifest.agesKa, scoreTargetOf, source("codes"), evidence.points);
      ctx.throwIfCancelled();
    } catch (e) {
      if (e instanceof ScoringInputError) throw new JobUserError(e.message);
      throw e;
    }

    ctx.progress(0.8, "writing GeoTIFFs");
    const nodataMask = (a: Float32Array) => {
      const m = new Uint8Array(n);
      for (let i = 0; i < n; i++) if (a[i] !== a[i]) m[i] = 1;
      return m;
    };
    // Outside the analysis surface (land_class nodata at the first scored age) the mask is nodata.
    const surfaceNodata = new Uint8Array(n);
    const lc0 = loaded.get(idOf("land_class", needAges[0]))!.values;
    for (let i = 0; i < n; i++) if (lc0[i] !== lc0[i]) surfaceNodata[i] = 1;
    const rasters: { name: "potential" | "occupation" | "preservation" | "unassessed"; data: Float32Array | Uint8Array; nodata: Uint8Array; type: "float32" | "uint8" }[] = [
      { name: "potential", data: full.potential, nodata: nodataMask(full.potential), type: "float32" },
      { name: "occupation", data: full.occupation, nodata: nodataMask(full.occupation), type: "float32" },
    ];
    if (full.preservation.active && full.preservation.score) {
      rasters.push({ name: "preservation", data: full.preservation.score, nodata: nodataMask(full.preservation.score), type: "float32" });
      rasters.push({ name: "unassessed", data: full.unassessed, nodata: surfaceNodata, type: "uint8" });
    }
    const files: { name: string; file: string; type: string; bytes: number; sha256: string }[] = [];
    for (const r of rasters) {
      ctx.throwIfCancelled();
      const bytes = writeGeoTiff({ spec, data: r.data, nodata: r.nodata }, { deflate: nodeDeflate, layout: "tiles", citation: `Lowstand scoring ${s.id}: ${r.name}, ${targetLabel(target)}` });
      const file = scoringFileName(r.name);
      const key = `${prefix}/${file}`;
      await store().put(key, bytes, "image/tiff");
      written.push(key);
      files.push({ name: r.name, file, type: r.type, bytes: bytes.byteLength, sha256: createHash("sha256").update(bytes).digest("hex") });
    }

    ctx.progress(0.92, "statistics");
    const cellAreaKm2 = (g.cellSizeX * g.cellSizeY) / 1e6;
    const stats = scoringStatistics(full, cellAreaKm2);
    const displayInputs = [...quantised.entries()].map(([id, q]) => {
      const l = loaded.get(id)!;
      return { layer: l.name, ageKa: l.ageKa, bits: 8, scale: q.scale, offset: q.offset, nodataCode: q.nodataCode, sha256: sha256(q.data) };
    });
    const result = {
      target,
      targetLabel: targetLabel(target),
      weightSet: { id: v.version.weightSetId, name: v.setName, versionId: v.version.id, version: v.version.version, contentHash: v.version.contentHash },
      reconstruction: { id: rec.id, name: rec.name, inputsHash: rec.inputsHash, engineVersion: rec.engineVersion },
      grid: { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, epsg, cellAreaKm2 },
      ...stats,
      ageWeights: full.ageWeights,
      notes: full.notes,
      preservation: {
        active: full.preservation.active,
        reason: full.preservation.reason,
        evidence: content.preservation.enabled ? { points: evidence.points.length, intact: evidence.points.filter((p) => p.state === "intact").length, truncated: evidence.points.filter((p) => p.state === "truncated").length, datasets: evidence.datasets } : null,
      },
      factors: content.factors.filter((f) => f.weight > 0).map((f) => ({ factor: f.factor, weight: f.weight, layer: factorDef(f.factor)!.layer, present: f.factor === "shelter" || scored.some((a) => loaded.has(idOf(factorDef(f.factor)!.layer, factorDef(f.factor)!.perAge ? a : null))) })),
      files,
      displayChecksum: {
        checksum: potentialChecksum(display.potential),
        bits: 8,
        grid: { width: dgrid.width, height: dgrid.height, step: dgrid.step },
        note: "Every input reduced to the display grid and quantised to 8 bits as the layer API's ?display=8 sends it (class layers decoded as round(code × scale + offset), the nodata code → 255), scored from the codes.",
        inputs: displayInputs,
        evidence: { points: evidence.points.length, sha256: createHash("sha256").update(JSON.stringify(evidence.points)).digest("hex") },
      },
      caution: CAUTION,
    };

    ctx.progress(0.98, "publishing");
    const published = await publishScoring(s.id, ctx.runId, ctx.attempt, prefix, result as unknown as Record<string, unknown>);
    if (!published) throw new Error("another attempt took this scoring over; this attempt's files are discarded");
    written.length = 0;
    return { scoringId: s.id, files: files.length };
  } catch (err) {
    await markRowEnded(ctx, err, (status, message) => markScoringEnded(s.id, ctx.runId, status, message));
    throw err;
  } finally {
    await Promise.all(written.map((k) => store().delete(k).catch(() => undefined)));
  }
});
