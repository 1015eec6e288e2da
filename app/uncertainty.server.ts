// Uncertainty runs (design §7, issue 12; decision 403): Monte Carlo over a weight-set version's
// weights and the landscape's own parameters on one age or period of a published reconstruction,
// seeded and repeatable. Like scorings (decision 009): one row per identical input set (the seed is
// part of it), files written per attempt, published in one transaction by the attempt owning the run.
import { storedClassification, toProjectClassification } from "./validations.server";
import { createHash, randomInt } from "node:crypto";
import { and, desc, eq } from "drizzle-orm";
import { z } from "zod";
import { db } from "./db.server";
import { jobRuns, projects, reconstructions, uncertaintyRuns, weightSets, weightSetVersions } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { store } from "./storage.server";
import { enqueueJob, jobRunStatus, effectiveRunStatus, attemptMayPublish } from "./jobs.server";
import { resolveScoringRequest, targetLabel, type ScoringTarget } from "./scorings.server";
import type { ProjectClassification } from "./scoring/classification";

/** Bump when the job's output changes meaning for the same inputs. */
export const UNCERTAINTY_VERSION = "1";

/** The rasters a run publishes (p_sea and the flooding-age envelope only with landscape draws). */
export const UNCERTAINTY_RASTERS = ["p_high", "mean", "spread", "p_sea", "flooding_age_early", "flooding_age_late"] as const;
export type UncertaintyRaster = (typeof UNCERTAINTY_RASTERS)[number];

export const MAX_DRAWS = 10_000;

const positiveId = (what: string) => z.number({ error: `${what} must be a number.` }).int(`${what} must be a whole number.`).positive(`${what} must be positive.`);
const num = (what: string) => z.number({ error: `${what} must be a number.` }).refine((v) => Number.isFinite(v), `${what} must be a finite number.`);

export const uncertaintyRequest = z
  .object({
    reconstructionId: positiveId("reconstructionId"),
    weightSetVersionId: positiveId("weightSetVersionId"),
    target: z.discriminatedUnion(
      "kind",
      [
        z.object({ kind: z.literal("age"), ageKa: num("ageKa") }).strict(),
        z.object({ kind: z.literal("period"), name: z.string().trim().min(1, "Give the name of one of the version's periods.").max(120) }).strict(),
      ],
      { error: 'target is { kind: "age", ageKa } or { kind: "period", name }.' },
    ),
    draws: z.number({ error: "draws must be a number." }).int("draws must be a whole number.").min(1, "Make at least 1 draw.").max(MAX_DRAWS, `At most ${MAX_DRAWS} draws in one run.`).default(1000),
    /** omitted: one is chosen and stored with the run */
    seed: z.number().int("The seed must be a whole number.").min(0, "The seed is a whole number from 0 to 4294967295.").max(4294967295, "The seed is a whole number from 0 to 4294967295.").optional(),
    perturbation: z
      .discriminatedUnion("kind", [
        z.object({ kind: z.literal("dirichlet"), concentration: num("concentration").refine((v) => v > 0 && v <= 10_000, "The Dirichlet concentration must be above 0 and at most 10 000.") }).strict(),
        z.object({ kind: z.literal("uniform"), spread: num("spread").refine((v) => v >= 0 && v < 1, "The uniform spread is from 0 to below 1 (±0–100 %).") }).strict(),
      ])
      .default({ kind: "dirichlet", concentration: 50 }),
    landscape: z
      .object({
        sigmaScale: num("sigmaScale").refine((v) => v >= 0 && v <= 5, "The σ scale of the sea-level curve is from 0 to 5 (a negative scale means nothing)."),
        datumOffsetM: num("datumOffsetM").refine((v) => v >= 0 && v <= 50, "The datum offset range is from 0 to 50 m."),
        velocityRel: num("velocityRel").refine((v) => v >= 0 && v < 1, "The sediment velocity spread is from 0 to below 1."),
        streamThresholdFactor: num("streamThresholdFactor").refine((v) => v >= 1 && v <= 100, "The stream threshold factor is from 1 to 100."),
        erosionDepthRel: num("erosionDepthRel").refine((v) => v >= 0 && v < 1, "The erosion depth spread is from 0 to below 1."),
      })
      .strict()
      .default({ sigmaScale: 1, datumOffsetM: 0.5, velocityRel: 0.1, streamThresholdFactor: 2, erosionDepthRel: 0.3 }),
    landscapeDraws: z.number().int("landscapeDraws must be a whole number.").min(1, "Make at least 1 landscape draw.").max(500, "At most 500 landscape draws.").default(25),
  })
  .strict();

export type UncertaintyRequest = z.input<typeof uncertaintyRequest>;
export type UncertaintyParams = Omit<z.output<typeof uncertaintyRequest>, "reconstructionId" | "weightSetVersionId" | "target" | "seed"> & { seed: number; threshold: number; highLabel: string };

/**
 * The project's classification (projects.classification) as app/scoring/classification.ts reads it
 * (thresholds decreasing, labels highest first; the column's default lists them low to high, so an
 * increasing list is turned round), and the lower bound of its "high" class: the class named "high"
 * when there is one (so "high" includes any class above it), else the top class.
 */
export function highClassOf(json: unknown): { classification: ProjectClassification; threshold: number; label: string } {
  // one reader of projects.classification for every module (either stored order)
  const cls: ProjectClassification = toProjectClassification(storedClassification(json));
  const k = cls.labels.findIndex((l) => l.trim().toLowerCase() === "high");
  const idx = k >= 0 && k < cls.thresholds.length ? k : 0;
  const label = k >= 0 && k < cls.thresholds.length ? (k === 0 ? cls.labels[0] : `${cls.labels[k]} or above`) : cls.labels[0];
  return { classification: cls, threshold: cls.thresholds[idx], label };
}

/**
 * Checks a request against the project (as a scoring: reconstruction published and the project's,
 * version of one of its weight sets, age or period) and returns the stored params and the inputs
 * hash. Throws UserError naming the problem; nothing is written.
 */
export async function resolveUncertaintyRequest(projectId: number, raw: UncertaintyRequest) {
  const req = uncertaintyRequest.parse(raw);
  const r = await resolveScoringRequest(projectId, { reconstructionId: req.reconstructionId, weightSetVersionId: req.weightSetVersionId, target: req.target });
  const [project] = await db().select({ classification: projects.classification }).from(projects).where(eq(projects.id, projectId));
  const high = highClassOf(project?.classification);
  const seed = req.seed ?? randomInt(0, 2 ** 32 - 1);
  const params: UncertaintyParams = {
    draws: req.draws,
    seed,
    perturbation: req.perturbation,
    landscape: req.landscape,
    landscapeDraws: req.landscapeDraws,
    threshold: high.threshold,
    highLabel: high.label,
  };
  const inputsHash = createHash("sha256")
    .update(JSON.stringify({ uncertainty: UNCERTAINTY_VERSION, scoring: r.inputsHash, params }))
    .digest("hex");
  return { ...r, params, inputsHash };
}

/**
 * Starts an uncertainty run, or returns the existing one for identical inputs (the seed included; a
 * failed or cancelled one is started again on the same row). UserError for a bad request.
 */
export async function startUncertainty(project: { id: number }, userId: number, req: UncertaintyRequest, meta: { clientAddress?: string } = {}) {
  const r = await resolveUncertaintyRequest(project.id, req);
  const workSize = r.manifest.grid.width * r.manifest.grid.height * Math.max(1, Math.round(r.params.draws / 10));
  return db().transaction(async (tx) => {
    const inserted = await tx
      .insert(uncertaintyRuns)
      .values({ projectId: project.id, reconstructionId: r.reconstruction.id, weightSetVersionId: r.version.id, target: r.target, params: r.params as unknown as Record<string, unknown>, inputsHash: r.inputsHash, createdBy: userId })
      .onConflictDoNothing({ target: [uncertaintyRuns.projectId, uncertaintyRuns.inputsHash] })
      .returning();
    let row = inserted[0];
    if (!row) {
      [row] = await tx.select().from(uncertaintyRuns).where(and(eq(uncertaintyRuns.projectId, project.id), eq(uncertaintyRuns.inputsHash, r.inputsHash))).for("update");
      const run = row.jobRunId ? (await tx.select().from(jobRuns).where(eq(jobRuns.id, row.jobRunId)))[0] : undefined;
      const ended = !run || run.state === "failed" || run.state === "cancelled";
      if (row.status === "published" || (row.status === "running" && !ended)) return { run: row, reused: true };
      [row] = await tx.update(uncertaintyRuns).set({ status: "running", error: null, result: null, layerPrefix: null, publishedAt: null }).where(eq(uncertaintyRuns.id, row.id)).returning();
    }
    const jobRunId = await enqueueJob({ kind: "uncertainty", projectId: project.id, startedBy: userId, payload: { uncertaintyRunId: row.id }, workSize }, tx);
    [row] = await tx.update(uncertaintyRuns).set({ jobRunId }).where(eq(uncertaintyRuns.id, row.id)).returning();
    await recordAudit(tx, {
      actorUserId: userId,
      projectId: project.id,
      action: "uncertainty.started",
      detail: { uncertaintyRunId: row.id, jobRunId, reconstructionId: r.reconstruction.id, weightSetVersionId: r.version.id, weightSet: r.setName, version: r.version.version, target: r.target, draws: r.params.draws, seed: r.params.seed },
      clientAddress: meta.clientAddress,
    });
    return { run: row, reused: false };
  });
}

type RunRow = typeof uncertaintyRuns.$inferSelect;
type JobRow = typeof jobRuns.$inferSelect;

function effective(s: RunRow, run: JobRow | null | undefined) {
  return effectiveRunStatus(s.status, run);
}

function selectRuns() {
  return db()
    .select({ u: uncertaintyRuns, run: jobRuns, versionNumber: weightSetVersions.version, weightSetId: weightSets.id, setName: weightSets.name, reconstructionName: reconstructions.name })
    .from(uncertaintyRuns)
    .leftJoin(jobRuns, eq(jobRuns.id, uncertaintyRuns.jobRunId))
    .innerJoin(weightSetVersions, eq(weightSetVersions.id, uncertaintyRuns.weightSetVersionId))
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .innerJoin(reconstructions, eq(reconstructions.id, uncertaintyRuns.reconstructionId));
}

type Joined = Awaited<ReturnType<ReturnType<typeof selectRuns>["where"]>>[number];

function withStatus(j: Joined) {
  return { ...j.u, effectiveStatus: effective(j.u, j.run), run: j.run, version: { id: j.u.weightSetVersionId, number: j.versionNumber, weightSetId: j.weightSetId, setName: j.setName }, reconstructionName: j.reconstructionName };
}

export type UncertaintyRunWithStatus = ReturnType<typeof withStatus>;

/** A project's uncertainty runs, newest first. */
export async function listUncertaintyRuns(projectId: number) {
  const rows = await selectRuns().where(eq(uncertaintyRuns.projectId, projectId)).orderBy(desc(uncertaintyRuns.createdAt), desc(uncertaintyRuns.id));
  return rows.map(withStatus);
}

/** One run with its job and names (helper 12's report reads results through this and uncertaintyView). */
export async function getUncertaintyRun(id: number) {
  const [row] = await selectRuns().where(eq(uncertaintyRuns.id, id));
  return row ? withStatus(row) : null;
}

export function uncertaintyAttemptPrefix(projectId: number, runId: number, jobRunId: string, attempt: number) {
  return `uncertainty/p${projectId}/u${runId}/${jobRunId}-a${attempt}`;
}

/** Download paths of a run's rasters (published ones only). */
export function uncertaintyDownloads(s: { id: number; status: string; result: Record<string, unknown> | null }) {
  if (s.status !== "published" || !s.result) return [];
  const files = (s.result.files ?? []) as Array<{ name: string }>;
  return files.filter((f) => (UNCERTAINTY_RASTERS as readonly string[]).includes(f.name)).map((f) => ({ name: f.name, href: `/api/uncertainty/${s.id}/raster/${f.name}` }));
}

/** A run as pages, the API and the report show it. */
export function uncertaintyView(s: UncertaintyRunWithStatus) {
  const target = s.target as unknown as ScoringTarget;
  return {
    id: s.id,
    projectId: s.projectId,
    status: s.effectiveStatus,
    target,
    targetLabel: targetLabel(target),
    params: s.params as unknown as UncertaintyParams,
    version: s.version,
    reconstruction: { id: s.reconstructionId, name: s.reconstructionName },
    inputsHash: s.inputsHash,
    jobId: s.jobRunId,
    job: s.run ? jobRunStatus(s.run) : null,
    progress: s.run ? s.run.fraction : s.status === "published" ? 1 : 0,
    error: s.error ?? (s.effectiveStatus === "failed" ? (s.run?.message ?? null) : null),
    result: s.status === "published" ? s.result : null,
    downloads: uncertaintyDownloads({ id: s.id, status: s.status, result: s.result }),
    createdAt: s.createdAt.toISOString(),
    publishedAt: s.publishedAt?.toISOString() ?? null,
  };
}

/** Publishes a run's result and files — only if this attempt still owns the run. */
export async function publishUncertainty(id: number, jobRunId: string, attempt: number, prefix: string, result: Record<string, unknown>): Promise<boolean> {
  return db().transaction(async (tx) => {
    const rows = await tx
      .update(uncertaintyRuns)
      .set({ status: "published", result, layerPrefix: prefix, publishedAt: new Date(), error: null })
      .where(
        and(
          eq(uncertaintyRuns.id, id),
          eq(uncertaintyRuns.jobRunId, jobRunId),
          eq(uncertaintyRuns.status, "running"),
          attemptMayPublish(jobRunId, attempt),
        ),
      )
      .returning({ id: uncertaintyRuns.id, projectId: uncertaintyRuns.projectId });
    if (rows.length) await recordAudit(tx, { actorUserId: null, projectId: rows[0].projectId, action: "uncertainty.published", detail: { uncertaintyRunId: id, jobRunId, attempt } });
    return rows.length > 0;
  });
}

export async function markUncertaintyEnded(id: number, jobRunId: string, status: "failed" | "cancelled", error: string) {
  await db()
    .update(uncertaintyRuns)
    .set({ status, error })
    .where(and(eq(uncertaintyRuns.id, id), eq(uncertaintyRuns.jobRunId, jobRunId), eq(uncertaintyRuns.status, "running")));
}

/** A published run's raster: bytes and download name. 409 while not published; 404 for an unknown or absent raster. */
export async function uncertaintyRasterDownload(project: { slug: string }, id: number, name: string | undefined) {
  const s = await getUncertaintyRun(id);
  if (!s) throw new UserError(404, "no_such_uncertainty_run", "There is no such uncertainty run.");
  if (!(UNCERTAINTY_RASTERS as readonly string[]).includes(name ?? "")) throw new UserError(404, "no_such_raster", `No raster "${name ?? ""}": an uncertainty run has ${UNCERTAINTY_RASTERS.join(", ")}.`);
  if (s.status !== "published" || !s.layerPrefix || !s.result) throw new UserError(409, "not_published", `Uncertainty run ${s.id} is not published (it is ${s.effectiveStatus}): its rasters can be downloaded once it is.`);
  const files = (s.result.files ?? []) as Array<{ name: string; file: string }>;
  const f = files.find((x) => x.name === name);
  if (!f) throw new UserError(404, "no_such_raster", `Uncertainty run ${s.id} has no ${name} raster (the landscape was not varied in it).`);
  const bytes = await store().getBytes(`${s.layerPrefix}/${f.file}`);
  const slug = project.slug.replace(/[^a-z0-9-]+/gi, "-").slice(0, 60) || "project";
  return { bytes, fileName: `${slug}-uncertainty-${s.id}-${f.name}.tif` };
}
