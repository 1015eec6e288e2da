// Reviews (design §7, issue 12): a reviewer freezes a snapshot — the reconstruction, the weight-set
// version (through a published scoring of it) or a trained model, the project classification, an
// optional uncertainty run, the exclusion buffers, the project's datasets, and the SHA-256 of every
// file they published — under one content hash; the team discusses it in threaded comments; the
// reviewer signs a decision by re-entering their password. Everything a review refers to becomes
// undeletable (`referencedByReview`), and every figure of a review's report is read from the frozen
// ids and checked against the frozen checksums, never from "the newest".
// Mail to the project's leads is queued in the same transaction as the change (mail.server.ts).
import { createHash } from "node:crypto";
import argon2 from "argon2";
import { and, asc, desc, eq, ne, sql } from "drizzle-orm";
import { z } from "zod";
import { db, type Db } from "./db.server";
import {
  datasets,
  exclusionSettings,
  memberships,
  models,
  projects,
  reconstructions,
  reviewComments,
  reviews,
  scorings,
  uncertaintyRuns,
  users,
  weightSets,
  weightSetVersions,
} from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { kickMailDispatcher, queueMail } from "./mail.server";
import { absoluteUrl } from "./security.server";
import { recordSignInAttempt, signInWaitSeconds } from "./throttle.server";
import { can, type Role } from "./permissions";
import { canonicalJson } from "./weight-sets.server";
import { targetLabel, type ScoringTarget } from "./scorings.server";
import type { Manifest } from "./terrain/reconstruct";

/** Bump when the snapshot's shape changes; old snapshots keep their own format number. */
export const SNAPSHOT_FORMAT = 1;

export const REVIEW_DECISIONS = ["accepted", "accepted_with_conditions", "changes_requested"] as const;
export type ReviewDecision = (typeof REVIEW_DECISIONS)[number];

export const DECISION_WORDS: Record<ReviewDecision, string> = {
  accepted: "accepted",
  accepted_with_conditions: "accepted with conditions",
  changes_requested: "changes requested",
};

/** What a review can refer to (the `kind` of `referencedByReview`). */
export type ReviewRefKind = "reconstruction" | "weight_set" | "weight_set_version" | "scoring" | "model" | "uncertainty_run" | "dataset";

const REF_WORDS: Record<ReviewRefKind, string> = {
  reconstruction: "reconstruction",
  weight_set: "weight set",
  weight_set_version: "weight-set version",
  scoring: "scoring",
  model: "model",
  uncertainty_run: "uncertainty run",
  dataset: "dataset",
};

export interface SnapshotFile {
  name: string;
  sha256: string;
  bytes?: number;
}

/** Everything a review froze. Its canonical JSON's SHA-256 is the review's `snapshotHash`. */
export interface ReviewSnapshot {
  format: number;
  project: { id: number; name: string; crsEpsg: number };
  reconstruction: {
    id: number;
    name: string;
    inputsHash: string;
    engineVersion: string;
    agesKa: number[];
    grid: { width: number; height: number; originX: number; originY: number; cellSizeX: number; cellSizeY: number };
    publishedAt: string | null;
    /** SHA-256 of the manifest's canonical JSON (its layers' files and statistics) */
    manifestSha256: string;
    layers: number;
  };
  subject:
    | { kind: "weights"; weightSet: { id: number; name: string }; version: { id: number; number: number; contentHash: string } }
    | { kind: "model"; model: { id: number; name: string; inputsHash: string; publishedAt: string | null; files: SnapshotFile[] } };
  scoring: { id: number; inputsHash: string; target: ScoringTarget; targetLabel: string; publishedAt: string | null; files: SnapshotFile[]; displayChecksum: string | null } | null;
  classification: Record<string, unknown>;
  uncertaintyRun: { id: number; inputsHash: string; target: Record<string, unknown>; params: Record<string, unknown>; publishedAt: string | null; files: SnapshotFile[] } | null;
  exclusionBuffersM: Record<string, number> | null;
  datasets: { id: number; kind: string; name: string; originalName: string; sha256: string; sizeBytes: number; crsEpsg: number; count: number }[];
  /** every row the review refers to, for `referencedByReview` (jsonb containment) */
  refs: { kind: ReviewRefKind; id: number }[];
}

/** Hex SHA-256 of the snapshot's canonical JSON (sorted keys): what the signature covers. */
export function snapshotHash(snapshot: ReviewSnapshot | Record<string, unknown>): string {
  return createHash("sha256").update(canonicalJson(snapshot)).digest("hex");
}

// ---------------------------------------------------------------------------------------------
// Input rules

const rowId = (what: string) => z.number({ error: `${what} must be a number.` }).int(`${what} must be a whole number.`).positive(`${what} must be positive.`);

export const reviewRequest = z
  .object({
    title: z.string({ error: "Give the review a title." }).trim().min(1, "Give the review a title.").max(160, "Keep the title under 160 characters."),
    scoringId: rowId("scoringId").optional(),
    modelId: rowId("modelId").optional(),
    uncertaintyRunId: rowId("uncertaintyRunId").optional(),
  })
  .strict()
  .refine((r) => (r.scoringId === undefined) !== (r.modelId === undefined), {
    message: "Review either a published scoring (scoringId: a weight-set version on a reconstruction) or a published model (modelId), one of the two.",
    path: ["scoringId"],
  });
export type ReviewRequest = z.infer<typeof reviewRequest>;

export const commentRequest = z
  .object({
    body: z.string({ error: "Write the comment." }).trim().min(1, "Write the comment.").max(4000, "Keep a comment under 4000 characters."),
    parentId: rowId("parentId").nullish(),
  })
  .strict();
export type CommentRequest = z.infer<typeof commentRequest>;

const conditionText = z.string({ error: "A condition is a sentence." }).trim().min(1, "A condition cannot be empty.").max(1000, "Keep a condition under 1000 characters.");

export const decisionRequest = z
  .object({
    decision: z.enum(REVIEW_DECISIONS, { error: `decision is one of: ${REVIEW_DECISIONS.join(", ")}.` }),
    conditions: z.array(conditionText).max(30, "List at most 30 conditions.").default([]),
    note: z.string().trim().max(8000, "Keep the note under 8000 characters.").default(""),
    password: z.string({ error: "Re-enter your password to sign." }).min(1, "Re-enter your password to sign.").max(200, "That password is too long."),
  })
  .strict()
  .superRefine((d, ctx) => {
    if (d.decision === "accepted_with_conditions" && d.conditions.length === 0)
      ctx.addIssue({ code: "custom", path: ["conditions"], message: "Accepting with conditions needs at least one condition: list each one." });
    if (d.decision !== "accepted_with_conditions" && d.conditions.length > 0)
      ctx.addIssue({ code: "custom", path: ["conditions"], message: `Conditions belong to "accepted with conditions"; choose that decision, or remove the conditions.` });
    if (d.decision === "changes_requested" && d.note === "")
      ctx.addIssue({ code: "custom", path: ["note"], message: "Say which changes you request in the note." });
  });
export type DecisionRequest = z.infer<typeof decisionRequest>;

/** Who may join a review's discussion: those who sign reviews and those who run the analyses (not viewers). */
export function mayComment(role: Role | null | undefined): boolean {
  return can(role, "discussion.comment");
}

// ---------------------------------------------------------------------------------------------
// Freezing a snapshot

function filesOf(result: Record<string, unknown> | null | undefined): SnapshotFile[] {
  const files = (result?.files ?? []) as Array<{ name?: unknown; sha256?: unknown; bytes?: unknown }>;
  if (!Array.isArray(files)) return [];
  return files
    .filter((f) => typeof f?.name === "string" && typeof f?.sha256 === "string")
    .map((f) => ({ name: String(f.name), sha256: String(f.sha256), ...(typeof f.bytes === "number" ? { bytes: f.bytes } : {}) }))
    .sort((a, b) => a.name.localeCompare(b.name));
}

/**
 * Builds the snapshot of a review request: every referenced row must be this project's and
 * published. Throws UserError naming the problem; reads only.
 */
export async function buildSnapshot(projectId: number, req: ReviewRequest, database: Pick<Db, "select"> = db()): Promise<ReviewSnapshot> {
  const [project] = await database.select().from(projects).where(eq(projects.id, projectId));
  if (!project) throw new UserError(404, "no_such_project", "There is no such project.");
  const refs: ReviewSnapshot["refs"] = [];

  let reconstructionId: number;
  let subject: ReviewSnapshot["subject"];
  let scoring: ReviewSnapshot["scoring"] = null;
  if (req.scoringId !== undefined) {
    const [row] = await database
      .select({ s: scorings, version: weightSetVersions, setName: weightSets.name })
      .from(scorings)
      .innerJoin(weightSetVersions, eq(weightSetVersions.id, scorings.weightSetVersionId))
      .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
      .where(eq(scorings.id, req.scoringId));
    if (!row || row.s.projectId !== projectId) throw new UserError(422, "no_such_scoring", `Scoring ${req.scoringId} is not one of this project's scorings.`, "scoringId");
    if (row.s.status !== "published" || !row.s.result) throw new UserError(409, "not_published", `Scoring ${row.s.id} is not published (it is ${row.s.status}): review it once it is.`, "scoringId");
    const target = row.s.target as unknown as ScoringTarget;
    const display = (row.s.result as { displayChecksum?: { checksum?: string } }).displayChecksum?.checksum ?? null;
    scoring = { id: row.s.id, inputsHash: row.s.inputsHash, target, targetLabel: targetLabel(target), publishedAt: row.s.publishedAt?.toISOString() ?? null, files: filesOf(row.s.result), displayChecksum: display };
    subject = { kind: "weights", weightSet: { id: row.version.weightSetId, name: row.setName }, version: { id: row.version.id, number: row.version.version, contentHash: row.version.contentHash } };
    reconstructionId = row.s.reconstructionId;
    refs.push({ kind: "scoring", id: row.s.id }, { kind: "weight_set", id: row.version.weightSetId }, { kind: "weight_set_version", id: row.version.id });
  } else {
    const [m] = await database.select().from(models).where(eq(models.id, req.modelId!));
    if (!m || m.projectId !== projectId) throw new UserError(422, "no_such_model", `Model ${req.modelId} is not one of this project's models.`, "modelId");
    if (m.status !== "published") throw new UserError(409, "not_published", `Model ${m.id} is not published (it is ${m.status}): review it once it is.`, "modelId");
    subject = { kind: "model", model: { id: m.id, name: m.name, inputsHash: m.inputsHash, publishedAt: m.publishedAt?.toISOString() ?? null, files: filesOf(m.result) } };
    reconstructionId = m.reconstructionId;
    refs.push({ kind: "model", id: m.id });
  }

  const [rec] = await database.select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
  if (!rec || rec.status !== "published" || !rec.manifest) throw new UserError(409, "not_published", `Reconstruction ${reconstructionId} is not published: there is nothing to review yet.`);
  const manifest = rec.manifest as unknown as Manifest;
  const g = manifest.grid;
  refs.push({ kind: "reconstruction", id: rec.id });

  let uncertaintyRun: ReviewSnapshot["uncertaintyRun"] = null;
  if (req.uncertaintyRunId !== undefined) {
    const [u] = await database.select().from(uncertaintyRuns).where(eq(uncertaintyRuns.id, req.uncertaintyRunId));
    if (!u || u.projectId !== projectId) throw new UserError(422, "no_such_uncertainty_run", `Uncertainty run ${req.uncertaintyRunId} is not one of this project's runs.`, "uncertaintyRunId");
    if (u.status !== "published") throw new UserError(409, "not_published", `Uncertainty run ${u.id} is not published (it is ${u.status}).`, "uncertaintyRunId");
    if (u.reconstructionId !== rec.id) throw new UserError(422, "uncertainty_elsewhere", `Uncertainty run ${u.id} was made on reconstruction ${u.reconstructionId}, not on ${rec.id} which this review looks at.`, "uncertaintyRunId");
    if (subject.kind === "weights" && u.weightSetVersionId !== subject.version.id)
      throw new UserError(422, "uncertainty_elsewhere", `Uncertainty run ${u.id} varies weight-set version ${u.weightSetVersionId}, not the version this scoring used (${subject.version.id}).`, "uncertaintyRunId");
    uncertaintyRun = { id: u.id, inputsHash: u.inputsHash, target: u.target, params: u.params, publishedAt: u.publishedAt?.toISOString() ?? null, files: filesOf(u.result) };
    refs.push({ kind: "uncertainty_run", id: u.id });
  }

  const ds = await database
    .select({ id: datasets.id, kind: datasets.kind, name: datasets.name, originalName: datasets.originalName, sha256: datasets.sha256, sizeBytes: datasets.sizeBytes, crsEpsg: datasets.crsEpsg, count: datasets.count })
    .from(datasets)
    .where(eq(datasets.projectId, projectId))
    .orderBy(asc(datasets.id));
  for (const d of ds) refs.push({ kind: "dataset", id: d.id });
  const [buffers] = await database.select({ b: exclusionSettings.buffersM }).from(exclusionSettings).where(eq(exclusionSettings.projectId, projectId));

  return {
    format: SNAPSHOT_FORMAT,
    project: { id: project.id, name: project.name, crsEpsg: project.crsEpsg },
    reconstruction: {
      id: rec.id,
      name: rec.name,
      inputsHash: rec.inputsHash,
      engineVersion: rec.engineVersion,
      agesKa: [...manifest.agesKa],
      grid: { width: g.width, height: g.height, originX: g.originX, originY: g.originY, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY },
      publishedAt: rec.publishedAt?.toISOString() ?? null,
      manifestSha256: createHash("sha256").update(canonicalJson(rec.manifest)).digest("hex"),
      layers: manifest.layers.length,
    },
    subject,
    scoring,
    classification: (project.classification ?? {}) as Record<string, unknown>,
    uncertaintyRun,
    exclusionBuffersM: buffers?.b ?? null,
    datasets: ds,
    refs,
  };
}

// ---------------------------------------------------------------------------------------------
// Mail to the project's leads

async function leadsToTell(tx: Pick<Db, "select">, projectId: number, exceptUserId: number) {
  return tx
    .select({ email: users.email, name: users.name })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.projectId, projectId), eq(memberships.role, "lead"), ne(users.id, exceptUserId)))
    .orderBy(asc(users.id));
}

async function tellLeads(tx: Pick<Db, "select" | "insert">, projectId: number, actorId: number, subject: string, text: string) {
  for (const lead of await leadsToTell(tx, projectId, actorId)) await queueMail(tx, { to: lead.email, subject, text: `Hello ${lead.name},\n\n${text}` });
}

function reviewLink(projectId: number, reviewId: number) {
  return absoluteUrl(`/projects/${projectId}/reviews/${reviewId}`);
}

// ---------------------------------------------------------------------------------------------
// Opening, reading, commenting, deciding

interface Actor {
  id: number;
  name: string;
}

/** Opens a review on a frozen snapshot; tells the leads. Throws UserError for a bad request (nothing stored). */
export async function openReview(projectId: number, actor: Actor, req: ReviewRequest, meta: { clientAddress?: string } = {}) {
  const row = await db().transaction(async (tx) => {
    const snapshot = await buildSnapshot(projectId, req, tx);
    const hash = snapshotHash(snapshot);
    const [r] = await tx
      .insert(reviews)
      .values({ projectId, title: req.title, snapshot: snapshot as unknown as Record<string, unknown>, snapshotHash: hash, createdBy: actor.id })
      .returning();
    await recordAudit(tx, { actorUserId: actor.id, projectId, action: "review.opened", detail: { reviewId: r.id, title: r.title, snapshotHash: hash, refs: snapshot.refs.filter((x) => x.kind !== "dataset") }, clientAddress: meta.clientAddress });
    const what = snapshot.subject.kind === "weights" ? `weight set "${snapshot.subject.weightSet.name}" version ${snapshot.subject.version.number} (scoring ${snapshot.scoring!.id}, ${snapshot.scoring!.targetLabel})` : `model "${snapshot.subject.model.name || `#${snapshot.subject.model.id}`}"`;
    await tellLeads(
      tx,
      projectId,
      actor.id,
      `Review requested: ${r.title} (${snapshot.project.name})`,
      `${actor.name} opened the review "${r.title}" on ${what}, reconstruction "${snapshot.reconstruction.name || `#${snapshot.reconstruction.id}`}".\n` +
        `What it looks at is frozen under snapshot hash ${hash}: none of it can be deleted while the review exists.\n\n` +
        `Read it and join the discussion:\n${reviewLink(projectId, r.id)}\n`,
    );
    return r;
  });
  kickMailDispatcher();
  return row;
}

type ReviewRow = typeof reviews.$inferSelect;

export async function getReviewRow(id: number): Promise<ReviewRow | null> {
  const [r] = await db().select().from(reviews).where(eq(reviews.id, id));
  return r ?? null;
}

/** A project's reviews, newest first, with who opened and who signed. */
export async function listReviews(projectId: number) {
  const rows = await db()
    .select({ r: reviews, openedBy: users.name, comments: sql<number>`(select count(*)::int from ${reviewComments} where ${reviewComments.reviewId} = ${reviews.id})` })
    .from(reviews)
    .leftJoin(users, eq(users.id, reviews.createdBy))
    .where(eq(reviews.projectId, projectId))
    .orderBy(desc(reviews.createdAt), desc(reviews.id));
  return rows.map((x) => ({ ...reviewSummary(x.r, x.openedBy), comments: Number(x.comments) }));
}

/**
 * The digest of a signed decision: SHA-256 over the canonical JSON of the review id, the snapshot
 * hash, the decision, its conditions and note, the signer's id and name and the signing time — so a
 * reader can recompute that the stored decision is the one signed.
 */
export function signatureDigest(r: Pick<ReviewRow, "id" | "snapshotHash" | "decision" | "conditions" | "decisionNote" | "signedBy" | "signedName" | "signedAt">): string | null {
  if (!r.decision || !r.signedAt) return null;
  return createHash("sha256")
    .update(canonicalJson({ reviewId: r.id, snapshotHash: r.snapshotHash, decision: r.decision, conditions: r.conditions, note: r.decisionNote, signedBy: r.signedBy, signedName: r.signedName, signedAt: r.signedAt.toISOString() }))
    .digest("hex");
}

function reviewSummary(r: ReviewRow, openedBy: string | null) {
  const s = r.snapshot as unknown as ReviewSnapshot;
  return {
    id: r.id,
    projectId: r.projectId,
    title: r.title,
    status: r.status,
    snapshotHash: r.snapshotHash,
    subject: s.subject.kind === "weights" ? `${s.subject.weightSet.name} · version ${s.subject.version.number}` : `model ${s.subject.model.name || `#${s.subject.model.id}`}`,
    target: s.scoring?.targetLabel ?? null,
    reconstruction: s.reconstruction.name || `reconstruction ${s.reconstruction.id}`,
    openedBy,
    createdAt: r.createdAt.toISOString(),
    decision: r.decision,
    decisionWords: r.decision ? DECISION_WORDS[r.decision] : null,
    signedName: r.signedName,
    signedAt: r.signedAt?.toISOString() ?? null,
  };
}

/** One review as the API and pages show it: snapshot (verified against its hash), decision, comments in threads. */
export async function reviewView(r: ReviewRow) {
  const [opener] = r.createdBy ? await db().select({ name: users.name }).from(users).where(eq(users.id, r.createdBy)) : [];
  const comments = await db()
    .select({ id: reviewComments.id, parentId: reviewComments.parentId, body: reviewComments.body, createdAt: reviewComments.createdAt, userId: reviewComments.userId, name: users.name })
    .from(reviewComments)
    .leftJoin(users, eq(users.id, reviewComments.userId))
    .where(eq(reviewComments.reviewId, r.id))
    .orderBy(asc(reviewComments.createdAt), asc(reviewComments.id));
  const snapshot = r.snapshot as unknown as ReviewSnapshot;
  return {
    ...reviewSummary(r, opener?.name ?? null),
    snapshot,
    /** the stored snapshot still hashes to the stored hash */
    snapshotVerified: snapshotHash(snapshot) === r.snapshotHash,
    conditions: r.conditions,
    decisionNote: r.decisionNote,
    signature: r.decision ? { name: r.signedName, userId: r.signedBy, at: r.signedAt?.toISOString() ?? null, snapshotHash: r.snapshotHash, digest: signatureDigest(r) } : null,
    comments: comments.map((c) => ({ id: c.id, parentId: c.parentId, body: c.body, author: c.name ?? "a former member", createdAt: c.createdAt.toISOString() })),
  };
}
export type ReviewView = Awaited<ReturnType<typeof reviewView>>;

/** Adds a comment (or a reply) to an open review; tells the leads. */
export async function addReviewComment(review: ReviewRow, actor: Actor, req: CommentRequest, meta: { clientAddress?: string } = {}) {
  const row = await db().transaction(async (tx) => {
    const [current] = await tx.select({ status: reviews.status }).from(reviews).where(eq(reviews.id, review.id)).for("share");
    if (!current) throw new UserError(404, "no_such_review", "There is no such review.");
    if (current.status !== "open") throw new UserError(409, "review_decided", "This review is decided and signed: it is read-only now. Open a new review to discuss further.");
    if (req.parentId != null) {
      const [parent] = await tx.select({ id: reviewComments.id }).from(reviewComments).where(and(eq(reviewComments.id, req.parentId), eq(reviewComments.reviewId, review.id)));
      if (!parent) throw new UserError(422, "no_such_comment", `Comment ${req.parentId} is not a comment of this review: reply to one that is.`, "parentId");
    }
    const [c] = await tx.insert(reviewComments).values({ reviewId: review.id, parentId: req.parentId ?? null, userId: actor.id, body: req.body }).returning();
    await recordAudit(tx, { actorUserId: actor.id, projectId: review.projectId, action: "review.commented", detail: { reviewId: review.id, commentId: c.id, parentId: c.parentId }, clientAddress: meta.clientAddress });
    const excerpt = req.body.length > 600 ? `${req.body.slice(0, 600)}…` : req.body;
    await tellLeads(tx, review.projectId, actor.id, `New comment on the review "${review.title}"`, `${actor.name} ${req.parentId != null ? "replied" : "commented"} on the review "${review.title}":\n\n${excerpt.replace(/^/gm, "> ")}\n\nRead the thread:\n${reviewLink(review.projectId, review.id)}\n`);
    return c;
  });
  kickMailDispatcher();
  return { id: row.id, parentId: row.parentId, body: row.body, author: actor.name, createdAt: row.createdAt.toISOString() };
}

/**
 * Signs a decision on an open review: the signer re-enters their password (throttled like sign-in,
 * and counted with it); a wrong password is refused (403) and nothing about the review changes.
 * The decision is stored with the signer's name, the time and the snapshot hash; the leads are told.
 */
export async function decideReview(review: ReviewRow, signer: Actor & { email: string }, req: DecisionRequest, meta: { clientAddress?: string } = {}) {
  if (review.status !== "open") throw new UserError(409, "review_decided", "This review is already decided and signed; a signed decision does not change. Open a new review if the work changed.", "decision");
  const clientAddress = meta.clientAddress ?? "";
  const wait = await signInWaitSeconds(signer.email, clientAddress);
  if (wait > 0) throw new UserError(429, "too_many_attempts", `Too many password attempts. Wait ${wait} second${wait === 1 ? "" : "s"}, then sign again.`, "password");
  const [u] = await db().select({ hash: users.passwordHash }).from(users).where(eq(users.id, signer.id));
  const ok = !!u?.hash && (await argon2.verify(u.hash, req.password).catch(() => false));
  await recordSignInAttempt(signer.email, clientAddress, ok);
  if (!ok) throw new UserError(403, "signature_refused", "That password is not yours: the decision was not signed and nothing was stored. Re-enter your own sign-in password.", "password");

  const row = await db().transaction(async (tx) => {
    const signedAt = new Date();
    const [r] = await tx
      .update(reviews)
      .set({ status: "decided", decision: req.decision, conditions: req.decision === "accepted_with_conditions" ? req.conditions : [], decisionNote: req.note, signedBy: signer.id, signedName: signer.name, signedAt })
      .where(and(eq(reviews.id, review.id), eq(reviews.status, "open"), eq(reviews.snapshotHash, review.snapshotHash)))
      .returning();
    if (!r) throw new UserError(409, "review_decided", "Someone signed this review a moment ago; a signed decision does not change. Reload to read it.", "decision");
    await recordAudit(tx, {
      actorUserId: signer.id,
      projectId: r.projectId,
      action: "review.decided",
      detail: { reviewId: r.id, decision: r.decision, conditions: r.conditions, snapshotHash: r.snapshotHash, signatureDigest: signatureDigest(r) },
      clientAddress,
    });
    const conditions = r.conditions.length ? `\nConditions:\n${r.conditions.map((c, i) => `  ${i + 1}. ${c}`).join("\n")}\n` : "";
    await tellLeads(
      tx,
      r.projectId,
      signer.id,
      `Review decided: ${r.title} — ${DECISION_WORDS[r.decision!]}`,
      `${signer.name} signed the review "${r.title}": ${DECISION_WORDS[r.decision!]}.\n${conditions}${r.decisionNote ? `\nNote:\n${r.decisionNote}\n` : ""}\n` +
        `Signed ${signedAt.toISOString()} over snapshot hash ${r.snapshotHash}.\n\nThe review and its printable report:\n${reviewLink(r.projectId, r.id)}\n`,
    );
    return r;
  });
  kickMailDispatcher();
  return row;
}

// ---------------------------------------------------------------------------------------------
// Keeping what reviews refer to

type Selector = Pick<Db, "select">;

/**
 * Refuses (throws a 409 UserError naming the review) when any review — open or decided — refers to
 * the row `kind` `id`; returns quietly otherwise. Delete paths call it inside their transaction
 * (pass `tx`), before deleting: a review's snapshot must keep pointing at something.
 */
export async function referencedByReview(kind: ReviewRefKind, id: number, database: Selector = db()): Promise<void> {
  const probe = JSON.stringify([{ kind, id }]);
  const rows = await database
    .select({ id: reviews.id, title: reviews.title, status: reviews.status })
    .from(reviews)
    .where(sql`${reviews.snapshot}->'refs' @> ${probe}::jsonb`)
    .orderBy(asc(reviews.id))
    .limit(4);
  if (!rows.length) return;
  const named = rows.slice(0, 3).map((r) => `review #${r.id} “${r.title}” (${r.status})`);
  const more = rows.length > 3 ? " and others" : "";
  throw new UserError(409, "referenced_by_review", `This ${REF_WORDS[kind]} cannot be deleted: ${named.join(", ")}${more} refer${rows.length === 1 ? "s" : ""} to it, and a review keeps what it looked at.`);
}

/** What a review can be opened on: the project's published scorings, models and uncertainty runs, newest first. */
export async function reviewCandidates(projectId: number) {
  const sc = await db()
    .select({ id: scorings.id, target: scorings.target, version: weightSetVersions.version, setName: weightSets.name, reconstruction: reconstructions.name, reconstructionId: reconstructions.id, publishedAt: scorings.publishedAt })
    .from(scorings)
    .innerJoin(weightSetVersions, eq(weightSetVersions.id, scorings.weightSetVersionId))
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .innerJoin(reconstructions, eq(reconstructions.id, scorings.reconstructionId))
    .where(and(eq(scorings.projectId, projectId), eq(scorings.status, "published")))
    .orderBy(desc(scorings.publishedAt), desc(scorings.id));
  const ms = await db()
    .select({ id: models.id, name: models.name, reconstructionId: models.reconstructionId })
    .from(models)
    .where(and(eq(models.projectId, projectId), eq(models.status, "published")))
    .orderBy(desc(models.id));
  const us = await db()
    .select({ id: uncertaintyRuns.id, target: uncertaintyRuns.target, reconstructionId: uncertaintyRuns.reconstructionId, weightSetVersionId: uncertaintyRuns.weightSetVersionId })
    .from(uncertaintyRuns)
    .where(and(eq(uncertaintyRuns.projectId, projectId), eq(uncertaintyRuns.status, "published")))
    .orderBy(desc(uncertaintyRuns.id));
  return {
    scorings: sc.map((s) => ({ id: s.id, label: `#${s.id} · ${s.setName} v${s.version} · ${targetLabel(s.target as unknown as ScoringTarget)} · ${s.reconstruction || `reconstruction ${s.reconstructionId}`}` })),
    models: ms.map((m) => ({ id: m.id, label: `#${m.id} · ${m.name || "model"} · reconstruction ${m.reconstructionId}` })),
    uncertaintyRuns: us.map((u) => ({ id: u.id, label: `#${u.id} · ${typeof u.target.kind === "string" && u.target.kind === "age" ? `${u.target.ageKa} ka` : String(u.target.name ?? "")} · version ${u.weightSetVersionId} · reconstruction ${u.reconstructionId}` })),
  };
}
