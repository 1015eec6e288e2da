// Reconstructions in the product (design §3): a form's parameters become a job; the job's layers
// are written under an attempt-specific prefix and the manifest is published in one transaction,
// only by the attempt that owns the run. Identical inputs (content hashes of the datasets, the
// curve's points, the parameters and the engine version) return the existing run.
import { createHash } from "node:crypto";
import { and, desc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import { db } from "./db.server";
import { datasets, jobRuns, reconstructions, seaLevelCurves } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { enqueueJob, effectiveRunStatus, attemptMayPublish } from "./jobs.server";
import { ENGINE_VERSION, type Manifest } from "./terrain/reconstruct";
import { defaultGlobalCurve } from "./terrain/sea-level";

export const reconstructionParams = z
  .object({
    name: z.string().trim().max(120, "Names are at most 120 characters.").refine((v) => !/[<>]/.test(v), "Names cannot contain < or >.").default(""),
    bathymetryDatasetId: z.coerce.number({ error: "Choose the bathymetry grid." }).int().positive("Choose the bathymetry grid."),
    horizonDatasetId: z.coerce.number().int().positive().nullable().default(null),
    surveyLinesDatasetId: z.coerce.number().int().positive().nullable().default(null),
    /** null: the shipped global curve; else a project curve's id */
    curveId: z.coerce.number().int().positive().nullable().default(null),
    agesKa: z
      .array(z.number({ error: "Ages are numbers of thousands of years BP." }).min(0, "Ages are 0 ka BP or older.").max(150, "Ages beyond 150 ka BP are outside any curve Lowstand ships."))
      .min(1, "Give at least one age.")
      .max(80, "At most 80 ages in one reconstruction.")
      .refine((a) => new Set(a).size === a.length, "An age is listed twice."),
    oceanSides: z.array(z.enum(["north", "south", "east", "west"])).min(1, "Say on which side(s) of the grid the open ocean lies.").max(4),
    tidalRangeM: z.number().min(0, "The tidal range is zero or more metres.").max(20, "A palaeo-tidal range over 20 m is not plausible."),
    streamThresholdKm2: z.number().positive("The stream threshold is a positive area in km²."),
    unassessedBeyondM: z.number().positive().max(50_000).default(500),
    verticalResolutionM: z.number().positive().max(10).default(0.3),
  })
  .strict();

export type ReconstructionParams = z.infer<typeof reconstructionParams>;

/** Parses comma- or space-separated ages, e.g. "20, 16, 12.5, 10". */
export function parseAges(text: string): number[] {
  const parts = text.split(/[\s,;]+/).filter(Boolean);
  const ages = parts.map((p) => Number(p));
  const bad = parts.filter((_, i) => !Number.isFinite(ages[i]));
  if (bad.length) throw new UserError(422, "invalid_fields", `Ages must be numbers (ka BP): ${bad.map((b) => `"${b}"`).join(", ")} ${bad.length === 1 ? "is" : "are"} not.`, "agesKa");
  return [...ages].sort((a, b) => b - a);
}

async function inputsFingerprint(projectId: number, p: ReconstructionParams) {
  const ids = [p.bathymetryDatasetId, p.horizonDatasetId, p.surveyLinesDatasetId].filter((x): x is number => x !== null);
  const rows = await db().select({ id: datasets.id, kind: datasets.kind, sha256: datasets.sha256, projectId: datasets.projectId, vertical: datasets.vertical }).from(datasets).where(inArray(datasets.id, ids));
  const byId = new Map(rows.filter((r) => r.projectId === projectId).map((r) => [r.id, r]));
  const need = (id: number | null, kinds: string[], what: string) => {
    if (id === null) return null;
    const r = byId.get(id);
    if (!r) throw new UserError(422, "no_such_dataset", `The ${what} is not a dataset of this project.`);
    if (!kinds.includes(r.kind)) throw new UserError(422, "wrong_dataset_kind", `The ${what} must be ${kinds.join(" or ")}, not ${r.kind}.`);
    return r;
  };
  const bathy = need(p.bathymetryDatasetId, ["bathymetry"], "bathymetry grid")!;
  const horizon = need(p.horizonDatasetId, ["horizon_picks"], "buried horizon");
  const lines = need(p.surveyLinesDatasetId, ["survey_lines"], "survey lines dataset");
  let curve: unknown = "global:lambeck2014";
  if (p.curveId !== null) {
    const [c] = await db().select().from(seaLevelCurves).where(and(eq(seaLevelCurves.id, p.curveId), eq(seaLevelCurves.projectId, projectId)));
    if (!c) throw new UserError(422, "no_such_curve", "That sea-level curve is not one of this project's.");
    curve = c.points;
  }
  const fingerprint = { engine: ENGINE_VERSION, bathy: [bathy.sha256, bathy.vertical], horizon: horizon?.sha256 ?? null, lines: lines?.sha256 ?? null, curve, params: { ...p, name: undefined, agesKa: [...p.agesKa].sort((a, b) => a - b), oceanSides: [...p.oceanSides].sort() } };
  return createHash("sha256").update(JSON.stringify(fingerprint)).digest("hex");
}

/**
 * Starts a reconstruction, or returns the existing one for identical inputs (a failed or
 * cancelled one is started again). Throws UserError for bad parameters.
 */
export async function startReconstruction(project: { id: number }, userId: number, params: ReconstructionParams, meta: { clientAddress?: string } = {}) {
  if (params.curveId === null) {
    const [young, old] = [0, defaultGlobalCurve().ageKa.at(-1)!];
    const outside = params.agesKa.filter((a) => a < young || a > old);
    if (outside.length) throw new UserError(422, "age_outside_curve", `The shipped global curve covers 0–${old} ka BP; ${outside.join(", ")} ka ${outside.length === 1 ? "is" : "are"} outside it.`, "agesKa");
  }
  const inputsHash = await inputsFingerprint(project.id, params);
  const [bathy] = await db().select({ count: datasets.count }).from(datasets).where(eq(datasets.id, params.bathymetryDatasetId));
  const workSize = bathy.count * (params.agesKa.length + 1);
  return db().transaction(async (tx) => {
    // One row per identical input set; the unique index decides under concurrency.
    const inserted = await tx
      .insert(reconstructions)
      .values({ projectId: project.id, name: params.name, inputsHash, params, engineVersion: ENGINE_VERSION, createdBy: userId })
      .onConflictDoNothing({ target: [reconstructions.projectId, reconstructions.inputsHash] })
      .returning();
    let row = inserted[0];
    const reused = false;
    if (!row) {
      [row] = await tx.select().from(reconstructions).where(and(eq(reconstructions.projectId, project.id), eq(reconstructions.inputsHash, inputsHash))).for("update");
      const run = row.jobRunId ? (await tx.select().from(jobRuns).where(eq(jobRuns.id, row.jobRunId)))[0] : undefined;
      const ended = !run || run.state === "failed" || run.state === "cancelled";
      if (row.status === "published" || (row.status === "running" && !ended)) return { reconstruction: row, reused: true };
      [row] = await tx.update(reconstructions).set({ status: "running", error: null, manifest: null, layerPrefix: null, publishedAt: null }).where(eq(reconstructions.id, row.id)).returning();
    }
    const jobRunId = await enqueueJob({ kind: "reconstruction", projectId: project.id, startedBy: userId, payload: { reconstructionId: row.id }, workSize }, tx);
    [row] = await tx.update(reconstructions).set({ jobRunId }).where(eq(reconstructions.id, row.id)).returning();
    await recordAudit(tx, { actorUserId: userId, projectId: project.id, action: "reconstruction.started", detail: { reconstructionId: row.id, jobRunId, ages: params.agesKa.length }, clientAddress: meta.clientAddress });
    return { reconstruction: row, reused };
  });
}

/** The status people see: a run whose job ended without publishing reads as failed or cancelled. */
export function effectiveStatus(r: typeof reconstructions.$inferSelect, run: typeof jobRuns.$inferSelect | null | undefined) {
  return effectiveRunStatus(r.status, run);
}

export async function listReconstructions(projectId: number) {
  const rows = await db()
    .select({ r: reconstructions, run: jobRuns })
    .from(reconstructions)
    .leftJoin(jobRuns, eq(jobRuns.id, reconstructions.jobRunId))
    .where(eq(reconstructions.projectId, projectId))
    .orderBy(desc(reconstructions.createdAt));
  return rows.map(({ r, run }) => ({ ...r, effectiveStatus: effectiveStatus(r, run), run }));
}

export async function getReconstruction(projectId: number | null, id: number) {
  const [row] = await db()
    .select({ r: reconstructions, run: jobRuns })
    .from(reconstructions)
    .leftJoin(jobRuns, eq(jobRuns.id, reconstructions.jobRunId))
    .where(projectId === null ? eq(reconstructions.id, id) : and(eq(reconstructions.id, id), eq(reconstructions.projectId, projectId)));
  if (!row) return null;
  return { ...row.r, effectiveStatus: effectiveStatus(row.r, row.run), run: row.run };
}

/** Storage key of one layer of a published reconstruction (from its manifest), or null. */
export function layerKey(r: { layerPrefix: string | null; manifest: Record<string, unknown> | null }, name: string, ageKa: number | null): string | null {
  if (!r.layerPrefix || !r.manifest) return null;
  const m = r.manifest as unknown as Manifest;
  const layer = m.layers.find((l) => l.name === name && (l.ageKa ?? null) === ageKa);
  return layer ? `${r.layerPrefix}/${layerFileName(name, ageKa)}` : null;
}

export function layerFileName(name: string, ageKa: number | null): string {
  return ageKa === null ? `${name}.tif` : `${name}_${String(ageKa).replace(/[^0-9.]/g, "")}ka.tif`;
}

/** The attempt-specific prefix under which an attempt writes its layers. */
export function attemptPrefix(projectId: number, reconstructionId: number, runId: string, attempt: number) {
  return `runs/p${projectId}/r${reconstructionId}/${runId}-a${attempt}`;
}

/**
 * Publishes a manifest — only if this attempt still owns the run (the run is the reconstruction's
 * current job and its current attempt is this one). Returns false when another attempt took over.
 */
export async function publishManifest(reconstructionId: number, runId: string, attempt: number, prefix: string, manifest: Manifest): Promise<boolean> {
  return db().transaction(async (tx) => {
    const rows = await tx
      .update(reconstructions)
      .set({ status: "published", manifest: manifest as unknown as Record<string, unknown>, layerPrefix: prefix, publishedAt: new Date(), error: null })
      .where(
        and(
          eq(reconstructions.id, reconstructionId),
          eq(reconstructions.jobRunId, runId),
          eq(reconstructions.status, "running"),
          attemptMayPublish(runId, attempt),
        ),
      )
      .returning({ id: reconstructions.id, projectId: reconstructions.projectId });
    if (rows.length) await recordAudit(tx, { actorUserId: null, projectId: rows[0].projectId, action: "reconstruction.published", detail: { reconstructionId, runId, attempt, layers: manifest.layers.length } });
    return rows.length > 0;
  });
}

export async function markReconstructionEnded(reconstructionId: number, runId: string, status: "failed" | "cancelled", error: string) {
  await db()
    .update(reconstructions)
    .set({ status, error })
    .where(and(eq(reconstructions.id, reconstructionId), eq(reconstructions.jobRunId, runId), eq(reconstructions.status, "running")));
}
