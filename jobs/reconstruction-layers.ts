// Reading a published reconstruction's layers at full resolution inside a job (the scoring and the
// model jobs): each wanted layer (docs/layers.md name, age or null for a static layer) read once, in
// full, checked against the grid, with progress and cancellation between layers. A layer the
// manifest does not list is simply absent from the result (the caller decides what that means: a
// distance to a feature that does not exist at that age, say); a layer the manifest lists but
// storage no longer has is the user's to fix (run the reconstruction again).
import { ObjectNotFound } from "../app/storage.server";
import { layerKey } from "../app/reconstructions.server";
import { layerGrid } from "../app/layers.server";
import type { Manifest } from "../app/terrain/reconstruct";
import { JobUserError, type JobContext } from "./wrapper";
import { eq } from "drizzle-orm";
import { db } from "../app/db.server";
import { reconstructions } from "../app/db/schema";
import { UserError } from "../app/errors";
import { parseVersionContent, versionWithSet } from "../app/scorings.server";
import type { WeightSetContent } from "../app/scoring/weight-set";

/** One reconstruction layer as read (Float32, NaN nodata; class layers too, as readGeoTiff returns them). */
export interface LoadedLayer {
  name: string;
  ageKa: number | null;
  values: Float32Array;
}

export interface WantedLayer {
  name: string;
  ageKa: number | null;
}

/** The key of a loaded layer in the map {@link loadReconstructionLayers} returns. */
export const layerId = (name: string, ageKa: number | null) => `${name}@${ageKa}`;

/** Adds a wanted layer once. */
export function wantLayer(wanted: WantedLayer[], name: string, ageKa: number | null): void {
  if (!wanted.some((w) => w.name === name && w.ageKa === ageKa)) wanted.push({ name, ageKa });
}

function missingLayer(name: string, ageKa: number | null, what: string) {
  return new JobUserError(`The reconstruction's layer ${name}${ageKa === null ? "" : ` at ${ageKa} ka`} is missing from storage; run the reconstruction again, then ${what}.`);
}

/**
 * Reads the wanted layers of a published reconstruction. Progress runs from `progress.from` to
 * `progress.to` with the step "reading layers"; `what` finishes the message for a missing layer
 * ("score it", "train the model"). O(cells × layers).
 */
export async function loadReconstructionLayers(
  ctx: Pick<JobContext<unknown>, "progress" | "throwIfCancelled">,
  rec: { layerPrefix: string | null; manifest: Record<string, unknown> | null },
  manifest: Manifest,
  wanted: readonly WantedLayer[],
  options: { from: number; to: number; what: string },
): Promise<Map<string, LoadedLayer>> {
  const n = manifest.grid.width * manifest.grid.height;
  const loaded = new Map<string, LoadedLayer>();
  for (const [k, w] of wanted.entries()) {
    ctx.throwIfCancelled();
    const layer = manifest.layers.find((l) => l.name === w.name && (l.ageKa ?? null) === w.ageKa);
    if (layer) {
      let values: Float32Array;
      try {
        values = (await layerGrid(layerKey(rec, w.name, w.ageKa)!, manifest, layer)).data;
      } catch (e) {
        if (e instanceof ObjectNotFound) throw missingLayer(w.name, w.ageKa, options.what);
        throw e;
      }
      if (values.length !== n) throw new JobUserError(`The reconstruction's layer ${w.name}${w.ageKa === null ? "" : ` at ${w.ageKa} ka`} does not match its grid (${values.length} cells, not ${n}).`);
      loaded.set(layerId(w.name, w.ageKa), { name: w.name, ageKa: w.ageKa, values });
    }
    ctx.progress(options.from + (options.to - options.from) * ((k + 1) / wanted.length), "reading layers");
  }
  return loaded;
}

/**
 * What a job that weighs a reconstruction starts from (the scoring and uncertainty jobs): the
 * reconstruction, still published, with its manifest, and the weight-set version with its content
 * checked. Anything gone or no longer valid is the user's to fix: a JobUserError in the job's words.
 */
export async function publishedReconstructionAndVersion(
  reconstructionId: number,
  versionId: number,
  words: { notPublished: string; versionGone: string },
): Promise<{ rec: typeof reconstructions.$inferSelect; manifest: Manifest; v: NonNullable<Awaited<ReturnType<typeof versionWithSet>>>; content: WeightSetContent }> {
  const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
  if (!rec || rec.status !== "published" || !rec.manifest) throw new JobUserError(words.notPublished);
  const v = await versionWithSet(versionId);
  if (!v) throw new JobUserError(words.versionGone);
  try {
    return { rec, manifest: rec.manifest as unknown as Manifest, v, content: parseVersionContent(v.version.content, `Version ${v.version.version} of "${v.setName}"`) };
  } catch (e) {
    if (e instanceof UserError) throw new JobUserError(e.message);
    throw e;
  }
}
