// The uncertainty job (design §7, issue 12; decision 403): Monte Carlo over a weight-set version's
// weights and the landscape's own parameters on one age or period of a published reconstruction,
// seeded from the run's params. Reads the layers the scoring reads plus spill elevation, cover
// thickness, contributing area and the analysis surface; runs app/scoring/uncertainty-run.ts with
// the cells × draws loop split across worker threads (jobs/uncertainty-pool.ts); writes P(high), mean
// and spread — and with landscape draws the share of draws at sea and the flooding-age envelope — as
// GeoTIFFs under this attempt's prefix; per lease block the robust shares; publishes only if this
// attempt still owns the run (decision 009's guard).
import { createHash } from "node:crypto";
import { and, eq, inArray } from "drizzle-orm";
import { db } from "../app/db.server";
import { datasets, projects, seaLevelCurves, uncertaintyRuns } from "../app/db/schema";
import { getJson, ObjectNotFound, store } from "../app/storage.server";
import { layerKey } from "../app/reconstructions.server";
import { layerGrid } from "../app/layers.server";
import { writeGeoTiff } from "../app/terrain/geotiff-write";
import { nodeDeflate } from "../app/terrain/geotiff-deflate-node";
import { resolveCrs } from "../app/terrain/crs";
import type { GridSpec } from "../app/terrain/grid";
import type { Manifest } from "../app/terrain/reconstruct";
import { defaultGlobalCurve, sigmaAt, type SeaLevelCurve } from "../app/terrain/sea-level";
import { floodingHistory } from "../app/terrain/flooding-age";
import { curveFromRow } from "../app/sea-level-curves.server";
import { factorDef } from "../app/scoring/factors";
import { ScoringInputError } from "../app/scoring/errors";
import { blockShares } from "../app/scoring/monte-carlo";
import { rasterisePolygon, type AreaGeometry } from "../app/scoring/block-figures";
import { runUncertainty, type LandscapeContext } from "../app/scoring/uncertainty-run";
import { geometryVertices, horizonEvidencePoints, scoredAges, targetAges, type CoreEvidence, type InterpretationEvidence, type LayerSource, type ScoreTarget } from "../app/scoring/scoring-inputs";
import type { WeightSetContent } from "../app/scoring/weight-set";
import { EVIDENCE_DATASET_KINDS, targetLabel, type ScoringTarget } from "../app/scorings.server";
import { markUncertaintyEnded, publishUncertainty, uncertaintyAttemptPrefix, type UncertaintyParams } from "../app/uncertainty.server";
import { publishedReconstructionAndVersion } from "./reconstruction-layers";
import { defineJob, JobUserError, markRowEnded } from "./wrapper";
import { createDrawPool } from "./uncertainty-pool";

export interface UncertaintyPayload {
  uncertaintyRunId: number;
}

const PRESERVATION_LAYERS = ["tpi", "rise_rate_at_flooding", "flooding_age", "flooding_status", "unassessed"];

const CAUTION =
  "A planning aid, not evidence: these probabilities describe how the modelled potential moves when the weights and the landscape's parameters move within the ranges set here — not the chance that a site exists. " +
  "A robustly low cell is not evidence of absence, and unassessed ground is unknown, not low.";

async function evidencePoints(projectId: number) {
  const rows = await db().select({ kind: datasets.kind, key: datasets.derivedKey }).from(datasets).where(and(eq(datasets.projectId, projectId), inArray(datasets.kind, [...EVIDENCE_DATASET_KINDS]))).orderBy(datasets.id);
  const cores: CoreEvidence[] = [];
  const interps: InterpretationEvidence[] = [];
  for (const d of rows) {
    if (d.kind === "cores") cores.push(...(await getJson<{ rows: CoreEvidence[] }>(d.key)).rows);
    else for (const f of (await getJson<{ features: Array<{ geometry: Parameters<typeof geometryVertices>[0]; properties?: { kind?: string }; kind?: string }> }>(d.key)).features) interps.push({ kind: String(f.properties?.kind ?? f.kind ?? ""), coordinates: geometryVertices(f.geometry) });
  }
  return horizonEvidencePoints(cores, interps);
}

/** The project's lease blocks as a block-id raster (1 … B; 0 outside every block; a later block wins an overlap). */
async function leaseBlocks(projectId: number, grid: { width: number; height: number; originX: number; originY: number; cellSizeX: number; cellSizeY: number }) {
  const rows = await db().select({ id: datasets.id, name: datasets.name, key: datasets.derivedKey }).from(datasets).where(and(eq(datasets.projectId, projectId), eq(datasets.kind, "lease_blocks"))).orderBy(datasets.id);
  const ids = new Int32Array(grid.width * grid.height);
  const blocks: { name: string; dataset: string }[] = [];
  const notes: string[] = [];
  const mask = new Uint8Array(grid.width * grid.height);
  for (const d of rows) {
    let fc: { features?: Array<{ name?: string; properties?: { name?: unknown }; geometry?: { type: string } }> };
    try {
      fc = await getJson(d.key);
    } catch (e) {
      if (e instanceof ObjectNotFound) continue;
      throw e;
    }
    for (const [k, f] of (fc.features ?? []).entries()) {
      const g = f.geometry;
      if (!g || (g.type !== "Polygon" && g.type !== "MultiPolygon")) {
        notes.push(`${d.name}: feature ${k + 1} is not a block polygon; left out.`);
        continue;
      }
      mask.fill(0);
      rasterisePolygon(g as AreaGeometry, grid, mask);
      const name = f.name ?? f.properties?.name;
      blocks.push({ name: name ? String(name) : `${d.name} #${k + 1}`, dataset: d.name });
      const b = blocks.length;
      for (let i = 0; i < mask.length; i++) if (mask[i]) ids[i] = b;
    }
  }
  return { ids, blocks, notes };
}

export const uncertaintyJob = defineJob<UncertaintyPayload>("uncertainty", async (ctx) => {
  const [u] = await db().select().from(uncertaintyRuns).where(eq(uncertaintyRuns.id, ctx.payload.uncertaintyRunId));
  if (!u) throw new JobUserError("The uncertainty run was deleted before it could run.");
  const prefix = uncertaintyAttemptPrefix(u.projectId, u.id, ctx.runId, ctx.attempt);
  const written: string[] = [];
  let pool: Awaited<ReturnType<typeof createDrawPool>> | null = null;
  try {
    ctx.progress(0.01, "loading inputs");
    const { rec, manifest, v, content } = await publishedReconstructionAndVersion(u.reconstructionId, u.weightSetVersionId, {
      notPublished: "The reconstruction is no longer published; the uncertainty cannot be run on it.",
      versionGone: "The weight-set version was deleted before the run could start.",
    });
    const params = u.params as unknown as UncertaintyParams;
    const target = u.target as unknown as ScoringTarget;
    const [project] = await db().select({ crsEpsg: projects.crsEpsg }).from(projects).where(eq(projects.id, u.projectId));
    const g = manifest.grid;
    const n = g.width * g.height;
    const epsg = g.epsg ?? project?.crsEpsg ?? null;
    const spec: GridSpec = { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, crs: epsg ? { epsg, proj4: resolveCrs(epsg).proj4 } : null };
    const gridAt = { width: g.width, height: g.height, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, originX: g.originX, originY: g.originY };
    const st: ScoreTarget = target.kind === "age" ? { kind: "age", ageKa: target.ageKa } : { kind: "period", period: { name: target.name, youngKa: target.youngKa, oldKa: target.oldKa, rule: target.rule } };
    let needAges: number[];
    let scored: number[];
    try {
      needAges = targetAges(st, manifest.agesKa);
      scored = scoredAges(st, manifest.agesKa);
    } catch (e) {
      if (e instanceof ScoringInputError) throw new JobUserError(e.message);
      throw e;
    }

    // the layers: as the scoring job, plus what the landscape draws read
    const wanted: { name: string; ageKa: number | null }[] = [];
    const want = (name: string, ageKa: number | null) => {
      if (!wanted.some((w) => w.name === name && w.ageKa === ageKa)) wanted.push({ name, ageKa });
    };
    for (const a of needAges) want("land_class", a);
    for (const a of scored)
      for (const f of content.factors) {
        const def = factorDef(f.factor);
        if (!(f.weight > 0) || !def || f.factor === "shelter") continue;
        want(def.layer, def.perAge ? a : null);
      }
    if (content.preservation.enabled) {
      for (const name of PRESERVATION_LAYERS) want(name, null);
      for (const a of manifest.agesKa) want("land_class", a);
    }
    const ls = params.landscape;
    const landscapeVaries = target.kind === "age" && (ls.sigmaScale > 0 || ls.datumOffsetM > 0 || ls.velocityRel > 0 || ls.streamThresholdFactor > 1 || ls.erosionDepthRel > 0);
    if (landscapeVaries) {
      want("spill_elevation", null);
      want("cover_thickness", null);
      want("analysis_surface", null);
      want("contributing_area", (target as { ageKa: number }).ageKa);
    }
    const loaded = new Map<string, Float32Array>();
    for (const [k, w] of wanted.entries()) {
      ctx.throwIfCancelled();
      const layer = manifest.layers.find((l) => l.name === w.name && (l.ageKa ?? null) === w.ageKa);
      if (!layer) continue;
      let values: Float32Array;
      try {
        values = (await layerGrid(layerKey(rec, w.name, w.ageKa)!, manifest, layer)).data;
      } catch (e) {
        if (e instanceof ObjectNotFound) throw new JobUserError(`The reconstruction's layer ${w.name}${w.ageKa === null ? "" : ` at ${w.ageKa} ka`} is missing from storage; run the reconstruction again.`);
        throw e;
      }
      if (values.length !== n) throw new JobUserError(`The reconstruction's layer ${w.name} does not match its grid.`);
      loaded.set(`${w.name}@${w.ageKa}`, values);
      ctx.progress(0.02 + 0.18 * ((k + 1) / wanted.length), "reading layers");
    }
    const get: LayerSource = (name, ageKa) => {
      const x = loaded.get(`${name}@${ageKa}`);
      return x ? { kind: "values", values: x } : undefined;
    };
    const evidence = content.preservation.enabled ? await evidencePoints(u.projectId) : [];

    // the sea-level curve (for σ at the age and the flooding-age envelope)
    const rp = rec.params as { curveId?: number | null };
    let curve: SeaLevelCurve = defaultGlobalCurve();
    if (rp.curveId) {
      const [c] = await db().select().from(seaLevelCurves).where(eq(seaLevelCurves.id, rp.curveId));
      if (c) curve = curveFromRow(c);
    }
    let landscapeCtx: LandscapeContext | null = null;
    const jobNotes: string[] = [];
    if (target.kind === "age") {
      const ageSummary = manifest.ages.find((a) => a.ageKa === target.ageKa);
      const sigma = sigmaAt(curve, target.ageKa);
      const tidal = typeof manifest.parameters.tidalRangeM === "number" ? manifest.parameters.tidalRangeM : 0;
      if (manifest.parameters.tidalRangeM === "grid") jobNotes.push("The tidal range was a grid: the landscape draws take it as 0 m.");
      landscapeCtx = { seaLevelM: ageSummary?.seaLevelM ?? null, sigmaM: Number.isFinite(sigma) ? sigma : 0, tidalRangeM: tidal, shorelineTidalLevel: manifest.parameters.shorelineTidalLevel, streamThresholdKm2: manifest.parameters.streamThresholdKm2 };
    }

    ctx.progress(0.21, "starting threads");
    pool = await createDrawPool(2);
    const t0 = performance.now();
    let out;
    try {
      out = await runUncertainty(
        content,
        gridAt,
        manifest.agesKa,
        st,
        get,
        evidence,
        landscapeCtx,
        { draws: params.draws, seed: params.seed, perturbation: params.perturbation, landscape: params.landscape, landscapeDraws: params.landscapeDraws, threshold: params.threshold },
        pool.run,
        { progress: (f, s) => ctx.progress(0.22 + 0.6 * f, s), throwIfCancelled: () => ctx.throwIfCancelled() },
      );
    } catch (e) {
      if (e instanceof ScoringInputError) throw new JobUserError(e.message);
      throw e;
    }
    const drawMs = performance.now() - t0;
    await pool.close();
    pool = null;

    // the flooding-age envelope: final drowning under the curve ± (σ scale × σ + datum offset)
    let early: Float32Array | null = null;
    let late: Float32Array | null = null;
    const surface = loaded.get("analysis_surface@null");
    const spill = loaded.get("spill_elevation@null");
    if (landscapeVaries && (ls.sigmaScale > 0 || ls.datumOffsetM > 0) && surface && spill) {
      ctx.progress(0.84, "flooding-age envelope");
      const nodata = new Uint8Array(n);
      for (let i = 0; i < n; i++) if (surface[i] !== surface[i]) nodata[i] = 1;
      const shifted = (sign: number): SeaLevelCurve => ({ ...curve, levelM: Float64Array.from(curve.levelM, (l, k) => l + sign * (ls.sigmaScale * (Number.isFinite(curve.sigmaM[k]) ? curve.sigmaM[k] : 0) + ls.datumOffsetM)) });
      const tidal = typeof manifest.parameters.tidalRangeM === "number" ? manifest.parameters.tidalRangeM : 0;
      const opts = { windowKa: manifest.parameters.floodingWindowKa, tidalRange: tidal };
      try {
        early = floodingHistory({ spec, data: surface, nodata }, spill, { kind: "curve", curve: shifted(+1) }, opts).floodingAgeKa;
        late = floodingHistory({ spec, data: surface, nodata }, spill, { kind: "curve", curve: shifted(-1) }, opts).floodingAgeKa;
      } catch (e) {
        jobNotes.push(`The flooding-age envelope could not be computed: ${(e as Error).message}`);
      }
    }

    ctx.progress(0.88, "lease blocks");
    const lb = await leaseBlocks(u.projectId, gridAt);
    const shares = blockShares(out.pHigh, out.mean, lb.ids, lb.blocks.length);

    ctx.progress(0.9, "writing GeoTIFFs");
    const nodataOf = (a: Float32Array) => {
      const m = new Uint8Array(n);
      for (let i = 0; i < n; i++) if (a[i] !== a[i]) m[i] = 1;
      return m;
    };
    const rasters: { name: string; data: Float32Array }[] = [
      { name: "p_high", data: out.pHigh },
      { name: "mean", data: out.mean },
      { name: "spread", data: out.spread },
    ];
    if (out.pSea) rasters.push({ name: "p_sea", data: out.pSea });
    if (early && late) rasters.push({ name: "flooding_age_early", data: early }, { name: "flooding_age_late", data: late });
    const files: { name: string; file: string; bytes: number; sha256: string }[] = [];
    for (const r of rasters) {
      ctx.throwIfCancelled();
      const bytes = writeGeoTiff({ spec, data: r.data, nodata: nodataOf(r.data) }, { deflate: nodeDeflate, layout: "tiles", citation: `Lowstand uncertainty ${u.id}: ${r.name}, ${targetLabel(target)}` });
      const file = `${r.name}.tif`;
      await store().put(`${prefix}/${file}`, bytes, "image/tiff");
      written.push(`${prefix}/${file}`);
      files.push({ name: r.name, file, bytes: bytes.byteLength, sha256: createHash("sha256").update(bytes).digest("hex") });
    }

    // envelope figures
    let shoreline: { bandCells: number; bandKm2: number; alwaysSeaCells: number; neverSeaCells: number } | null = null;
    const cellKm2 = (g.cellSizeX * g.cellSizeY) / 1e6;
    if (out.pSea) {
      let band = 0, sea = 0, land = 0;
      const lo = Math.fround(0.05), hi = Math.fround(0.95);
      for (let i = 0; i < n; i++) {
        const p = out.pSea[i];
        if (p !== p) continue;
        if (p > lo && p < hi) band++;
        else if (p >= hi) sea++;
        else land++;
      }
      shoreline = { bandCells: band, bandKm2: band * cellKm2, alwaysSeaCells: sea, neverSeaCells: land };
    }
    let flooding: { cells: number; meanRangeKa: number | null; maxRangeKa: number | null } | null = null;
    if (early && late) {
      let c = 0, s = 0, mx = 0;
      for (let i = 0; i < n; i++) {
        const a = early[i], b = late[i];
        if (a !== a || b !== b) continue;
        c++;
        s += Math.abs(a - b);
        if (Math.abs(a - b) > mx) mx = Math.abs(a - b);
      }
      flooding = { cells: c, meanRangeKa: c ? s / c : null, maxRangeKa: c ? mx : null };
    }
    let scoredCells = 0, robustHigh = 0, contested = 0, robustLow = 0;
    for (let i = 0; i < n; i++) {
      const p = out.pHigh[i];
      if (p !== p) continue;
      scoredCells++;
      if (p >= Math.fround(0.8)) robustHigh++;
      else if (p <= Math.fround(0.2)) robustLow++;
      else contested++;
    }
    const oat = out.oat;
    const result = {
      target,
      targetLabel: targetLabel(target),
      weightSet: { id: v.version.weightSetId, name: v.setName, versionId: v.version.id, version: v.version.version, contentHash: v.version.contentHash },
      reconstruction: { id: rec.id, name: rec.name, inputsHash: rec.inputsHash, engineVersion: rec.engineVersion },
      grid: { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, epsg, cellAreaKm2: cellKm2 },
      params,
      highClass: { label: params.highLabel, threshold: params.threshold },
      overall: { cells: scoredCells, robustHigh, contested, robustLow, robustHighShare: scoredCells ? robustHigh / scoredCells : 0, contestedShare: scoredCells ? contested / scoredCells : 0, robustLowShare: scoredCells ? robustLow / scoredCells : 0 },
      convergence: out.convergence,
      factors: out.factors,
      oat: {
        method: "One-at-a-time: each weight changed from −20 % to +20 % in 1 % steps, the others rescaled to sum 1 (Chen, Yu & Khan 2010), on the base landscape; share of scored cells in the high class.",
        changes: Array.from(oat.changes),
        cells: oat.cells,
        baseHighShare: oat.baseHighShare,
        baseMeanScore: oat.baseMeanScore,
        factors: oat.factors.map((f) => ({ name: f.name, weight: f.weight, highShare: Array.from(f.highShare, (x) => (Number.isFinite(x) ? x : null)), meanScore: Array.from(f.meanScore, (x) => (Number.isFinite(x) ? x : null)) })),
      },
      variance: out.variance
        ? {
            method: "First-order indices by the Saltelli et al. (2010) estimator and total indices by Jansen (1999), over the weights' independent inputs (gamma deviates or multipliers), on a sample of scored cells; output = share of the sample in the high class (Ligmann-Zielinska & Jankowski 2014).",
            n: out.variance.n,
            cells: out.variance.cells,
            variance: out.variance.variance,
            factors: out.factors.map((f, q) => ({ name: f.label, firstOrder: out.variance!.firstOrder[q], total: out.variance!.total[q] })),
          }
        : null,
      landscape: out.landscape ? { draws: out.landscape.draws, varied: out.landscape.varied, params: out.landscape.params } : null,
      shoreline,
      flooding,
      blocks: lb.blocks.map((b, k) => ({ ...b, ...shares[k], areaKm2: shares[k].blockCells * cellKm2 })),
      notes: [...out.notes, ...jobNotes, ...lb.notes],
      timing: { drawMs, threads: 2 },
      files,
      caution: CAUTION,
    };
    ctx.progress(0.98, "publishing");
    const published = await publishUncertainty(u.id, ctx.runId, ctx.attempt, prefix, result as unknown as Record<string, unknown>);
    if (!published) throw new Error("another attempt took this uncertainty run over; this attempt's files are discarded");
    written.length = 0;
    return { uncertaintyRunId: u.id, files: files.length };
  } catch (err) {
    await markRowEnded(ctx, err, (status, message) => markUncertaintyEnded(u.id, ctx.runId, status, message));
    throw err;
  } finally {
    if (pool) await pool.close().catch(() => undefined);
    await Promise.all(written.map((k) => store().delete(k).catch(() => undefined)));
  }
});
