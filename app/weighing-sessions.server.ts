// Weighing sessions (issue 13): a project's team weighs the factors together. A lead starts a
// session from a weight-set version (or the adopted one, or the catalogue's defaults); every member
// who may edit weights holds a proposal — direct weights and curves, or AHP judgements over the
// session's factors — and edits it; reviewers and up comment; everyone watches. Every change is
// written with the next event number of its session in the same transaction (the session row's
// lock orders them), and NOTIFYs the live hub, which wakes each open stream to read what it has not
// sent. The lead ends the session by adopting the group result or one proposal as a new version of
// a project weight set (audit-logged), or by closing it; a closed session is a read-only record.
// See docs/decisions/801-live-weighing-sessions.md.
import { randomBytes } from "node:crypto";
import { and, asc, desc, eq, gt, inArray, sql } from "drizzle-orm";
import { z } from "zod";
import { db, pool } from "./db.server";
import { memberships, users } from "./db/schema";
import { weighingComments, weighingEvents, weighingPresence, weighingProposals, weighingSessions, type WeighingOutcome } from "./db/live-schema";
import { recordAudit } from "./audit.server";
import { UserError } from "./errors";
import { describeIssues } from "./api.server";
import { weightSetContentSchema } from "./weight-set-schema";
import { defaultWeightSetContent, type WeightSetContent } from "./scoring/weight-set";
import { FACTOR_IDS, factorDef, type FactorId } from "./scoring/factors";
import { ScoringInputError } from "./scoring/errors";
import { groupResult, weightsFromJudgements } from "./scoring/group-weights";
import { adoptedVersion, adoptVersion, createWeightSet, getVersion, getWeightSet, saveWeightSetVersion, weightSetName } from "./weight-sets.server";
import { getIdentity, requireIdentity, type Identity } from "./auth.server";
import { can, ROLE_LABELS, type Capability, type Role } from "./permissions";
import { requireProjectAccess } from "./permissions.server";
import { refusal } from "./security.server";
import { keepAliveMs, liveHub, notifyLive, sseEvent, sseResponse, type LiveMessage } from "./live.server";
import { listMembers } from "./projects.server";
import type { CommentView, OutcomeView, Person, PresenceChanged, ProposalView, SessionEvent, SessionEventKind, SessionSnapshot, SessionView } from "./components/session/session-state";

type Tx = Parameters<Parameters<ReturnType<typeof db>["transaction"]>[0]>[0];
export type SessionRow = typeof weighingSessions.$inferSelect;

/** Who may comment: everyone who weighs (owner, lead, analyst) and reviewers (design §9: reviewers comment). Viewers watch. */
export function mayComment(role: Role): boolean {
  return can(role, "discussion.comment");
}

export interface SessionAccess {
  identity: Identity;
  role: Role;
  session: SessionRow;
}

/**
 * The session named by `idParam` and the caller's role in its project, through the same gate as
 * every project route (requireProjectAccess); `"comment"` asks {@link mayComment}. A non-member, or
 * a session of another project than `projectIdParam` (when given), gets the same 404 as a session
 * that does not exist.
 */
export async function requireSessionAccess(request: Request, idParam: string | undefined, capability: Capability | "comment", projectIdParam?: string): Promise<SessionAccess> {
  await requireIdentity(request);
  const notFound = () => refusal(request, 404, "no_such_session", "There is no weighing session here, or you are not a member of its project.");
  if (!idParam || !/^\d{1,9}$/.test(idParam)) throw notFound();
  const session = await getSession(Number(idParam));
  if (!session || (projectIdParam !== undefined && String(session.projectId) !== projectIdParam)) throw notFound();
  let access;
  try {
    access = await requireProjectAccess(request, String(session.projectId), capability === "comment" ? "project.read" : capability);
  } catch (e) {
    if (e instanceof Response && e.status === 404) throw notFound();
    throw e;
  }
  if (capability === "comment" && !mayComment(access.role))
    throw refusal(request, 403, "role_may_not", `As ${ROLE_LABELS[access.role].toLowerCase()} you may watch the session but not comment. Ask a lead of the project.`);
  return { identity: access.identity, role: access.role, session };
}

// ---------------------------------------------------------------------------------------------
// Input rules

const rowId = z.number({ error: "Ids are whole numbers." }).int("Ids are whole numbers.").positive("Ids are positive.");
const factorId = z.enum(FACTOR_IDS as [FactorId, ...FactorId[]], { error: `A factor is one of: ${FACTOR_IDS.join(", ")}.` });
const judgement = z
  .number({ error: "A judgement is a number on Saaty's scale, 1/9 to 9." })
  .refine((v) => Number.isFinite(v) && v >= 1 / 9 - 1e-9 && v <= 9 + 1e-9, { message: "A judgement lies on Saaty's scale, 1/9 to 9." });

export const startSessionBody = z
  .object({
    title: z.string({ error: "Give the session a title." }).trim().min(1, "Give the session a title.").max(120, "Titles are at most 120 characters.").refine((v) => !/[<>]/.test(v), "Titles cannot contain < or >."),
    method: z.enum(["direct", "ahp"], { error: "The method is direct weights or AHP judgements." }),
    ahpFactors: z.array(factorId).max(10, "Compare at most 10 factors (Saaty's random index goes to 10).").default([]),
    baseVersionId: rowId.nullable().default(null),
  })
  .strict()
  .superRefine((b, ctx) => {
    if (b.method === "ahp" && b.ahpFactors.length < 2) ctx.addIssue({ code: "custom", message: "An AHP session compares at least two factors: choose them.", path: ["ahpFactors"] });
    if (new Set(b.ahpFactors).size !== b.ahpFactors.length) ctx.addIssue({ code: "custom", message: "A factor is chosen twice for the comparison.", path: ["ahpFactors"] });
  });

/** A proposal: the whole content (direct sessions), or AHP judgements (the upper triangle), or both (curves and judgements). */
export const proposalBody = z
  .object({ content: weightSetContentSchema.optional(), upper: z.array(judgement).max(45).optional() })
  .strict()
  .refine((b) => b.content !== undefined || b.upper !== undefined, { message: "Send the proposal's content, or its judgements (upper)." });

export const commentBody = z
  .object({
    body: z.string({ error: "Write something." }).trim().min(1, "Write something.").max(2000, "A comment is at most 2000 characters."),
    factor: factorId.nullable().default(null),
  })
  .strict();

export const adoptOutcomeBody = z
  .object({
    /** "group", or the user id of the member whose proposal is adopted */
    source: z.union([z.literal("group"), rowId], { error: "Adopt the group result (\"group\") or a member's proposal (their user id)." }),
    target: z.union([
      z.object({ weightSetId: rowId, expectedVersion: rowId.optional() }).strict(),
      z.object({ newName: weightSetName }).strict(),
    ], { error: "Choose a weight set to add a version to, or name a new one." }),
    rationale: z.string({ error: "Say why." }).trim().min(1, "Say why this is the outcome (the rationale is required).").max(1000, "The rationale is at most 1000 characters."),
    /** also make the new version the project's adopted weight set */
    adoptForProject: z.boolean().default(true),
  })
  .strict();

function check<S extends z.ZodType>(schema: S, value: unknown): z.infer<S> {
  const r = schema.safeParse(value);
  if (!r.success) throw new UserError(422, "invalid_fields", describeIssues(r.error));
  return r.data;
}

function scoringProblem<T>(fn: () => T): T {
  try {
    return fn();
  } catch (e) {
    if (e instanceof ScoringInputError) throw new UserError(422, "invalid_content", e.message, e.field);
    throw e;
  }
}

// ---------------------------------------------------------------------------------------------
// Events

/**
 * Appends the session's next event inside `tx`: takes the next number under the session row's lock
 * (a concurrent writer waits for this transaction to end, so numbers are consecutive and committed
 * in order), stores the event and NOTIFYs `weighing:<id>` with the number only. Throws 409 when the
 * session is closed (nothing is written).
 */
export async function appendEvent(tx: Tx, sessionId: number, kind: SessionEventKind, userId: number | null, data: Record<string, unknown>): Promise<number> {
  const [row] = await tx
    .update(weighingSessions)
    .set({ lastSeq: sql`${weighingSessions.lastSeq} + 1` })
    .where(and(eq(weighingSessions.id, sessionId), eq(weighingSessions.status, "open")))
    .returning({ seq: weighingSessions.lastSeq });
  if (!row) throw new UserError(409, "session_closed", "This weighing session is closed: it is a read-only record now.");
  await tx.insert(weighingEvents).values({ sessionId, seq: row.seq, kind, userId, data });
  await notifyLive(tx, `weighing:${sessionId}`, row.seq);
  return row.seq;
}

/**
 * Locks the session row for the rest of `tx` and refuses (409) a closed session. Every writer takes
 * this lock first, before touching the session's other tables, so writers never deadlock.
 */
async function lockOpenSession(tx: Tx, sessionId: number): Promise<void> {
  const [row] = await tx.select({ status: weighingSessions.status }).from(weighingSessions).where(eq(weighingSessions.id, sessionId)).for("update");
  if (!row) throw new UserError(404, "no_such_session", "There is no such weighing session.");
  if (row.status !== "open") throw new UserError(409, "session_closed", "This weighing session is closed: it is a read-only record now.");
}

/** The session's events after number `after`, oldest first (at most `limit`). */
export async function eventsAfter(sessionId: number, after: number, limit = 500): Promise<SessionEvent[]> {
  const rows = await db()
    .select()
    .from(weighingEvents)
    .where(and(eq(weighingEvents.sessionId, sessionId), gt(weighingEvents.seq, after)))
    .orderBy(asc(weighingEvents.seq))
    .limit(limit);
  return rows.map((r) => ({ seq: r.seq, kind: r.kind as SessionEventKind, userId: r.userId, at: r.createdAt.toISOString(), data: r.data }));
}

// Streams of this process that wait at the same number share one read.
const inFlight = new Map<string, Promise<SessionEvent[]>>();
function sharedEventsAfter(sessionId: number, after: number): Promise<SessionEvent[]> {
  const key = `${sessionId}:${after}`;
  let p = inFlight.get(key);
  if (!p) {
    p = eventsAfter(sessionId, after).finally(() => inFlight.delete(key));
    inFlight.set(key, p);
  }
  return p;
}

// ---------------------------------------------------------------------------------------------
// Reading

async function namesOf(ids: (number | null)[]): Promise<Map<number, string>> {
  const want = [...new Set(ids.filter((x): x is number => x !== null))];
  if (!want.length) return new Map();
  const rows = await db().select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, want));
  return new Map(rows.map((r) => [r.id, r.name]));
}
const person = (names: Map<number, string>, id: number | null): Person | null => (id === null ? null : { id, name: names.get(id) ?? "(former user)" });

export async function getSession(sessionId: number): Promise<SessionRow | null> {
  const [row] = await db().select().from(weighingSessions).where(eq(weighingSessions.id, sessionId));
  return row ?? null;
}

/** The project of a session, or null (routes check access to that project). */
export async function sessionProject(sessionId: number): Promise<number | null> {
  return (await getSession(sessionId))?.projectId ?? null;
}

export interface SessionListItem {
  id: number;
  title: string;
  method: "direct" | "ahp";
  status: "open" | "closed";
  startedBy: Person | null;
  startedAt: string;
  closedAt: string | null;
  proposals: number;
  outcome: OutcomeView | null;
}

/** The project's sessions, newest first, with their proposal counts. */
export async function listSessions(projectId: number): Promise<SessionListItem[]> {
  const rows = await db()
    .select({ s: weighingSessions, proposals: sql<number>`(select count(*)::int from ${weighingProposals} where ${weighingProposals.sessionId} = ${weighingSessions.id})` })
    .from(weighingSessions)
    .where(eq(weighingSessions.projectId, projectId))
    .orderBy(desc(weighingSessions.startedAt), desc(weighingSessions.id));
  const names = await namesOf(rows.map((r) => r.s.startedBy));
  return rows.map(({ s, proposals }) => ({
    id: s.id,
    title: s.title,
    method: s.method,
    status: s.status,
    startedBy: person(names, s.startedBy),
    startedAt: s.startedAt.toISOString(),
    closedAt: s.closedAt?.toISOString() ?? null,
    proposals,
    outcome: s.outcome,
  }));
}

const PRESENT_WITHIN = sql`interval '60 seconds'`;

async function presentUsers(sessionId: number, executor: Pick<Tx, "selectDistinct"> = db()): Promise<number[]> {
  const rows = await executor
    .selectDistinct({ userId: weighingPresence.userId })
    .from(weighingPresence)
    .where(and(eq(weighingPresence.sessionId, sessionId), sql`${weighingPresence.lastSeenAt} > now() - ${PRESENT_WITHIN}`));
  return rows.map((r) => r.userId);
}

/**
 * Everything the session page shows, read in one repeatable-read snapshot so that `lastSeq` is
 * exactly the newest event whose effect the rest includes (the live stream continues from there).
 */
export async function sessionSnapshot(sessionId: number): Promise<SessionSnapshot | null> {
  const got = await db().transaction(
    async (tx) => {
      const [s] = await tx.select().from(weighingSessions).where(eq(weighingSessions.id, sessionId));
      if (!s) return null;
      const proposals = await tx
        .select({ p: weighingProposals, name: users.name })
        .from(weighingProposals)
        .innerJoin(users, eq(users.id, weighingProposals.userId))
        .where(eq(weighingProposals.sessionId, sessionId))
        .orderBy(asc(users.name), asc(users.id));
      const comments = await tx
        .select({ c: weighingComments, name: users.name })
        .from(weighingComments)
        .leftJoin(users, eq(users.id, weighingComments.userId))
        .where(eq(weighingComments.sessionId, sessionId))
        .orderBy(asc(weighingComments.createdAt), asc(weighingComments.id));
      const present = s.status === "open" ? await presentUsers(sessionId, tx) : [];
      return { s, proposals, comments, present };
    },
    { isolationLevel: "repeatable read", accessMode: "read only" },
  );
  if (!got) return null;
  const { s, proposals, comments, present } = got;
  const members = (await listMembers(s.projectId)).map((m) => ({ userId: m.userId, name: m.name, role: m.role }));
  const names = await namesOf([s.startedBy, s.closedBy]);
  let baseFrom = "the catalogue's starting weights";
  if (s.baseVersionId !== null) {
    const v = await getVersion(s.baseVersionId);
    if (v) baseFrom = `“${v.setName}” version ${v.version}`;
  }
  const session: SessionView = {
    id: s.id,
    projectId: s.projectId,
    title: s.title,
    method: s.method,
    ahpFactors: s.ahpFactors as FactorId[],
    baseContent: s.baseContent as unknown as WeightSetContent,
    baseFrom,
    status: s.status,
    startedBy: person(names, s.startedBy),
    startedAt: s.startedAt.toISOString(),
    closedBy: person(names, s.closedBy),
    closedAt: s.closedAt?.toISOString() ?? null,
    finalContent: (s.finalContent as unknown as WeightSetContent | null) ?? null,
    outcome: s.outcome,
  };
  return {
    session,
    proposals: proposals.map(({ p, name }): ProposalView => ({ userId: p.userId, name, content: p.content as unknown as WeightSetContent, revision: p.revision, updatedAt: p.updatedAt.toISOString() })),
    comments: comments.map(({ c, name }): CommentView => ({ id: c.id, userId: c.userId, name: name ?? "(former user)", factor: c.factor as FactorId | null, body: c.body, createdAt: c.createdAt.toISOString() })),
    present,
    members,
    lastSeq: s.lastSeq,
  };
}

// ---------------------------------------------------------------------------------------------
// Writing

interface Actor {
  userId: number;
  clientAddress?: string;
}

/**
 * Starts a session. The base every proposal starts from is `baseVersionId` (a version of this
 * project's weight sets), else the project's adopted version, else the catalogue's defaults; an
 * AHP session's factors must be in the base. Audit-logged.
 */
export async function startSession(projectId: number, input: unknown, actor: Actor): Promise<SessionRow> {
  const b = check(startSessionBody, input);
  let base: WeightSetContent;
  let baseVersionId: number | null = null;
  if (b.baseVersionId !== null) {
    const v = await getVersion(b.baseVersionId);
    if (!v || v.projectId !== projectId) throw new UserError(422, "no_such_version", "The weight-set version to start from is not one of this project's.", "baseVersionId");
    base = v.content;
    baseVersionId = v.id;
  } else {
    const adopted = await adoptedVersion(projectId);
    base = adopted ? adopted.version.content : defaultWeightSetContent();
    baseVersionId = adopted?.version.id ?? null;
  }
  base = { ...structuredClone(base), ahp: null };
  if (b.method === "ahp") {
    const inBase = new Set(base.factors.map((f) => f.factor));
    const missing = b.ahpFactors.filter((f) => !inBase.has(f));
    if (missing.length) throw new UserError(422, "invalid_fields", `${missing.map((f) => `“${factorDef(f)!.label}”`).join(", ")} ${missing.length > 1 ? "are" : "is"} not in the weight set the session starts from.`, "ahpFactors");
  }
  return db().transaction(async (tx) => {
    const [s] = await tx
      .insert(weighingSessions)
      .values({ projectId, title: b.title, method: b.method, ahpFactors: b.method === "ahp" ? b.ahpFactors : [], baseContent: base as unknown as Record<string, unknown>, baseVersionId, startedBy: actor.userId })
      .returning();
    await appendEvent(tx, s.id, "session.started", actor.userId, { title: s.title, method: s.method, ahpFactors: s.ahpFactors, baseVersionId });
    await recordAudit(tx, { actorUserId: actor.userId, projectId, action: "weighing.started", detail: { sessionId: s.id, title: s.title, method: s.method, ahpFactors: s.ahpFactors, baseVersionId }, clientAddress: actor.clientAddress });
    return { ...s, lastSeq: 1 };
  });
}

/** A proposal's content as stored: checked, and in AHP sessions weighed by its judgements over the session's factors. */
export function proposalContent(session: Pick<SessionRow, "method" | "ahpFactors" | "baseContent">, current: WeightSetContent | null, body: z.infer<typeof proposalBody>): WeightSetContent {
  const start = body.content ?? current ?? (session.baseContent as unknown as WeightSetContent);
  if (session.method === "direct") {
    if (body.upper !== undefined) throw new UserError(422, "invalid_fields", "This session weighs directly: send the content, not judgements.", "upper");
    return { ...start, ahp: null };
  }
  const factors = session.ahpFactors as FactorId[];
  const upper = body.upper ?? start.ahp?.upper;
  const n = factors.length;
  if (!upper || upper.length !== (n * (n - 1)) / 2)
    throw new UserError(422, "invalid_fields", `This session compares ${n} factors: send ${(n * (n - 1)) / 2} judgements (the upper triangle, row by row).`, "upper");
  if (body.content?.ahp && body.content.ahp.factors.join() !== factors.join())
    throw new UserError(422, "invalid_fields", "The judgements must compare the session's factors, in the session's order.", "ahp");
  const content = scoringProblem(() => weightsFromJudgements({ ...start, ahp: { factors: [...factors], upper: [...upper] } }));
  return check(weightSetContentSchema, content);
}

/** Saves the member's proposal (made on first save) and tells everyone. */
export async function saveProposal(session: SessionRow, body: unknown, actor: Actor & { name: string }): Promise<ProposalView> {
  const b = check(proposalBody, body);
  const [current] = await db().select().from(weighingProposals).where(and(eq(weighingProposals.sessionId, session.id), eq(weighingProposals.userId, actor.userId)));
  const content = proposalContent(session, (current?.content as unknown as WeightSetContent) ?? null, b);
  return db().transaction(async (tx) => {
    await lockOpenSession(tx, session.id);
    const [p] = await tx
      .insert(weighingProposals)
      .values({ sessionId: session.id, userId: actor.userId, content: content as unknown as Record<string, unknown> })
      .onConflictDoUpdate({
        target: [weighingProposals.sessionId, weighingProposals.userId],
        set: { content: content as unknown as Record<string, unknown>, revision: sql`${weighingProposals.revision} + 1`, updatedAt: sql`now()` },
      })
      .returning();
    const view: ProposalView = { userId: actor.userId, name: actor.name, content, revision: p.revision, updatedAt: p.updatedAt.toISOString() };
    await appendEvent(tx, session.id, "proposal.updated", actor.userId, { ...view });
    return view;
  });
}

export async function addComment(session: SessionRow, body: unknown, actor: Actor & { name: string }): Promise<CommentView> {
  const b = check(commentBody, body);
  return db().transaction(async (tx) => {
    await lockOpenSession(tx, session.id);
    const [c] = await tx.insert(weighingComments).values({ sessionId: session.id, userId: actor.userId, factor: b.factor, body: b.body }).returning();
    const view: CommentView = { id: c.id, userId: actor.userId, name: actor.name, factor: b.factor, body: c.body, createdAt: c.createdAt.toISOString() };
    await appendEvent(tx, session.id, "comment.added", actor.userId, { ...view });
    return view;
  });
}

async function closeIn(tx: Tx, session: SessionRow, actor: Actor & { name: string }, finalContent: WeightSetContent | null, outcome: WeighingOutcome | null) {
  const closedAt = new Date();
  await appendEvent(tx, session.id, "session.closed", actor.userId, { closedBy: { id: actor.userId, name: actor.name }, closedAt: closedAt.toISOString(), finalContent, outcome });
  await tx
    .update(weighingSessions)
    .set({ status: "closed", closedBy: actor.userId, closedAt, finalContent: finalContent as unknown as Record<string, unknown> | null, outcome })
    .where(eq(weighingSessions.id, session.id));
  await tx.delete(weighingPresence).where(eq(weighingPresence.sessionId, session.id));
}

/** Closes the session without adopting anything (the record stays). Audit-logged. */
export async function closeSession(session: SessionRow, actor: Actor & { name: string }): Promise<void> {
  await db().transaction(async (tx) => {
    await closeIn(tx, session, actor, null, null);
    await recordAudit(tx, { actorUserId: actor.userId, projectId: session.projectId, action: "weighing.closed", detail: { sessionId: session.id, title: session.title }, clientAddress: actor.clientAddress });
  });
}

async function sessionProposals(sessionId: number) {
  return db()
    .select({ userId: weighingProposals.userId, name: users.name, content: weighingProposals.content })
    .from(weighingProposals)
    .innerJoin(users, eq(users.id, weighingProposals.userId))
    .where(eq(weighingProposals.sessionId, sessionId))
    .orderBy(asc(users.name), asc(users.id));
}

/** The session's group result now (null when nobody has proposed yet). */
export async function currentGroupResult(session: SessionRow) {
  const ps = await sessionProposals(session.id);
  if (!ps.length) return null;
  return scoringProblem(() =>
    groupResult(
      session.baseContent as unknown as WeightSetContent,
      session.method,
      ps.map((p) => p.content as unknown as WeightSetContent),
      session.ahpFactors as FactorId[],
      ps.map((p) => p.name),
    ),
  );
}

/**
 * The lead's outcome: the group result or one member's proposal becomes a new version of a chosen
 * weight set of the project (or version 1 of a new set) with the rationale as its note, is adopted
 * for the project when asked (weight-sets.server.ts audit-logs both), and the session closes with
 * the outcome and final weights on record. One adoption per session at a time (an advisory lock);
 * a closed session refuses with 409.
 */
export async function adoptOutcome(session: SessionRow, body: unknown, actor: Actor & { name: string }): Promise<WeighingOutcome> {
  const b = check(adoptOutcomeBody, body);
  const lockClient = await pool().connect();
  try {
    const [{ got }] = (await lockClient.query<{ got: boolean }>("select pg_try_advisory_lock(hashtext('weighing.adopt'), $1) as got", [session.id])).rows;
    if (!got) throw new UserError(409, "adoption_in_progress", "Another lead is adopting this session's outcome right now. Reload in a moment.");
    try {
      const fresh = await getSession(session.id);
      if (!fresh || fresh.status !== "open") throw new UserError(409, "session_closed", "This weighing session is closed: its outcome is already on record.");
      let content: WeightSetContent;
      let source: WeighingOutcome["source"];
      if (b.source === "group") {
        const g = await currentGroupResult(fresh);
        if (!g) throw new UserError(409, "no_proposals", "Nobody has proposed weights yet: there is no group result to adopt.");
        content = g.content;
        source = { kind: "group" };
      } else {
        const [p] = (await sessionProposals(fresh.id)).filter((x) => x.userId === b.source);
        if (!p) throw new UserError(422, "no_such_proposal", "That member has no proposal in this session.", "source");
        content = p.content as unknown as WeightSetContent;
        source = { kind: "proposal", userId: p.userId, name: p.name };
      }
      const what = source.kind === "group" ? `the group result (${fresh.method === "ahp" ? "geometric mean of judgements" : "mean of normalised weights"})` : `${source.name}'s proposal`;
      const note = `From weighing session “${fresh.title.slice(0, 120)}”: ${what}. ${b.rationale}`.slice(0, 500);
      let weightSetId: number;
      let weightSetNameNow: string;
      let version: { id: number; version: number };
      if ("weightSetId" in b.target) {
        const set = await getWeightSet(b.target.weightSetId, { projectId: fresh.projectId });
        if (!set) throw new UserError(422, "no_such_weight_set", "That weight set is not one of this project's.", "target");
        version = await saveWeightSetVersion({ weightSetId: set.id, expectedVersion: b.target.expectedVersion ?? set.currentVersion, content, note, userId: actor.userId, clientAddress: actor.clientAddress });
        weightSetId = set.id;
        weightSetNameNow = set.name;
      } else {
        const made = await createWeightSet({ projectId: fresh.projectId, name: b.target.newName, description: `Adopted in weighing session “${fresh.title}”.`, content, note, userId: actor.userId, clientAddress: actor.clientAddress });
        version = made.version;
        weightSetId = made.set.id;
        weightSetNameNow = made.set.name;
      }
      if (b.adoptForProject) await adoptVersion({ projectId: fresh.projectId, versionId: version.id, rationale: b.rationale, userId: actor.userId, clientAddress: actor.clientAddress });
      const outcome: WeighingOutcome = { source, weightSetId, weightSetName: weightSetNameNow, versionId: version.id, version: version.version, adopted: b.adoptForProject, rationale: b.rationale };
      await db().transaction(async (tx) => {
        await closeIn(tx, fresh, actor, content, outcome);
        await recordAudit(tx, {
          actorUserId: actor.userId,
          projectId: fresh.projectId,
          action: "weighing.adopted",
          detail: { sessionId: fresh.id, title: fresh.title, source, weightSetId, versionId: version.id, version: version.version, adoptedForProject: b.adoptForProject, rationale: b.rationale },
          clientAddress: actor.clientAddress,
        });
      });
      return outcome;
    } finally {
      await lockClient.query("select pg_advisory_unlock(hashtext('weighing.adopt'), $1)", [session.id]).catch(() => undefined);
    }
  } finally {
    lockClient.release();
  }
}

// ---------------------------------------------------------------------------------------------
// The live stream

/** Where a stream starts: the browser's Last-Event-ID on a reconnect, else `?after=` (the page's snapshot), else 0. */
export function streamStart(request: Request): number {
  const header = request.headers.get("Last-Event-ID")?.trim();
  const raw = header || new URL(request.url).searchParams.get("after") || "0";
  if (!/^\d{1,15}$/.test(raw.trim())) throw new UserError(400, "bad_event_id", "The last event id is a whole number of 0 or more.");
  return Number(raw.trim());
}

/**
 * Opens or closes one live connection's presence row, and when that flips the member between absent
 * and present, appends a `presence` event — all under the session row's lock, so two connections of
 * one member opening or closing together agree on who flips it. Nothing happens in a closed session.
 */
async function presenceChange(sessionId: number, userId: number, name: string, connectionId: string, present: boolean) {
  try {
    await db().transaction(async (tx) => {
      const [locked] = await tx.select({ status: weighingSessions.status }).from(weighingSessions).where(eq(weighingSessions.id, sessionId)).for("update");
      if (!locked || locked.status !== "open") return;
      if (present) await tx.insert(weighingPresence).values({ connectionId, sessionId, userId });
      else await tx.delete(weighingPresence).where(eq(weighingPresence.connectionId, connectionId));
      const [{ n }] = await tx
        .select({ n: sql<number>`count(*)::int` })
        .from(weighingPresence)
        .where(and(eq(weighingPresence.sessionId, sessionId), eq(weighingPresence.userId, userId), sql`${weighingPresence.lastSeenAt} > now() - ${PRESENT_WITHIN}`));
      if (present ? n === 1 : n === 0) {
        const data: PresenceChanged = { userId, name, present };
        await appendEvent(tx, sessionId, "presence", userId, { ...data });
      }
    });
  } catch (e) {
    console.error("[live] presence change failed:", e);
  }
}

export interface StreamAccess {
  userId: number;
  name: string;
  role: Role;
  projectId: number;
}

/**
 * The session's event stream (text/event-stream): first every event after `after`, then each new
 * one as it is committed, each with its number as the SSE id. A keep-alive comment and the list of
 * members present go out every {@link keepAliveMs}; at each, and at once when the member's role
 * changes or they are removed (the memberships trigger notifies `member:<project>:<user>`), access
 * is checked again, and the stream ends with an `access` event when it has changed. A closed
 * session sends what the client lacks and ends (the route answers 204 when it lacks nothing).
 */
export function sessionStream(request: Request, session: SessionRow, access: StreamAccess, after: number): Response {
  return sseResponse(request.signal, async (sink) => {
    const hub = liveHub();
    let sent = after;
    let pumping = false;
    let again = false;
    const connectionId = randomBytes(12).toString("base64url");
    const isOpen = session.status === "open";

    const pump = async () => {
      if (pumping) {
        again = true;
        return;
      }
      pumping = true;
      try {
        do {
          again = false;
          for (;;) {
            const evs = await sharedEventsAfter(session.id, sent);
            const fresh = evs.filter((e) => e.seq > sent);
            for (const e of fresh) {
              if (!sink.write(sseEvent(e, { id: e.seq }))) return;
              sent = e.seq;
              if (e.kind === "session.closed") {
                sink.close();
                return;
              }
            }
            if (evs.length < 500) break;
          }
        } while (again && !sink.closed);
      } catch (err) {
        console.error("[live] reading events failed:", err);
        sink.close();
      } finally {
        pumping = false;
      }
    };

    const recheck = async () => {
      try {
        const identity = await getIdentity(request).catch(() => null);
        const [m] = await db()
          .select({ role: memberships.role })
          .from(memberships)
          .where(and(eq(memberships.projectId, access.projectId), eq(memberships.userId, access.userId)));
        const still = identity && identity.user.id === access.userId && m;
        if (!still || m.role !== access.role) {
          sink.write(sseEvent({ reason: still ? "role_changed" : "no_longer_member", role: still ? m.role : null }, { event: "access" }));
          sink.close();
        }
      } catch (err) {
        console.error("[live] access re-check failed:", err);
      }
    };

    const onSession = (msg: LiveMessage) => {
      void pump();
      if (msg.kind === "resync") void recheck();
    };
    const onMember = () => void recheck();
    const unsubscribe = [hub.subscribe(`weighing:${session.id}`, onSession), hub.subscribe(`member:${access.projectId}:${access.userId}`, onMember)];
    await hub.ready();

    sink.write(`retry: 2000\n\n`);
    if (isOpen) await presenceChange(session.id, access.userId, access.name, connectionId, true);
    await pump();

    const tick = setInterval(() => {
      if (!sink.write(": keep-alive\n\n")) return;
      void (async () => {
        await recheck();
        if (sink.closed || !isOpen) return;
        await db().update(weighingPresence).set({ lastSeenAt: sql`now()` }).where(eq(weighingPresence.connectionId, connectionId));
        sink.write(sseEvent({ present: await presentUsers(session.id) }, { event: "presence" }));
      })().catch((err) => console.error("[live] keep-alive failed:", err));
    }, keepAliveMs());
    tick.unref?.();

    return async () => {
      clearInterval(tick);
      for (const u of unsubscribe) u();
      if (isOpen) await presenceChange(session.id, access.userId, access.name, connectionId, false);
    };
  });
}
