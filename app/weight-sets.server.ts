// Weight sets on the server (design §4): a project's named sets, each a line of versions. Every
// save adds a version (content, its SHA-256, why, who, when); a save names the version it edits and
// is refused with 409 when someone saved since. Restore and fork copy an old version's content into
// a new one. One version per project is adopted by a lead (newest adoption row wins), with a
// rationale; a set whose versions were adopted or scored cannot be deleted. All of it audit-logged
// in the same transaction as the change.
import { createHash } from "node:crypto";
import { and, asc, desc, eq, inArray, sql, type SQL } from "drizzle-orm";
import { z } from "zod";
import { db } from "./db.server";
import { scorings, users, weightSetAdoptions, weightSets, weightSetVersions } from "./db/schema";
import { recordAudit } from "./audit.server";
import { UserError } from "./errors";
import { describeIssues } from "./api.server";
import { weightSetContentSchema } from "./weight-set-schema";
import { defaultWeightSetContent, type WeightSetContent } from "./scoring/weight-set";
import { referencedByReview } from "./reviews.server";

type Tx = Parameters<Parameters<ReturnType<typeof db>["transaction"]>[0]>[0];
type SetRow = typeof weightSets.$inferSelect;
type VersionRow = typeof weightSetVersions.$inferSelect;
type AdoptionRow = typeof weightSetAdoptions.$inferSelect;

// ---------------------------------------------------------------------------------------------
// Input rules (shared by the API routes and by server callers, which are checked again here)

export const weightSetName = z
  .string({ error: "A weight set needs a name." })
  .trim()
  .min(1, "A weight set needs a name.")
  .max(80, "Weight-set names are at most 80 characters.")
  .refine((v) => !/[<>]/.test(v), "Weight-set names cannot contain < or >.");
export const weightSetDescription = z.string({ error: "The description is text." }).trim().max(1000, "Descriptions are at most 1000 characters.");
export const versionNote = z.string({ error: "The note is text." }).trim().max(500, "A note saying why is at most 500 characters.");
export const adoptionRationale = z
  .string({ error: "Say why this version is adopted." })
  .trim()
  .min(1, "Say why this version is adopted (the rationale is required).")
  .max(1000, "The rationale is at most 1000 characters.");
const versionNumber = z.number({ error: "The version is a whole number." }).int("The version is a whole number.").positive("Versions start at 1.");
const rowId = z.number({ error: "Ids are whole numbers." }).int("Ids are whole numbers.").positive("Ids are positive.");

/** POST /api/projects/:projectId/weight-sets: content omitted (and no fork) starts from the catalogue's defaults. */
export const createWeightSetBody = z
  .object({
    name: weightSetName,
    description: weightSetDescription.default(""),
    content: weightSetContentSchema.optional(),
    note: versionNote.default(""),
    forkFromVersionId: rowId.optional(),
  })
  .strict()
  .refine((b) => !(b.content && b.forkFromVersionId), { message: "A fork copies the version it is forked from: send content or forkFromVersionId, not both.", path: ["content"] });

/** PATCH /api/weight-sets/:id: `version` is the version the edit started from. */
export const saveWeightSetBody = z
  .object({
    version: versionNumber,
    content: weightSetContentSchema.optional(),
    name: weightSetName.optional(),
    description: weightSetDescription.optional(),
    note: versionNote.default(""),
  })
  .strict();

/** POST /api/weight-sets/:id/restore. */
export const restoreWeightSetBody = z.object({ version: versionNumber, expectedVersion: versionNumber, note: versionNote.default("") }).strict();

/** POST /api/projects/:projectId/weight-sets/adopted. */
export const adoptBody = z.object({ versionId: rowId, rationale: adoptionRationale }).strict();

function check<S extends z.ZodType>(schema: S, value: unknown, field: string): z.infer<S> {
  const r = schema.safeParse(value);
  if (!r.success) throw new UserError(422, "invalid_fields", field === "content" ? `content: ${describeIssues(r.error)}` : r.error.issues[0].message, field);
  return r.data;
}

// ---------------------------------------------------------------------------------------------
// Content hash

/** Canonical JSON: object keys sorted at every level, arrays in order, no white space. */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== "object") return JSON.stringify(value) ?? "null";
  if (Array.isArray(value)) return `[${value.map((v) => (v === undefined ? "null" : canonicalJson(v))).join(",")}]`;
  const obj = value as Record<string, unknown>;
  const keys = Object.keys(obj).filter((k) => obj[k] !== undefined).sort();
  return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson(obj[k])}`).join(",")}}`;
}

/** Hex SHA-256 of the content's canonical JSON: equal content, equal hash, whatever the key order. */
export function contentHash(content: WeightSetContent | Record<string, unknown>): string {
  return createHash("sha256").update(canonicalJson(content)).digest("hex");
}

// ---------------------------------------------------------------------------------------------
// Views (what the API returns)

export interface Who {
  id: number;
  name: string;
}
export interface VersionSummary {
  id: number;
  version: number;
  note: string;
  contentHash: string;
  createdBy: Who | null;
  createdAt: string;
}
export interface VersionView extends VersionSummary {
  content: WeightSetContent;
}
export interface WeightSetView {
  id: number;
  projectId: number;
  name: string;
  description: string;
  currentVersion: number;
  /** the set and version this one was forked from (null when not a fork, or that set is deleted) */
  forkedFrom: { weightSetId: number; name: string; versionId: number; version: number } | null;
  createdBy: Who | null;
  createdAt: string;
  updatedAt: string;
  /** set when one of this set's versions is the project's adopted one */
  adopted: { versionId: number; version: number; adoptedAt: string; adoptedBy: Who | null; rationale: string } | null;
  /** the current version, or the one asked for */
  version: VersionView;
}
export interface WeightSetDetail extends WeightSetView {
  /** every version, newest first */
  history: VersionSummary[];
}

async function namesOf(ids: (number | null)[]): Promise<Map<number, string>> {
  const want = [...new Set(ids.filter((x): x is number => x !== null))];
  if (!want.length) return new Map();
  const rows = await db().select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, want));
  return new Map(rows.map((r) => [r.id, r.name]));
}

function who(names: Map<number, string>, id: number | null): Who | null {
  return id === null ? null : { id, name: names.get(id) ?? "(former user)" };
}

function summary(v: VersionRow, names: Map<number, string>): VersionSummary {
  return { id: v.id, version: v.version, note: v.note, contentHash: v.contentHash, createdBy: who(names, v.createdBy), createdAt: v.createdAt.toISOString() };
}

async function forkSources(rows: SetRow[]) {
  const ids = rows.map((r) => r.forkedFromVersionId).filter((x): x is number => x !== null);
  if (!ids.length) return new Map<number, WeightSetView["forkedFrom"]>();
  const src = await db()
    .select({ versionId: weightSetVersions.id, version: weightSetVersions.version, weightSetId: weightSets.id, name: weightSets.name })
    .from(weightSetVersions)
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .where(inArray(weightSetVersions.id, ids));
  return new Map(src.map((s) => [s.versionId, s]));
}

async function views(rows: SetRow[], versionOf: Map<number, VersionRow>): Promise<WeightSetView[]> {
  if (!rows.length) return [];
  const adopted = await adoptedVersion(rows[0].projectId);
  const forks = await forkSources(rows);
  const names = await namesOf([...rows.map((r) => r.createdBy), ...[...versionOf.values()].map((v) => v.createdBy), adopted?.adoption.adoptedBy ?? null]);
  return rows.map((r) => {
    const v = versionOf.get(r.id)!;
    const isAdopted = adopted && adopted.set.id === r.id;
    return {
      id: r.id,
      projectId: r.projectId,
      name: r.name,
      description: r.description,
      currentVersion: r.currentVersion,
      forkedFrom: r.forkedFromVersionId === null ? null : (forks.get(r.forkedFromVersionId) ?? null),
      createdBy: who(names, r.createdBy),
      createdAt: r.createdAt.toISOString(),
      updatedAt: r.updatedAt.toISOString(),
      adopted: isAdopted
        ? { versionId: adopted.version.id, version: adopted.version.version, adoptedAt: adopted.adoption.adoptedAt.toISOString(), adoptedBy: who(names, adopted.adoption.adoptedBy), rationale: adopted.adoption.rationale }
        : null,
      version: { ...summary(v, names), content: v.content as unknown as WeightSetContent },
    };
  });
}

// ---------------------------------------------------------------------------------------------
// Reading

/** The project's weight sets, by name, each with its current version (content included). */
export async function listWeightSets(projectId: number): Promise<WeightSetView[]> {
  const rows = await db()
    .select({ s: weightSets, v: weightSetVersions })
    .from(weightSets)
    .innerJoin(weightSetVersions, and(eq(weightSetVersions.weightSetId, weightSets.id), eq(weightSetVersions.version, weightSets.currentVersion)))
    .where(eq(weightSets.projectId, projectId))
    .orderBy(asc(sql`lower(${weightSets.name})`), asc(weightSets.id));
  return views(
    rows.map((r) => r.s),
    new Map(rows.map((r) => [r.s.id, r.v])),
  );
}

/**
 * One weight set with its version history (newest first) and the content of its current version,
 * or of version `opts.version`. Null when there is no such set (or, with `opts.projectId`, not in
 * that project). Throws a 404 UserError naming the range when the set has no such version.
 */
export async function getWeightSet(id: number, opts: { version?: number; projectId?: number } = {}): Promise<WeightSetDetail | null> {
  const [set] = await db()
    .select()
    .from(weightSets)
    .where(opts.projectId === undefined ? eq(weightSets.id, id) : and(eq(weightSets.id, id), eq(weightSets.projectId, opts.projectId)));
  if (!set) return null;
  const versions = await db().select().from(weightSetVersions).where(eq(weightSetVersions.weightSetId, id)).orderBy(desc(weightSetVersions.version));
  const wanted = opts.version ?? set.currentVersion;
  const v = versions.find((x) => x.version === wanted);
  if (!v) throw new UserError(404, "no_such_version", `“${set.name}” has no version ${wanted}: its versions are 1 to ${set.currentVersion}.`, "version");
  const [view] = await views([set], new Map([[set.id, v]]));
  const names = await namesOf(versions.map((x) => x.createdBy));
  return { ...view, history: versions.map((x) => summary(x, names)) };
}

export interface VersionWithSet extends Omit<VersionRow, "content"> {
  content: WeightSetContent;
  projectId: number;
  setName: string;
}

async function versionWhere(where: SQL | undefined): Promise<VersionWithSet | null> {
  const [row] = await db()
    .select({ v: weightSetVersions, projectId: weightSets.projectId, setName: weightSets.name })
    .from(weightSetVersions)
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .where(where);
  if (!row) return null;
  return { ...row.v, content: row.v.content as unknown as WeightSetContent, projectId: row.projectId, setName: row.setName };
}

/** One version by its id, with its set's project and name (callers check the project), or null. */
export async function getVersion(versionId: number): Promise<VersionWithSet | null> {
  return versionWhere(eq(weightSetVersions.id, versionId));
}

/** Version `n` of a set, or null. */
export async function versionByNumber(weightSetId: number, n: number): Promise<VersionWithSet | null> {
  return versionWhere(and(eq(weightSetVersions.weightSetId, weightSetId), eq(weightSetVersions.version, n)));
}

// ---------------------------------------------------------------------------------------------
// Writing

/**
 * Serialises name checks within a project (two creates with one name cannot both pass): a
 * transaction-scoped advisory lock keyed on the table and the project.
 */
async function lockProjectNames(tx: Tx, projectId: number) {
  await tx.execute(sql`select pg_advisory_xact_lock(hashtext('weight_sets.name'), ${projectId})`);
}

async function requireFreeName(tx: Tx, projectId: number, name: string, exceptId?: number) {
  const [clash] = await tx
    .select({ id: weightSets.id, name: weightSets.name })
    .from(weightSets)
    .where(and(eq(weightSets.projectId, projectId), sql`lower(${weightSets.name}) = lower(${name})`));
  if (clash && clash.id !== exceptId) throw new UserError(409, "name_taken", `This project already has a weight set called “${clash.name}”. Choose another name.`, "name");
}

/**
 * Creates a weight set with version 1: the given content, or (with `forkFromVersionId`) a copy of
 * that version of another set of the same project, or the catalogue's starting set when neither is
 * given. Throws UserError 422 for bad content or a version of another project, 409 for a taken name.
 */
export async function createWeightSet(input: {
  projectId: number;
  name: string;
  description?: string;
  content?: WeightSetContent;
  note?: string;
  userId: number;
  forkFromVersionId?: number;
  clientAddress?: string;
}): Promise<{ set: SetRow; version: VersionRow }> {
  const name = check(weightSetName, input.name, "name");
  const description = check(weightSetDescription, input.description ?? "", "description");
  let note = check(versionNote, input.note ?? "", "note");
  let content: WeightSetContent;
  let source: VersionWithSet | null = null;
  if (input.forkFromVersionId !== undefined) {
    if (input.content) throw new UserError(422, "invalid_fields", "A fork copies the version it is forked from: send content or forkFromVersionId, not both.", "content");
    source = await getVersion(input.forkFromVersionId);
    if (!source || source.projectId !== input.projectId) throw new UserError(422, "no_such_version", "The version to fork from is not a version of this project's weight sets.", "forkFromVersionId");
    content = source.content;
    note = [`Forked from “${source.setName}” version ${source.version}.`, note].filter(Boolean).join(" ");
  } else {
    content = input.content ?? defaultWeightSetContent();
  }
  content = check(weightSetContentSchema, content, "content");
  return db().transaction(async (tx) => {
    await lockProjectNames(tx, input.projectId);
    await requireFreeName(tx, input.projectId, name);
    const [set] = await tx
      .insert(weightSets)
      .values({ projectId: input.projectId, name, description, currentVersion: 1, forkedFromVersionId: source?.id ?? null, createdBy: input.userId })
      .returning();
    const [version] = await tx
      .insert(weightSetVersions)
      .values({ weightSetId: set.id, version: 1, content: content as unknown as Record<string, unknown>, contentHash: contentHash(content), note, createdBy: input.userId })
      .returning();
    await recordAudit(tx, {
      actorUserId: input.userId,
      projectId: input.projectId,
      action: source ? "weight_set.forked" : "weight_set.created",
      detail: { weightSetId: set.id, name, versionId: version.id, version: 1, contentHash: version.contentHash, ...(source ? { fromWeightSetId: source.weightSetId, fromVersionId: source.id, fromVersion: source.version } : {}) },
      clientAddress: input.clientAddress,
    });
    return { set, version };
  });
}

/**
 * Adds the next version in one transaction: the set's `current_version` moves from
 * `expectedVersion` to the next number by a conditional UPDATE (the row lock it takes makes a
 * concurrent save at the same version wait and then find no match), so of two saves from the same
 * version exactly one wins; the other gets a 409 naming who saved which version when.
 */
async function addVersion(
  tx: Tx,
  input: { weightSetId: number; expectedVersion: number; content?: WeightSetContent; name?: string; description?: string; note: string; userId: number; clientAddress?: string },
  audit: { action: string; detail?: Record<string, unknown> },
): Promise<VersionRow> {
  const [before] = await tx.select({ name: weightSets.name }).from(weightSets).where(eq(weightSets.id, input.weightSetId));
  if (!before) throw new UserError(404, "no_such_weight_set", "There is no such weight set (it may have been deleted).");
  const [set] = await tx
    .update(weightSets)
    .set({
      currentVersion: sql`${weightSets.currentVersion} + 1`,
      updatedAt: new Date(),
      ...(input.name !== undefined ? { name: input.name } : {}),
      ...(input.description !== undefined ? { description: input.description } : {}),
    })
    .where(and(eq(weightSets.id, input.weightSetId), eq(weightSets.currentVersion, input.expectedVersion)))
    .returning();
  if (!set) return refuseStale(tx, input.weightSetId, input.expectedVersion);
  // Names are checked under the project's name lock, after the row lock (the order every writer keeps).
  if (input.name !== undefined && input.name !== before.name) {
    await lockProjectNames(tx, set.projectId);
    await requireFreeName(tx, set.projectId, input.name, set.id);
  }
  let content = input.content;
  if (!content) {
    const [prev] = await tx.select({ content: weightSetVersions.content }).from(weightSetVersions).where(and(eq(weightSetVersions.weightSetId, set.id), eq(weightSetVersions.version, input.expectedVersion)));
    content = prev.content as unknown as WeightSetContent;
  }
  const [version] = await tx
    .insert(weightSetVersions)
    .values({ weightSetId: set.id, version: set.currentVersion, content: content as unknown as Record<string, unknown>, contentHash: contentHash(content), note: input.note, createdBy: input.userId })
    .returning();
  await recordAudit(tx, {
    actorUserId: input.userId,
    projectId: set.projectId,
    action: audit.action,
    detail: { weightSetId: set.id, name: set.name, versionId: version.id, version: version.version, contentHash: version.contentHash, note: version.note, ...(input.name !== undefined && input.name !== before.name ? { renamedFrom: before.name } : {}), ...audit.detail },
    clientAddress: input.clientAddress,
  });
  return version;
}

async function refuseStale(tx: Tx, weightSetId: number, expectedVersion: number): Promise<never> {
  const [row] = await tx
    .select({ name: weightSets.name, current: weightSets.currentVersion, savedAt: weightSetVersions.createdAt, savedBy: users.name })
    .from(weightSets)
    .leftJoin(weightSetVersions, and(eq(weightSetVersions.weightSetId, weightSets.id), eq(weightSetVersions.version, weightSets.currentVersion)))
    .leftJoin(users, eq(users.id, weightSetVersions.createdBy))
    .where(eq(weightSets.id, weightSetId));
  if (!row) throw new UserError(404, "no_such_weight_set", "There is no such weight set (it may have been deleted).");
  if (expectedVersion > row.current) throw new UserError(409, "no_such_version", `“${row.name}” is at version ${row.current}; there is no version ${expectedVersion} to edit. Reload it and apply your changes again.`, "version");
  const when = row.savedAt ? `${row.savedAt.toISOString().replace("T", " ").slice(0, 16)} UTC` : "a moment ago";
  throw new UserError(
    409,
    "stale_version",
    `“${row.name}” changed while you were editing: version ${row.current} was saved by ${row.savedBy ?? "someone"} at ${when}, after the version ${expectedVersion} you edited. Reload it to see that version, then apply your changes again. Nothing was saved.`,
    "version",
  );
}

/**
 * Saves a new version of a weight set (content, name or description changed; content omitted keeps
 * the current content). `expectedVersion` is the version the edit started from: when someone has
 * saved since, throws UserError 409 saying who saved which version when; nothing is saved.
 */
export async function saveWeightSetVersion(input: {
  weightSetId: number;
  expectedVersion: number;
  content?: WeightSetContent;
  name?: string;
  description?: string;
  note: string;
  userId: number;
  clientAddress?: string;
}): Promise<VersionRow> {
  const name = input.name === undefined ? undefined : check(weightSetName, input.name, "name");
  const description = input.description === undefined ? undefined : check(weightSetDescription, input.description, "description");
  const note = check(versionNote, input.note ?? "", "note");
  const content = input.content === undefined ? undefined : check(weightSetContentSchema, input.content, "content");
  return db().transaction((tx) => addVersion(tx, { ...input, name, description, note, content }, { action: "weight_set.saved" }));
}

/**
 * Restores version `version`: a new version with its content and the note "Restored from version
 * n." (plus the person's note). Stale `expectedVersion` → 409 as for a save.
 */
export async function restoreWeightSetVersion(input: { weightSetId: number; version: number; expectedVersion: number; note?: string; userId: number; clientAddress?: string }): Promise<VersionRow> {
  const extra = check(versionNote, input.note ?? "", "note");
  const old = await versionByNumber(input.weightSetId, input.version);
  if (!old) {
    const [set] = await db().select({ name: weightSets.name, current: weightSets.currentVersion }).from(weightSets).where(eq(weightSets.id, input.weightSetId));
    if (!set) throw new UserError(404, "no_such_weight_set", "There is no such weight set (it may have been deleted).");
    throw new UserError(422, "no_such_version", `“${set.name}” has no version ${input.version} to restore: its versions are 1 to ${set.current}.`, "version");
  }
  const note = [`Restored from version ${old.version}.`, extra].filter(Boolean).join(" ").slice(0, 500);
  return db().transaction((tx) =>
    addVersion(tx, { weightSetId: input.weightSetId, expectedVersion: input.expectedVersion, content: old.content, note, userId: input.userId, clientAddress: input.clientAddress }, { action: "weight_set.restored", detail: { restoredVersion: old.version, restoredVersionId: old.id } }),
  );
}

function listWords(ns: number[]): string {
  return ns.length === 1 ? String(ns[0]) : `${ns.slice(0, -1).join(", ")} and ${ns.at(-1)}`;
}

/**
 * Deletes a weight set and its versions — refused (409, saying which) while one of its versions is
 * the adopted one, appears in the adoption history, or is used by a scoring. The set's row and its
 * versions are locked first, so an adoption or scoring racing the delete either lands before (and
 * the delete is refused) or finds the set gone.
 */
export async function deleteWeightSet(input: { weightSetId: number; userId: number; clientAddress?: string }): Promise<void> {
  try {
    await deleteLocked(input);
  } catch (e) {
    // Belt and braces: a reference the checks could not see (the foreign keys do not cascade).
    if (pgCode(e) === "23503") throw new UserError(409, "weight_set_in_use", "This weight set cannot be deleted: one of its versions is in use (adopted or scored). Reload to see where.");
    throw e;
  }
}

function pgCode(e: unknown): string | undefined {
  const err = e as { code?: string; cause?: { code?: string } } | null;
  return err?.code ?? err?.cause?.code;
}

async function deleteLocked(input: { weightSetId: number; userId: number; clientAddress?: string }): Promise<void> {
  await db().transaction(async (tx) => {
    const [set] = await tx.select().from(weightSets).where(eq(weightSets.id, input.weightSetId)).for("update");
    if (!set) throw new UserError(404, "no_such_weight_set", "There is no such weight set (it may have been deleted).");
    await referencedByReview("weight_set", set.id, tx);
    const versions = await tx.select({ id: weightSetVersions.id, version: weightSetVersions.version }).from(weightSetVersions).where(eq(weightSetVersions.weightSetId, set.id)).for("update");
    const numberOf = new Map(versions.map((v) => [v.id, v.version]));
    const ids = versions.map((v) => v.id);
    const [current] = await tx.select().from(weightSetAdoptions).where(eq(weightSetAdoptions.projectId, set.projectId)).orderBy(desc(weightSetAdoptions.adoptedAt), desc(weightSetAdoptions.id)).limit(1);
    if (current && numberOf.has(current.versionId))
      throw new UserError(409, "weight_set_adopted", `“${set.name}” cannot be deleted: its version ${numberOf.get(current.versionId)} is the project's adopted weight set. A lead must adopt another version first.`);
    const past = ids.length ? await tx.select({ versionId: weightSetAdoptions.versionId }).from(weightSetAdoptions).where(inArray(weightSetAdoptions.versionId, ids)) : [];
    if (past.length) {
      const ns = [...new Set(past.map((p) => numberOf.get(p.versionId)!))].sort((a, b) => a - b);
      throw new UserError(409, "weight_set_in_adoption_history", `“${set.name}” cannot be deleted: its version${ns.length === 1 ? "" : "s"} ${listWords(ns)} ${ns.length === 1 ? "was" : "were"} adopted for the project before, and the adoption history keeps what was adopted.`);
    }
    const used = ids.length ? await tx.select({ id: scorings.id, versionId: scorings.weightSetVersionId }).from(scorings).where(inArray(scorings.weightSetVersionId, ids)).orderBy(asc(scorings.id)) : [];
    if (used.length) {
      const ns = [...new Set(used.map((u) => numberOf.get(u.versionId)!))].sort((a, b) => a - b);
      throw new UserError(
        409,
        "weight_set_scored",
        `“${set.name}” cannot be deleted: ${used.length === 1 ? "scoring" : `${used.length} scorings`} (${used.map((u) => `#${u.id}`).join(", ")}) used its version${ns.length === 1 ? "" : "s"} ${listWords(ns)}.`,
      );
    }
    await tx.delete(weightSets).where(eq(weightSets.id, set.id));
    await recordAudit(tx, { actorUserId: input.userId, projectId: set.projectId, action: "weight_set.deleted", detail: { weightSetId: set.id, name: set.name, versions: set.currentVersion }, clientAddress: input.clientAddress });
  });
}

// ---------------------------------------------------------------------------------------------
// Adoption

/**
 * Adopts a version for the project (callers check `weights.adopt`): records who, when and why, and
 * audits set, version and rationale. Throws UserError 422 when the version is not one of the
 * project's, 409 when it is already the adopted one.
 */
export async function adoptVersion(input: { projectId: number; versionId: number; rationale: string; userId: number; clientAddress?: string }): Promise<AdoptionRow> {
  const rationale = check(adoptionRationale, input.rationale, "rationale");
  return db().transaction(async (tx) => {
    // Adoptions of a project are serialised, and stamped with the clock when they take the lock,
    // so "newest adoption" is the order they happened in.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext('weight_set_adoptions'), ${input.projectId})`);
    // Share-lock the version's set: a delete racing this waits, or has already removed it.
    const [row] = await tx
      .select({ v: weightSetVersions, set: weightSets })
      .from(weightSetVersions)
      .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
      .where(and(eq(weightSetVersions.id, input.versionId), eq(weightSets.projectId, input.projectId)))
      .for("share", { of: weightSets });
    if (!row) throw new UserError(422, "no_such_version", "That version is not a version of this project's weight sets (it may have been deleted).", "versionId");
    const [current] = await tx.select().from(weightSetAdoptions).where(eq(weightSetAdoptions.projectId, input.projectId)).orderBy(desc(weightSetAdoptions.adoptedAt), desc(weightSetAdoptions.id)).limit(1);
    if (current?.versionId === row.v.id) throw new UserError(409, "already_adopted", `Version ${row.v.version} of “${row.set.name}” is already the adopted weight set.`, "versionId");
    const [adoption] = await tx.insert(weightSetAdoptions).values({ projectId: input.projectId, versionId: row.v.id, rationale, adoptedBy: input.userId, adoptedAt: sql`clock_timestamp()` }).returning();
    await recordAudit(tx, {
      actorUserId: input.userId,
      projectId: input.projectId,
      action: "weight_set.adopted",
      detail: { adoptionId: adoption.id, weightSetId: row.set.id, name: row.set.name, versionId: row.v.id, version: row.v.version, contentHash: row.v.contentHash, rationale, previousVersionId: current?.versionId ?? null },
      clientAddress: input.clientAddress,
    });
    return adoption;
  });
}

/** The project's adopted version (the newest adoption), with its set and the adoption, or null. */
export async function adoptedVersion(projectId: number): Promise<{ version: Omit<VersionRow, "content"> & { content: WeightSetContent }; set: SetRow; adoption: AdoptionRow } | null> {
  const [row] = await db()
    .select({ a: weightSetAdoptions, v: weightSetVersions, s: weightSets })
    .from(weightSetAdoptions)
    .innerJoin(weightSetVersions, eq(weightSetVersions.id, weightSetAdoptions.versionId))
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .where(eq(weightSetAdoptions.projectId, projectId))
    .orderBy(desc(weightSetAdoptions.adoptedAt), desc(weightSetAdoptions.id))
    .limit(1);
  if (!row) return null;
  return { version: { ...row.v, content: row.v.content as unknown as WeightSetContent }, set: row.s, adoption: row.a };
}

export interface AdoptionView {
  id: number;
  weightSetId: number;
  name: string;
  versionId: number;
  version: number;
  contentHash: string;
  rationale: string;
  adoptedBy: Who | null;
  adoptedAt: string;
}

/** Every adoption of the project, newest first (the first is the adopted one). */
export async function adoptionHistory(projectId: number): Promise<AdoptionView[]> {
  const rows = await db()
    .select({ a: weightSetAdoptions, v: weightSetVersions, s: weightSets })
    .from(weightSetAdoptions)
    .innerJoin(weightSetVersions, eq(weightSetVersions.id, weightSetAdoptions.versionId))
    .innerJoin(weightSets, eq(weightSets.id, weightSetVersions.weightSetId))
    .where(eq(weightSetAdoptions.projectId, projectId))
    .orderBy(desc(weightSetAdoptions.adoptedAt), desc(weightSetAdoptions.id));
  const names = await namesOf(rows.map((r) => r.a.adoptedBy));
  return rows.map(({ a, v, s }) => ({
    id: a.id,
    weightSetId: s.id,
    name: s.name,
    versionId: v.id,
    version: v.version,
    contentHash: v.contentHash,
    rationale: a.rationale,
    adoptedBy: who(names, a.adoptedBy),
    adoptedAt: a.adoptedAt.toISOString(),
  }));
}

/** The project id of a weight set, for access checks (null when there is none). */
export async function weightSetProject(id: number): Promise<number | null> {
  const [row] = await db().select({ p: weightSets.projectId }).from(weightSets).where(eq(weightSets.id, id));
  return row?.p ?? null;
}
