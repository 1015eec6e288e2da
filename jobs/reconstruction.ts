// The reconstruction job: load the inputs named by the reconstruction row, run the terrain
// engine (ages in worker threads), write each layer as a GeoTIFF under this attempt's own prefix,
// then publish the manifest — only if this attempt still owns the run. Nothing half-written is
// ever visible: readers find layers only through a published manifest.
import { eq } from "drizzle-orm";
import { db } from "../app/db.server";
import { datasets, reconstructions, seaLevelCurves } from "../app/db/schema";
import { getJson, store } from "../app/storage.server";
import { readGeoTiff } from "../app/terrain/geotiff-read";
import { writeGeoTiff } from "../app/terrain/geotiff-write";
import { nodeDeflate } from "../app/terrain/geotiff-deflate-node";
import { gridHorizon } from "../app/terrain/horizon";
import { reconstruct, inlineAgeRunner, type LayerOut, type ReconstructInput } from "../app/terrain/reconstruct";
import { workerAgeRunner } from "../app/terrain/reconstruct-worker";
import { defaultGlobalCurve, type SeaLevelCurve } from "../app/terrain/sea-level";
import type { SurveyLine } from "../app/terrain/survey-lines";
import { curveFromRow } from "../app/sea-level-curves.server";
import { attemptPrefix, layerFileName, markReconstructionEnded, publishManifest, reconstructionParams } from "../app/reconstructions.server";
import { defineJob, JobUserError, markRowEnded } from "./wrapper";

export interface ReconstructionPayload {
  reconstructionId: number;
}

async function datasetJson<T>(id: number): Promise<T> {
  const [d] = await db().select({ key: datasets.derivedKey }).from(datasets).where(eq(datasets.id, id));
  if (!d) throw new JobUserError(`dataset ${id} no longer exists: it was deleted after the reconstruction was asked for`);
  return getJson<T>(d.key);
}

async function loadInput(rec: typeof reconstructions.$inferSelect): Promise<Omit<ReconstructInput, "agesKa"> & { agesKa: number[] }> {
  const p = reconstructionParams.parse(rec.params);
  const [bathy] = await db().select().from(datasets).where(eq(datasets.id, p.bathymetryDatasetId));
  if (!bathy) throw new JobUserError("the bathymetry grid was deleted after the reconstruction was asked for");
  const seabed = (await readGeoTiff(await store().getBytes(bathy.derivedKey))).grid;

  let curve: SeaLevelCurve = defaultGlobalCurve();
  if (p.curveId !== null) {
    const [c] = await db().select().from(seaLevelCurves).where(eq(seaLevelCurves.id, p.curveId));
    if (!c) throw new JobUserError("the project sea-level curve was deleted after the reconstruction was asked for");
    curve = curveFromRow(c);
  }

  let surveyLines: SurveyLine[] | undefined;
  if (p.surveyLinesDatasetId !== null) {
    const fc = await datasetJson<{ features: Array<{ geometry: { coordinates: [number, number][] }; properties: { lineId: string } }> }>(p.surveyLinesDatasetId);
    surveyLines = fc.features.map((f) => ({ id: String(f.properties.lineId), x: f.geometry.coordinates.map((c) => c[0]), y: f.geometry.coordinates.map((c) => c[1]) }));
  }

  let horizon: ReconstructInput["horizon"];
  if (p.horizonDatasetId !== null) {
    const [h] = await db().select({ name: datasets.name }).from(datasets).where(eq(datasets.id, p.horizonDatasetId));
    const { rows } = await datasetJson<{ rows: Array<{ lineId: string; x: number; y: number; depthBelowSeabedM: number }> }>(p.horizonDatasetId);
    const result = gridHorizon(seabed.data, seabed.spec, { lineId: rows.map((r) => r.lineId), x: rows.map((r) => r.x), y: rows.map((r) => r.y), depthBelowSeabedM: rows.map((r) => r.depthBelowSeabedM) }, {
      unassessedBeyondM: p.unassessedBeyondM,
      verticalResolutionM: p.verticalResolutionM,
    });
    horizon = { name: h?.name ?? "buried horizon", result };
  }

  return {
    seabed,
    horizon,
    seaLevel: { kind: "curve", curve },
    agesKa: p.agesKa,
    oceanBoundary: { kind: "sides", sides: p.oceanSides },
    tidalRangeM: p.tidalRangeM,
    streamThresholdKm2: p.streamThresholdKm2,
    surveyLines,
  };
}

export const reconstructionJob = defineJob<ReconstructionPayload>("reconstruction", async (ctx) => {
  const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, ctx.payload.reconstructionId));
  if (!rec) throw new JobUserError("the reconstruction was deleted before it could run");
  const prefix = attemptPrefix(rec.projectId, rec.id, ctx.runId, ctx.attempt);
  const written: string[] = [];
  try {
    ctx.progress(0.01, "loading inputs");
    const input = await loadInput(rec);
    const spec = input.seabed.spec;
    const threads = Number(process.env.LOWSTAND_ENGINE_THREADS ?? 2);
    const sink = async (layer: LayerOut) => {
      const bytes = writeGeoTiff({ spec, data: layer.data, nodata: nodataMaskOf(layer) }, { deflate: nodeDeflate, layout: "tiles", nodataValue: layer.nodata === "NaN" ? undefined : layer.nodata });
      const key = `${prefix}/${layerFileName(layer.name, layer.ageKa)}`;
      await store().put(key, bytes, "image/tiff");
      written.push(key);
    };
    const manifest = await reconstruct(input, {
      sink,
      runAges: threads > 0 ? workerAgeRunner({ threads }) : inlineAgeRunner,
      onProgress: (f, step) => ctx.progress(0.02 + 0.95 * f, step ?? "reconstructing"),
      shouldCancel: () => ctx.isCancelled(),
    });
    ctx.progress(0.98, "publishing");
    const published = await publishManifest(rec.id, ctx.runId, ctx.attempt, prefix, manifest);
    if (!published) throw new Error("another attempt took this reconstruction over; this attempt's layers are discarded");
    written.length = 0;
    return { reconstructionId: rec.id, layers: manifest.layers.length };
  } catch (err) {
    // Record only what is certain here: a user's cancellation, or their bad input. A crash is
    // retried, and a run given up reads as failed from its job (effectiveStatus) with the job's
    // message, which does not expose our internals.
    await markRowEnded(ctx, err, (status, message) => markReconstructionEnded(rec.id, ctx.runId, status, message));
    throw err;
  } finally {
    // Layers of an attempt that did not publish are never read; remove them now.
    await Promise.all(written.map((k) => store().delete(k).catch(() => undefined)));
  }
});

/** The nodata mask of a finished layer, from its nodata value (NaN for Float32). */
function nodataMaskOf(layer: LayerOut): Uint8Array {
  const n = layer.data.length;
  const mask = new Uint8Array(n);
  if (layer.nodata === "NaN") {
    const d = layer.data as Float32Array;
    for (let i = 0; i < n; i++) if (d[i] !== d[i]) mask[i] = 1;
  } else {
    const v = layer.nodata;
    const d = layer.data;
    for (let i = 0; i < n; i++) if (d[i] === v) mask[i] = 1;
  }
  return mask;
}
