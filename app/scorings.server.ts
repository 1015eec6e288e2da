// Scorings in the product (design §4): a weight-set version applied to a published reconstruction
// at full resolution, for one of its ages or one of the version's periods, by the scoring job.
// Like reconstructions (decision 009): one row per identical input set, files written per attempt,
// publication in one transaction by the attempt that owns the run.
import { createHash } from "node:crypto";
import { and, desc, eq, inArray } from "drizzle-orm";
import { z } from "zod";
import { db } from "./db.server";
import { datasets, jobRuns, reconstructions, scorings, weightSets, weightSetVersions } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { store } from "./storage.server";
import { enqueueJob, jobRunStatus, effectiveRunStatus, attemptMayPublish } from "./jobs.server";
import { ScoringInputError } from "./scoring/errors";
import { checkPeriodAgainstAges, type PeriodSetting, type WeightSetContent } from "./scoring/weight-set";
import { weightSetContentSchema } from "./weight-set-schema";
import type { Manifest } from "./terrain/reconstruct";
import { displayGridFor } from "./display.server";

/**
 * Bump when the scoring job's output changes meaning for the same inputs (the pipeline, the
 * statistics, the files): identical requests then compute afresh instead of reusing.
 */
export const SCORING_VERSION = "1";

/** The evidence kinds the preservation model reads (cores and interpretations of the horizon). */
export const EVIDENCE_DATASET_KINDS = ["cores", "interpretations"] as const;

/** The rasters a scoring publishes: potential, occupation, and with preservation active its score and the unassessed mask. */
export const SCORING_RASTERS = ["potential", "occupation", "preservation", "unassessed"] as const;
export type ScoringRaster = (typeof SCORING_RASTERS)[number];

const positiveId = (what: string) => z.number({ error: `${what} must be a number.` }).int(`${what} must be a whole number.`).positive(`${what} must be positive.`);

export const scoringRequest = z
  .object({
    reconstructionId: positiveId("reconstructionId"),
    weightSetVersionId: positiveId("weightSetVersionId"),
    target: z.discriminatedUnion(
      "kind",
      [
        z.object({ kind: z.literal("age"), ageKa: z.number({ error: "ageKa must be a number of ka BP." }).refine((v) => Number.isFinite(v), "ageKa must be a finite number of ka BP.") }).strict(),
        z.object({ kind: z.literal("period"), name: z.string({ error: "name must be the name of one of the version's periods." }).trim().min(1, "Give the name of one of the version's periods.").max(120) }).strict(),
      ],
      { error: 'target is { kind: "age", ageKa } or { kind: "period", name }.' },
    ),
  })
  .strict();

export type ScoringRequest = z.infer<typeof scoringRequest>;

/** What a scoring is for, as stored: an age, or a period with its window and rule. */
export type ScoringTarget = { kind: "age"; ageKa: number } | { kind: "period"; name: string; youngKa: number; oldKa: number; rule: PeriodSetting["rule"] };

/** A weight-set version with its set's name and project. */
export async function versionWithSet(versionId: number) {
  const [row] = await db()
    .select({ version: weightSetVersions, setName: weightSets.name, projectId: weightSets.projectId })
    .from(weightSetVersions)
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .where(eq(weightSetVersions.id, versionId));
  return row ?? null;
}

/** A stored version's content, parsed and checked; a content that no longer passes is the user's to fix. */
export function parseVersionContent(content: unknown, label: string): WeightSetContent {
  const r = weightSetContentSchema.safeParse(content);
  if (!r.success) throw new UserError(422, "invalid_weight_set", `${label} does not hold a usable weight set: ${r.error.issues[0]?.message ?? "unreadable"}. Save a corrected version and score that.`);
  return r.data;
}

function formatAges(ages: number[]) {
  return [...ages].sort((a, b) => b - a).map((a) => `${a}`).join(", ") + " ka";
}

/** The SHA-256s of the project's evidence datasets the preservation model reads (sorted). */
async function evidenceFingerprint(projectId: number) {
  const rows = await db()
    .select({ id: datasets.id, kind: datasets.kind, sha256: datasets.sha256 })
    .from(datasets)
    .where(and(eq(datasets.projectId, projectId), inArray(datasets.kind, [...EVIDENCE_DATASET_KINDS])));
  return rows.map((r) => `${r.kind}:${r.sha256}`).sort();
}

/**
 * Checks a scoring request against the project (reconstruction published and the project's, version
 * of one of the project's weight sets, age or period matching the reconstruction's ages) and returns
 * what the job needs and the inputs hash. Throws UserError naming the problem; nothing is written.
 */
export async function resolveScoringRequest(projectId: number, req: ScoringRequest) {
  const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, req.reconstructionId));
  if (!rec || rec.projectId !== projectId) throw new UserError(422, "no_such_reconstruction", `Reconstruction ${req.reconstructionId} is not one of this project's reconstructions.`, "reconstructionId");
  if (rec.status !== "published" || !rec.manifest) throw new UserError(409, "not_published", `Reconstruction ${rec.id} is not published yet (it is ${rec.status}): score it once its layers are published.`, "reconstructionId");
  const manifest = rec.manifest as unknown as Manifest;

  const v = await versionWithSet(req.weightSetVersionId);
  if (!v || v.projectId !== projectId) throw new UserError(422, "no_such_weight_set_version", `Weight-set version ${req.weightSetVersionId} does not belong to a weight set of this project.`, "weightSetVersionId");
  const label = `Version ${v.version.version} of "${v.setName}"`;
  const content = parseVersionContent(v.version.content, label);

  let target: ScoringTarget;
  if (req.target.kind === "age") {
    const ageKa = req.target.ageKa;
    if (!manifest.agesKa.includes(ageKa)) throw new UserError(422, "no_such_age", `${ageKa} ka is not one of the reconstruction's ages (${formatAges(manifest.agesKa)}).`, "target.ageKa");
    target = { kind: "age", ageKa };
  } else {
    const name = req.target.name;
    const period = content.periods.find((p) => p.name.trim() === name);
    if (!period) {
      const names = content.periods.map((p) => `"${p.name}"`);
      throw new UserError(422, "no_such_period", names.length ? `${label} has no period "${name}"; its periods are ${names.join(", ")}.` : `${label} defines no periods: add one to the weight set, or score an age.`, "target.name");
    }
    try {
      checkPeriodAgainstAges(period, manifest.agesKa);
    } catch (e) {
      if (e instanceof ScoringInputError) throw new UserError(422, "period_outside_ages", `${e.message} (The reconstruction's ages: ${formatAges(manifest.agesKa)}.)`, "target.name");
      throw e;
    }
    target = { kind: "period", name: period.name, youngKa: period.youngKa, oldKa: period.oldKa, rule: period.rule };
  }

  const evidence = content.preservation.enabled ? await evidenceFingerprint(projectId) : [];
  const displayStep = displayGridFor(manifest.grid).step;
  const fingerprint = {
    scoring: SCORING_VERSION,
    reconstruction: rec.inputsHash,
    engine: rec.engineVersion,
    weights: v.version.contentHash,
    target,
    evidence,
    // The job's display check is made on the display grid: a different reduction is a different
    // scoring. Left out at step 1, so scorings of grids within the display side keep their keys.
    ...(displayStep > 1 ? { displayStep } : {}),
  };
  const inputsHash = createHash("sha256").update(JSON.stringify(fingerprint)).digest("hex");
  return { reconstruction: rec, manifest, version: v.version, setName: v.setName, content, target, inputsHash };
}

/**
 * Starts a scoring, or returns the existing one for identical inputs (a failed or cancelled one is
 * started again on the same row). Throws UserError for a bad request; nothing is written then.
 */
export async function startScoring(project: { id: number }, userId: number, req: ScoringRequest, meta: { clientAddress?: string } = {}) {
  const r = await resolveScoringRequest(project.id, req);
  const ages = r.target.kind === "age" ? 1 : r.manifest.agesKa.length;
  const workSize = r.manifest.grid.width * r.manifest.grid.height * (ages + 1);
  return db().transaction(async (tx) => {
    const inserted = await tx
      .insert(scorings)
      .values({ projectId: project.id, reconstructionId: r.reconstruction.id, weightSetVersionId: r.version.id, target: r.target, inputsHash: r.inputsHash, createdBy: userId })
      .onConflictDoNothing({ target: [scorings.projectId, scorings.inputsHash] })
      .returning();
    let row = inserted[0];
    if (!row) {
      [row] = await tx.select().from(scorings).where(and(eq(scorings.projectId, project.id), eq(scorings.inputsHash, r.inputsHash))).for("update");
      const run = row.jobRunId ? (await tx.select().from(jobRuns).where(eq(jobRuns.id, row.jobRunId)))[0] : undefined;
      const ended = !run || run.state === "failed" || run.state === "cancelled";
      if (row.status === "published" || (row.status === "running" && !ended)) return { scoring: row, reused: true };
      [row] = await tx.update(scorings).set({ status: "running", error: null, result: null, layerPrefix: null, publishedAt: null }).where(eq(scorings.id, row.id)).returning();
    }
    const jobRunId = await enqueueJob({ kind: "scoring", projectId: project.id, startedBy: userId, payload: { scoringId: row.id }, workSize }, tx);
    [row] = await tx.update(scorings).set({ jobRunId }).where(eq(scorings.id, row.id)).returning();
    await recordAudit(tx, {
      actorUserId: userId,
      projectId: project.id,
      action: "scoring.started",
      detail: { scoringId: row.id, jobRunId, reconstructionId: r.reconstruction.id, weightSetVersionId: r.version.id, weightSet: r.setName, version: r.version.version, target: r.target },
      clientAddress: meta.clientAddress,
    });
    return { scoring: row, reused: false };
  });
}

type ScoringRow = typeof scorings.$inferSelect;
type RunRow = typeof jobRuns.$inferSelect;

/** The status people see: a run whose job ended without publishing reads as failed or cancelled. */
export function scoringStatus(s: ScoringRow, run: RunRow | null | undefined) {
  return effectiveRunStatus(s.status, run);
}

function selectScorings() {
  return db()
    .select({ s: scorings, run: jobRuns, versionNumber: weightSetVersions.version, weightSetId: weightSets.id, setName: weightSets.name, reconstructionName: reconstructions.name })
    .from(scorings)
    .leftJoin(jobRuns, eq(jobRuns.id, scorings.jobRunId))
    .innerJoin(weightSetVersions, eq(weightSetVersions.id, scorings.weightSetVersionId))
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .innerJoin(reconstructions, eq(reconstructions.id, scorings.reconstructionId));
}

type Joined = Awaited<ReturnType<ReturnType<typeof selectScorings>["where"]>>[number];

function withStatus(j: Joined) {
  return { ...j.s, effectiveStatus: scoringStatus(j.s, j.run), run: j.run, version: { id: j.s.weightSetVersionId, number: j.versionNumber, weightSetId: j.weightSetId, setName: j.setName }, reconstructionName: j.reconstructionName };
}

export type ScoringWithRun = ReturnType<typeof withStatus>;

/** A project's scorings, newest first. */
export async function listScorings(projectId: number) {
  const rows = await selectScorings().where(eq(scorings.projectId, projectId)).orderBy(desc(scorings.createdAt), desc(scorings.id));
  return rows.map(withStatus);
}

export async function getScoring(id: number) {
  const [row] = await selectScorings().where(eq(scorings.id, id));
  return row ? withStatus(row) : null;
}

/** Words for a target, for pages and file names: "12 ka" or "period Early Mesolithic (9–11.5 ka)". */
export function targetLabel(t: ScoringTarget): string {
  return t.kind === "age" ? `${t.ageKa} ka` : `period ${t.name} (${t.youngKa}–${t.oldKa} ka)`;
}

/** The attempt-specific prefix under which a scoring attempt writes its files. */
export function scoringAttemptPrefix(projectId: number, scoringId: number, runId: string, attempt: number) {
  return `scorings/p${projectId}/s${scoringId}/${runId}-a${attempt}`;
}

/** The file a published scoring raster lives in (under its layer prefix). */
export function scoringFileName(name: ScoringRaster): string {
  return `${name}.tif`;
}

/**
 * Publishes a scoring's result and files — only if this attempt still owns the run (the run is the
 * scoring's current job and its current attempt is this one). Returns false when another took over.
 */
export async function publishScoring(scoringId: number, runId: string, attempt: number, prefix: string, result: Record<string, unknown>): Promise<boolean> {
  return db().transaction(async (tx) => {
    const rows = await tx
      .update(scorings)
      .set({ status: "published", result, layerPrefix: prefix, publishedAt: new Date(), error: null })
      .where(
        and(
          eq(scorings.id, scoringId),
          eq(scorings.jobRunId, runId),
          eq(scorings.status, "running"),
          attemptMayPublish(runId, attempt),
        ),
      )
      .returning({ id: scorings.id, projectId: scorings.projectId });
    if (rows.length) await recordAudit(tx, { actorUserId: null, projectId: rows[0].projectId, action: "scoring.published", detail: { scoringId, runId, attempt } });
    return rows.length > 0;
  });
}

export async function markScoringEnded(scoringId: number, runId: string, status: "failed" | "cancelled", error: string) {
  await db()
    .update(scorings)
    .set({ status, error })
    .where(and(eq(scorings.id, scoringId), eq(scorings.jobRunId, runId), eq(scorings.status, "running")));
}

/** Download paths of a scoring's rasters (published ones only). */
export function scoringDownloads(s: { id: number; status: string; result: Record<string, unknown> | null }) {
  if (s.status !== "published" || !s.result) return [];
  const files = (s.result.files ?? []) as Array<{ name: string }>;
  return files.filter((f) => (SCORING_RASTERS as readonly string[]).includes(f.name)).map((f) => ({ name: f.name, href: `/api/scorings/${s.id}/raster/${f.name}` }));
}

/** A scoring as pages and the API show it. */
export function scoringView(s: ScoringWithRun) {
  const target = s.target as unknown as ScoringTarget;
  return {
    id: s.id,
    projectId: s.projectId,
    status: s.effectiveStatus,
    target,
    targetLabel: targetLabel(target),
    version: s.version,
    reconstruction: { id: s.reconstructionId, name: s.reconstructionName },
    inputsHash: s.inputsHash,
    jobId: s.jobRunId,
    job: s.run ? jobRunStatus(s.run) : null,
    progress: s.run ? s.run.fraction : s.status === "published" ? 1 : 0,
    error: s.error ?? (s.effectiveStatus === "failed" ? (s.run?.message ?? null) : null),
    result: s.status === "published" ? s.result : null,
    downloads: scoringDownloads({ id: s.id, status: s.status, result: s.result }),
    createdAt: s.createdAt.toISOString(),
    publishedAt: s.publishedAt?.toISOString() ?? null,
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

/** The download's file name: project, scoring, target and raster, ASCII only (a header value). */
export function scoringRasterFileName(project: { slug: string }, scoringId: number, target: ScoringTarget, name: string): string {
  const t = target.kind === "age" ? `${String(target.ageKa).replace(".", "p")}ka` : `period-${slug(target.name)}`;
  return `${slug(project.slug)}-scoring-${scoringId}-${t}-${name}.tif`;
}

/**
 * A published scoring's raster: its bytes and download name. 409 while the scoring is not
 * published; 404 for a name that is not one of its rasters (preservation only when it was active).
 */
export async function scoringRasterDownload(project: { slug: string }, scoringId: number, name: string | undefined) {
  const s = await getScoring(scoringId);
  if (!s) throw new UserError(404, "no_such_scoring", "There is no such scoring.");
  if (!(SCORING_RASTERS as readonly string[]).includes(name ?? "")) throw new UserError(404, "no_such_raster", `No raster "${name ?? ""}": a scoring has ${SCORING_RASTERS.join(", ")}.`);
  if (s.status !== "published" || !s.layerPrefix || !s.result) throw new UserError(409, "not_published", `Scoring ${s.id} is not published (it is ${s.effectiveStatus}): its rasters can be downloaded once it is.`);
  const files = (s.result.files ?? []) as Array<{ name: string; file: string }>;
  const f = files.find((x) => x.name === name);
  if (!f) throw new UserError(404, "no_such_raster", `Scoring ${s.id} has no ${name} raster: ${(s.result as { preservation?: { reason?: string } }).preservation?.reason ?? "preservation was not active"}`);
  const bytes = await store().getBytes(`${s.layerPrefix}/${f.file}`);
  return { bytes, fileName: scoringRasterFileName(project, s.id, s.target as unknown as ScoringTarget, f.name) };
}
