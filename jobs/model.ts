// The model job (design §4 "trained alternative", issue 10): a random forest on the factor values of
// a published reconstruction. Presences: in-situ sites with an adequate position and cores with
// archaeological material, each at the reconstructed age nearest its date (app/scoring/forest.ts
// trainingSet lists everything left out with the reason). Background: a target-group background
// (Phillips et al. 2009) drawn from searched ground — survey-line corridors and cored areas
// (app/scoring/search-effort.ts) — only from cells that were land (land or intertidal) at each
// presence's age (app/scoring/background.ts). Spatial-block cross-validation gives out-of-fold AUC
// and gain with their spread (app/scoring/cross-validate.ts); then a forest on all samples predicts
// the probability raster at the model's age, in chunks in worker threads
// (jobs/forest-predict-pool.ts), masked to that age's land. It writes the GeoTIFF and the forest's
// JSON under this attempt's own prefix and publishes the card and statistics — only if this attempt
// still owns the run (decision 009's guard).
//
// Dredging areas: no evidence kind records dredged ground yet (app/evidence/README.md), so the
// searched ground is survey-line corridors and cored areas; survey_area polygons are a campaign's
// outline, not ground searched line by line, and are not used.
import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import { db } from "../app/db.server";
import { models, projects, reconstructions } from "../app/db/schema";
import { store } from "../app/storage.server";
import { writeGeoTiff } from "../app/terrain/geotiff-write";
import { nodeDeflate } from "../app/terrain/geotiff-deflate-node";
import { resolveCrs } from "../app/terrain/crs";
import type { GridSpec } from "../app/terrain/grid";
import type { Manifest } from "../app/terrain/reconstruct";
import { factorDef, type FactorId } from "../app/scoring/factors";
import { ScoringInputError } from "../app/scoring/errors";
import { modelCard, serialiseForest, trainForest, trainingSet, type TrainingSet } from "../app/scoring/forest";
import { targetGroupBackground } from "../app/scoring/background";
import { crossValidate } from "../app/scoring/cross-validate";
import { searchEffortMask } from "../app/scoring/search-effort";
import { shelterIndex } from "../app/scoring/shelter";
import { classAreas } from "../app/scoring/classification";
import {
  exclusionWords,
  markModelEnded,
  MODEL_FOREST_FILE,
  MODEL_PREVIEW_FILE,
  MODEL_RASTER_FILE,
  modelAttemptPrefix,
  modelEvidence,
  placeEvidence,
  publishModel,
  publishModelPreview,
  tooFewMessage,
  type ModelParams,
  type ModelPreview,
} from "../app/models.server";
import { defineJob, JobUserError, markRowEnded } from "./wrapper";
import { layerId, loadReconstructionLayers, wantLayer, type WantedLayer } from "./reconstruction-layers";
import { reduceToDisplay, reductionOf } from "../app/raster-display";
import { displayGridFor } from "../app/display.server";
import { predictRasterInPool, PredictionCancelled } from "./forest-predict-pool";
import { TerrainCancelled } from "../app/terrain/grid";

export interface ModelPayload {
  modelId: number;
}

const HISTOGRAM_BINS = 20;

const CAUTION =
  "A planning aid, not evidence: the probability is relative to searched ground, not a chance that a site exists, and a low value is not evidence of absence. " +
  "The model peaks on the known sites it was trained on; it is never shown below analyst. Fieldwork follows local heritage law and licensed archaeological practice.";

/** land_class codes that count as land for the background and the raster: land (0) and intertidal (2). */
function landMask(landClass: Float32Array): Uint8Array {
  const m = new Uint8Array(landClass.length);
  for (let i = 0; i < landClass.length; i++) {
    const c = landClass[i];
    if (c === 0 || c === 2) m[i] = 1;
  }
  return m;
}

function jobError(e: unknown): unknown {
  if (e instanceof ScoringInputError) return new JobUserError(e.message);
  if (e instanceof PredictionCancelled) return new TerrainCancelled();
  return e;
}

export const modelJob = defineJob<ModelPayload>("model", async (ctx) => {
  const [m] = await db().select().from(models).where(eq(models.id, ctx.payload.modelId));
  if (!m) throw new JobUserError("The model was deleted before it could be trained.");
  const prefix = modelAttemptPrefix(m.projectId, m.id, ctx.runId, ctx.attempt);
  const written: string[] = [];
  // what the job counted, kept on a refusal so the page can show the numbers
  let partialCard: Record<string, unknown> | null = null;
  const t0 = Date.now();
  try {
    ctx.progress(0.01, "loading inputs");
    const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, m.reconstructionId));
    if (!rec || rec.status !== "published" || !rec.manifest) throw new JobUserError("The reconstruction is no longer published; the model cannot be trained on it.");
    const manifest = rec.manifest as unknown as Manifest;
    const params = m.params as unknown as ModelParams;
    const { settings, factors, ageKa: modelAgeKa, classification } = params;
    const [project] = await db().select({ crsEpsg: projects.crsEpsg }).from(projects).where(eq(projects.id, m.projectId));
    const g = manifest.grid;
    const n = g.width * g.height;
    const epsg = g.epsg ?? project?.crsEpsg ?? null;
    const spec: GridSpec = { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, crs: epsg ? { epsg, proj4: resolveCrs(epsg).proj4 } : null };
    if (!manifest.agesKa.includes(modelAgeKa)) throw new JobUserError(`${modelAgeKa} ka is no longer one of the reconstruction's ages.`);

    // Evidence first: which ages are needed follows from where the presences fall.
    ctx.progress(0.02, "reading sites and cores");
    const ev = await modelEvidence(m.projectId);
    const placed = placeEvidence(ev.records, g, manifest.agesKa, modelAgeKa, settings);
    const presenceAges = new Set<number>();
    for (const e of placed.evidence) {
      const counts = e.kind === "site" ? e.context === "in_situ" && e.positionAdequate : e.archaeologicalMaterial;
      if (counts && e.cell >= 0 && manifest.agesKa.includes(e.ageKa)) presenceAges.add(e.ageKa);
    }
    const ages = [...new Set([...presenceAges, modelAgeKa])].sort((a, b) => b - a);

    const wanted: WantedLayer[] = [];
    for (const a of ages) wantLayer(wanted, "land_class", a);
    for (const f of factors) {
      const def = factorDef(f)!;
      if (f === "shelter") continue;
      for (const a of ages) wantLayer(wanted, def.layer, def.perAge ? a : null);
    }
    const loaded = await loadReconstructionLayers(ctx, rec, manifest, wanted, { from: 0.03, to: 0.3, what: "train the model" });

    // Factor values per age. A distance factor whose layer is absent (or all nodata) at an age has no
    // such feature then: it reads as twice the grid's diagonal (farther than anything on it), as the
    // scoring reads it as "far away". Any other missing factor is the user's to fix.
    const farM = 2 * Math.hypot(g.width * g.cellSizeX, g.height * g.cellSizeY);
    const notes: string[] = [];
    const landByAge = new Map<number, Uint8Array>();
    const stackAges: { ageKa: number; layers: Float32Array[] }[] = [];
    for (const a of ages) {
      const lc = loaded.get(layerId("land_class", a));
      if (!lc) throw new JobUserError(`The reconstruction has no land_class layer at ${a} ka.`);
      const land = landMask(lc.values);
      landByAge.set(a, land);
      const layers: Float32Array[] = [];
      for (const f of factors) {
        const def = factorDef(f)!;
        if (f === "shelter") {
          const codes = new Uint8Array(n);
          for (let i = 0; i < n; i++) codes[i] = lc.values[i] === lc.values[i] ? Math.round(lc.values[i]) : 255;
          layers.push(shelterIndex(codes, g, settings.shelterRadiusM));
          continue;
        }
        const l = loaded.get(layerId(def.layer, def.perAge ? a : null));
        let any = false;
        if (l) for (let i = 0; i < n && !any; i++) if (l.values[i] === l.values[i]) any = true;
        if (l && any) layers.push(l.values);
        else if (f.startsWith("dist_")) {
          layers.push(new Float32Array(n).fill(farM));
          notes.push(`No ${def.label.toLowerCase().replace(/^distance to an? /, "")} at ${a} ka: ${def.label.toLowerCase()} read as ${Math.round(farM)} m (farther than anything on the grid).`);
        } else throw new JobUserError(`The reconstruction has no values of ${def.label.toLowerCase()} (${def.layer})${def.perAge ? ` at ${a} ka` : ""}: leave the factor out.`);
      }
      stackAges.push({ ageKa: a, layers });
    }
    ctx.throwIfCancelled();

    // The presences by the forest's own rules; refused below the minimum, with the numbers.
    ctx.progress(0.32, "choosing presences");
    const stack = { factorIds: factors as FactorId[], ages: stackAges };
    const forestSettings = { trees: settings.trees, maxSamples: settings.maxSamples, seed: settings.seed, minPresences: settings.minSites };
    let presenceOnly: TrainingSet;
    try {
      presenceOnly = trainingSet({ evidence: placed.evidence, background: [], stack, cellCount: n, maxSamples: 1e9, seed: settings.seed, land: landByAge });
    } catch (e) {
      throw jobError(e);
    }
    const excludedCounts: Record<string, number> = {};
    for (const x of presenceOnly.excluded) excludedCounts[x.reason] = (excludedCounts[x.reason] ?? 0) + 1;
    partialCard = { refused: false, presences: presenceOnly.presences, sites: presenceOnly.sites, cores: presenceOnly.cores, minimum: settings.minSites, excluded: excludedCounts, heldOut: placed.heldOut, undated: placed.undated };
    if (presenceOnly.presences < settings.minSites) {
      partialCard.refused = true;
      throw new JobUserError(tooFewMessage({ presences: presenceOnly.presences, sites: presenceOnly.sites, cores: presenceOnly.cores, minimum: settings.minSites, excluded: excludedCounts, heldOut: placed.heldOut }));
    }

    // The target-group background: searched ground that was land at each presence's age.
    ctx.progress(0.35, "drawing the background");
    const effort = searchEffortMask({ width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY }, { lines: ev.lines, corridorM: settings.surveyCorridorM, cores: ev.corePositions, radiusM: settings.coreRadiusM, areas: ev.areas });
    if (effort.cells === 0)
      throw new JobUserError(
        `No searched ground lies on the grid: the background is drawn from survey-line corridors (${settings.surveyCorridorM} m), cored areas (${settings.coreRadiusM} m) and dredging areas, and the project has ${ev.lines.length} survey line${ev.lines.length === 1 ? "" : "s"}, ${ev.corePositions.length} core${ev.corePositions.length === 1 ? "" : "s"} and ${ev.areas.length} dredging area${ev.areas.length === 1 ? "" : "s"} there. Upload survey lines, cores or dredging areas.`,
      );
    const perAge = new Map<number, number>();
    for (let i = 0; i < presenceOnly.presences; i++) perAge.set(presenceOnly.ageKa[i], (perAge.get(presenceOnly.ageKa[i]) ?? 0) + 1);
    const drawAges = ages.filter((a) => (perAge.get(a) ?? 0) > 0);
    let draws: ReturnType<typeof targetGroupBackground>;
    let set: TrainingSet;
    // down-sampled towards the presences, within the cap (DEFAULT_MODEL_SETTINGS.backgroundPerPresence)
    const backgroundCount = Math.min(settings.backgroundCells, Math.max(100, settings.backgroundPerPresence * presenceOnly.presences));
    try {
      draws = targetGroupBackground({ effort: effort.mask, landByAge: drawAges.map((a) => ({ ageKa: a, land: landByAge.get(a)! })), presencesPerAge: drawAges.map((a) => perAge.get(a)!), count: backgroundCount, seed: settings.seed });
      set = trainingSet({ evidence: placed.evidence, background: draws.map((d) => ({ ageKa: d.ageKa, cells: d.cells })), stack, cellCount: n, maxSamples: settings.maxSamples, seed: settings.seed, land: landByAge });
    } catch (e) {
      throw jobError(e);
    }
    if (set.background === 0) throw new JobUserError("None of the searched ground was land with factor values at the presences' ages, so there is no background to train against.");
    ctx.throwIfCancelled();

    // Spatial-block cross-validation, then the forest on all samples.
    ctx.progress(0.4, "cross-validating");
    let cv: ReturnType<typeof crossValidate>;
    try {
      cv = crossValidate(set, {
        grid: g,
        blockSizeM: settings.blockSizeM,
        k: settings.folds,
        seed: settings.seed,
        classification,
        forest: forestSettings,
        onFold: (done, k) => {
          ctx.progress(0.4 + 0.3 * (done / k), "cross-validating", `fold ${done} of ${k}`);
          ctx.throwIfCancelled();
        },
      });
    } catch (e) {
      throw jobError(e);
    }
    ctx.progress(0.7, "training on all samples");
    let trained: ReturnType<typeof trainForest>;
    try {
      trained = trainForest(set, forestSettings);
    } catch (e) {
      throw jobError(e);
    }
    ctx.throwIfCancelled();

    const at = stackAges.find((s) => s.ageKa === modelAgeKa)!;
    const threads = Math.max(1, Math.min(2, Number(process.env.LOWSTAND_ENGINE_THREADS ?? "2") || 1));

    // Display resolution first (a grid larger than the display side): the factors reduced to the
    // display grid by their layers' rules, predicted, and shown on the model's page while the
    // full-resolution raster is predicted. (Within the display side, the full raster is the first look.)
    const dgrid = displayGridFor(g);
    let preview: ModelPreview | null = null;
    if (dgrid.step > 1) {
      ctx.progress(0.74, "predicting at display resolution");
      const reduced = at.layers.map((l, k) => reduceToDisplay(l, g.width, g.height, dgrid.step, factors[k] === "shelter" ? "mean" : reductionOf(factorDef(factors[k])!.layer)));
      const landClass = reduceToDisplay(loaded.get(layerId("land_class", modelAgeKa))!.values, g.width, g.height, dgrid.step, "majority");
      let first: Float32Array;
      try {
        first = await predictRasterInPool(trained.compiled, reduced, { threads, shouldCancel: () => ctx.isCancelled() });
      } catch (e) {
        throw jobError(e);
      }
      const dn = dgrid.width * dgrid.height;
      const firstNodata = new Uint8Array(dn);
      for (let i = 0; i < dn; i++) {
        if (!(landClass[i] === 0 || landClass[i] === 2)) first[i] = NaN;
        if (first[i] !== first[i]) firstNodata[i] = 1;
      }
      const dspec: GridSpec = { ...spec, width: dgrid.width, height: dgrid.height, cellSizeX: dgrid.cellSizeX, cellSizeY: dgrid.cellSizeY };
      const key = `${prefix}/${MODEL_PREVIEW_FILE}`;
      await store().put(key, writeGeoTiff({ spec: dspec, data: first, nodata: firstNodata }, { deflate: nodeDeflate, layout: "tiles", citation: `Lowstand model ${m.id}: display-resolution preview at ${modelAgeKa} ka` }), "image/tiff");
      written.push(key);
      preview = { key, width: dgrid.width, height: dgrid.height, step: dgrid.step };
      await publishModelPreview(m.id, ctx.runId, ctx.attempt, preview);
      ctx.throwIfCancelled();
    }

    ctx.progress(0.75, "predicting the probability raster");
    let probability: Float32Array;
    try {
      probability = await predictRasterInPool(trained.compiled, at.layers, {
        threads,
        onProgress: (f) => ctx.progress(0.75 + 0.15 * f, "predicting the probability raster"),
        shouldCancel: () => ctx.isCancelled(),
      });
    } catch (e) {
      throw jobError(e);
    }
    const land = landByAge.get(modelAgeKa)!;
    const nodata = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      if (!land[i]) probability[i] = NaN;
      if (probability[i] !== probability[i]) nodata[i] = 1;
    }

    ctx.progress(0.9, "writing files");
    const tif = writeGeoTiff({ spec, data: probability, nodata }, { deflate: nodeDeflate, layout: "tiles", citation: `Lowstand model ${m.id}: probability of presence at ${modelAgeKa} ka` });
    await store().put(`${prefix}/${MODEL_RASTER_FILE}`, tif, "image/tiff");
    written.push(`${prefix}/${MODEL_RASTER_FILE}`);
    const forestJson = new TextEncoder().encode(JSON.stringify(serialiseForest(trained)));
    await store().put(`${prefix}/${MODEL_FOREST_FILE}`, forestJson, "application/json");
    written.push(`${prefix}/${MODEL_FOREST_FILE}`);

    // Statistics of the raster over the age's land: histogram and the project's classes.
    let cells = 0;
    let sum = 0;
    const hist = new Array<number>(HISTOGRAM_BINS).fill(0);
    for (let i = 0; i < n; i++) {
      const p = probability[i];
      if (p !== p) continue;
      cells++;
      sum += p;
      hist[Math.min(HISTOGRAM_BINS - 1, Math.floor(p * HISTOGRAM_BINS))]++;
    }
    const cellAreaKm2 = (g.cellSizeX * g.cellSizeY) / 1e6;
    const areas = classAreas(classification, probability, land, g.cellSizeX * g.cellSizeY);

    const card = {
      ...modelCard(trained, set, cv),
      heldOut: placed.heldOut,
      undated: placed.undated,
      outsideAges: placed.outsideAges,
      ages: { model: modelAgeKa, chosen: params.ageChosen, presencesPerAge: [...perAge].sort((a, b) => b[0] - a[0]).map(([ageKa, presences]) => ({ ageKa, presences })) },
      background: {
        requested: backgroundCount,
        perPresence: settings.backgroundPerPresence,
        cap: settings.backgroundCells,
        drawn: draws.map((d) => ({ ageKa: d.ageKa, requested: d.requested, available: d.available, drawn: d.cells.length })),
        searchedGround: { cells: effort.cells, areaKm2: effort.cells * cellAreaKm2, surveyLineCells: effort.lineCells, coredCells: effort.coreCells, surveyCorridorM: settings.surveyCorridorM, coreRadiusM: settings.coreRadiusM, surveyLines: ev.lines.length, cores: ev.corePositions.length, dredgedAreaCells: effort.areaCells, dredgingAreas: ev.areas.length, targetResults: ev.targetResults },
        rule: "Drawn only from cells that were land or intertidal at each presence's age (a target-group background, after Phillips et al. 2009).",
      },
      crossValidation: { k: settings.folds, blockSizeM: settings.blockSizeM, blocks: cv.assignment.blocks, blocksWithPresences: cv.assignment.blocksWithPresences, presencesPerFold: cv.assignment.presences, backgroundPerFold: cv.assignment.background },
      excludedWords: exclusionWords(card0Excluded(set)),
      dataNotes: notes,
      /** the whole job until publication: reading, cross-validation, training, prediction, files */
      totalMs: Date.now() - t0,
    };
    const result = {
      ageKa: modelAgeKa,
      grid: { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, epsg, cellAreaKm2 },
      probability: { cells, areaKm2: cells * cellAreaKm2, mean: cells ? sum / cells : null },
      histogram: { from: 0, to: 1, bins: HISTOGRAM_BINS, counts: hist },
      classes: classification.labels.map((label, c) => ({ label, cells: areas.cells[c], areaKm2: areas.cells[c] * cellAreaKm2, share: cells ? areas.cells[c] / cells : 0 })),
      classification,
      files: [
        { name: "probability", file: MODEL_RASTER_FILE, bytes: tif.byteLength, sha256: createHash("sha256").update(tif).digest("hex") },
        { name: "forest", file: MODEL_FOREST_FILE, bytes: forestJson.byteLength, sha256: createHash("sha256").update(forestJson).digest("hex") },
      ],
      reconstruction: { id: rec.id, name: rec.name, inputsHash: rec.inputsHash, engineVersion: rec.engineVersion },
      // the first look shown while the full raster was predicted (display grid; kept with the model)
      preview,
      caution: CAUTION,
    };

    ctx.progress(0.98, "publishing");
    const published = await publishModel(m.id, ctx.runId, ctx.attempt, prefix, card as unknown as Record<string, unknown>, result as unknown as Record<string, unknown>);
    if (!published) throw new Error("another attempt took this model over; this attempt's files are discarded");
    written.length = 0;
    return { modelId: m.id, presences: set.presences, background: set.background, auc: cv.summary.auc.mean };
  } catch (err) {
    await markRowEnded(ctx, err, (status, message) => markModelEnded(m.id, ctx.runId, status, message, status === "failed" ? partialCard : null));
    throw err;
  } finally {
    await Promise.all(written.map((k) => store().delete(k).catch(() => undefined)));
  }
});

function card0Excluded(set: TrainingSet): Record<string, number> {
  const out: Record<string, number> = {};
  for (const x of set.excluded) out[x.reason] = (out[x.reason] ?? 0) + 1;
  return out;
}
