// Projects and their members: create, list, invite, change role, remove. Every function takes the
// acting user and checks what it must; routes call these after asking permissions.server.ts.
import { and, asc, count, desc, eq, gt, isNull, sql } from "drizzle-orm";
import { db } from "./db.server";
import { auditLog, invitations, memberships, projects, users } from "./db/schema";
import { UserError } from "./errors";
import { mayAssignRole, ROLE_LABELS, type Role } from "./permissions";
import { recordAudit } from "./audit.server";
import { kickMailDispatcher, queueMail } from "./mail.server";
import { absoluteUrl, hashToken, randomToken } from "./security.server";
import { revokeAllSessions, type SessionUser } from "./auth.server";
import { resolveCrs } from "./terrain/crs";
import { TerrainInputError } from "./terrain/grid";

export const INVITATION_DAYS = 7;

export interface RequestMeta {
  clientAddress?: string;
}

export async function listProjectsForUser(userId: number) {
  return db()
    .select({ id: projects.id, slug: projects.slug, name: projects.name, summary: projects.summary, crsEpsg: projects.crsEpsg, isDemo: projects.isDemo, role: memberships.role })
    .from(memberships)
    .innerJoin(projects, eq(projects.id, memberships.projectId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(projects.name));
}

function slugify(name: string): string {
  return (
    name
      .normalize("NFKD")
      .replace(/[\u0300-\u036f]/g, "")
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, "-")
      .replace(/^-|-$/g, "")
      .slice(0, 60) || "project"
  );
}

/**
 * Creates a project with its creator as owner. Who may create projects is a per-user flag
 * (docs/decisions/006-accounts.md); the creation is audited.
 */
export async function createProject(actor: SessionUser, fields: { name: string; summary: string; crsEpsg: number }, meta: RequestMeta = {}) {
  if (!actor.mayCreateProjects) {
    throw new UserError(403, "may_not_create_projects", "Your account may not create projects. Ask an administrator of this installation, or a lead, to create one and invite you.");
  }
  try {
    resolveCrs(fields.crsEpsg);
  } catch (e) {
    if (e instanceof TerrainInputError) throw new UserError(422, "unknown_crs", e.message, "crsEpsg");
    throw e;
  }
  return db().transaction(async (tx) => {
    const base = slugify(fields.name);
    const taken = await tx.select({ slug: projects.slug }).from(projects).where(sql`${projects.slug} = ${base} or ${projects.slug} like ${base + "-%"}`);
    const used = new Set(taken.map((t) => t.slug));
    let slug = base;
    for (let i = 2; used.has(slug); i++) slug = `${base}-${i}`;
    const [project] = await tx.insert(projects).values({ ...fields, slug, createdBy: actor.id }).returning();
    await tx.insert(memberships).values({ projectId: project.id, userId: actor.id, role: "owner" });
    await recordAudit(tx, { actorUserId: actor.id, projectId: project.id, action: "project.created", detail: { name: project.name, crsEpsg: project.crsEpsg }, clientAddress: meta.clientAddress });
    return project;
  });
}

export async function listMembers(projectId: number) {
  return db()
    .select({ userId: users.id, name: users.name, email: users.email, role: memberships.role, custodianFor: memberships.custodianFor, since: memberships.createdAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.projectId, projectId))
    .orderBy(asc(users.name));
}

export async function listPendingInvitations(projectId: number) {
  return db()
    .select({ id: invitations.id, email: invitations.email, role: invitations.role, createdAt: invitations.createdAt, expiresAt: invitations.expiresAt })
    .from(invitations)
    .where(and(eq(invitations.projectId, projectId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())))
    .orderBy(desc(invitations.createdAt));
}

export async function listAudit(projectId: number, limit = 200) {
  return db()
    .select({ id: auditLog.id, at: auditLog.at, action: auditLog.action, detail: auditLog.detail, actorName: users.name, actorEmail: users.email, clientAddress: auditLog.clientAddress })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorUserId))
    .where(eq(auditLog.projectId, projectId))
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .limit(limit);
}

/**
 * Invites someone by e-mail. The link carries a random single-use token (stored hashed), expires
 * in INVITATION_DAYS, and is built from PUBLIC_URL. A new invitation to the same address replaces
 * a pending one. The mail is queued in the same transaction.
 */
export async function inviteMember(
  actor: SessionUser,
  actorRole: Role,
  project: { id: number; name: string },
  fields: { email: string; role: Role },
  meta: RequestMeta = {},
) {
  if (!mayAssignRole(actorRole, fields.role)) {
    throw new UserError(403, "may_not_assign_role", `As ${ROLE_LABELS[actorRole].toLowerCase()} you may not invite someone as ${ROLE_LABELS[fields.role].toLowerCase()}.`, "role");
  }
  const token = randomToken(32);
  await db().transaction(async (tx) => {
    const [existing] = await tx
      .select({ userId: users.id })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(and(eq(memberships.projectId, project.id), eq(users.email, fields.email)));
    if (existing) throw new UserError(409, "already_member", `${fields.email} is already a member of this project; change their role instead.`, "email");
    await tx
      .update(invitations)
      .set({ revokedAt: new Date() })
      .where(and(eq(invitations.projectId, project.id), eq(invitations.email, fields.email), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)));
    const [inv] = await tx
      .insert(invitations)
      .values({ projectId: project.id, email: fields.email, role: fields.role, tokenHash: hashToken(token), invitedBy: actor.id, expiresAt: new Date(Date.now() + INVITATION_DAYS * 86_400_000) })
      .returning({ id: invitations.id });
    const link = absoluteUrl(`/invitations/${token}`);
    await queueMail(tx, {
      to: fields.email,
      subject: `${actor.name} invites you to ${project.name} on Lowstand`,
      text:
        `${actor.name} (${actor.email}) invites you to join the project "${project.name}" on Lowstand as ${ROLE_LABELS[fields.role].toLowerCase()}.\n\n` +
        `Accept the invitation here (the link works once and expires in ${INVITATION_DAYS} days):\n${link}\n\n` +
        `If you did not expect this, ignore this message.\n`,
    });
    await recordAudit(tx, { actorUserId: actor.id, projectId: project.id, action: "member.invited", detail: { invitationId: inv.id, email: fields.email, role: fields.role }, clientAddress: meta.clientAddress });
  });
  kickMailDispatcher();
}

export async function revokeInvitation(actor: SessionUser, projectId: number, invitationId: number, meta: RequestMeta = {}) {
  const done = await db().transaction(async (tx) => {
    const rows = await tx
      .update(invitations)
      .set({ revokedAt: new Date() })
      .where(and(eq(invitations.id, invitationId), eq(invitations.projectId, projectId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)))
      .returning({ email: invitations.email });
    if (rows.length) await recordAudit(tx, { actorUserId: actor.id, projectId, action: "member.invitation_revoked", detail: { invitationId, email: rows[0].email }, clientAddress: meta.clientAddress });
    return rows.length > 0;
  });
  if (!done) throw new UserError(404, "no_such_invitation", "That invitation is not pending any more (accepted, revoked or expired).");
}

async function memberRole(tx: Parameters<Parameters<ReturnType<typeof db>["transaction"]>[0]>[0], projectId: number, userId: number) {
  // Lock the project's membership rows so two concurrent changes cannot both remove "the other" owner.
  const rows = await tx.execute<{ user_id: number; role: Role }>(sql`select user_id, role from memberships where project_id = ${projectId} for update`);
  const owners = rows.rows.filter((r) => r.role === "owner").length;
  const target = rows.rows.find((r) => r.user_id === userId);
  return { owners, current: target?.role ?? null };
}

export async function changeMemberRole(actor: SessionUser, actorRole: Role, projectId: number, userId: number, role: Role, meta: RequestMeta = {}) {
  await db().transaction(async (tx) => {
    const { owners, current } = await memberRole(tx, projectId, userId);
    if (!current) throw new UserError(404, "not_a_member", "That person is not a member of this project.");
    if (!mayAssignRole(actorRole, role, current)) {
      throw new UserError(403, "may_not_assign_role", `As ${ROLE_LABELS[actorRole].toLowerCase()} you may not change a ${ROLE_LABELS[current].toLowerCase()} to ${ROLE_LABELS[role].toLowerCase()}.`, "role");
    }
    if (current === role) return;
    if (current === "owner" && owners <= 1) {
      throw new UserError(409, "last_owner", "This is the project's only owner. Make someone else owner first.");
    }
    await tx.update(memberships).set({ role }).where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
    await recordAudit(tx, { actorUserId: actor.id, projectId, action: "member.role_changed", detail: { userId, from: current, to: role }, clientAddress: meta.clientAddress });
  });
}

/** Removes a member and ends their sessions. The last owner cannot be removed. */
export async function removeMember(actor: SessionUser, actorRole: Role, projectId: number, userId: number, meta: RequestMeta = {}) {
  await db().transaction(async (tx) => {
    const { owners, current } = await memberRole(tx, projectId, userId);
    if (!current) throw new UserError(404, "not_a_member", "That person is not a member of this project.");
    if (!mayAssignRole(actorRole, current, current)) {
      throw new UserError(403, "may_not_remove", `As ${ROLE_LABELS[actorRole].toLowerCase()} you may not remove a ${ROLE_LABELS[current].toLowerCase()}.`);
    }
    if (current === "owner" && owners <= 1) {
      throw new UserError(409, "last_owner", "This is the project's only owner and cannot be removed. Make someone else owner first.");
    }
    await tx.delete(memberships).where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
    await revokeAllSessions(userId, tx);
    await recordAudit(tx, { actorUserId: actor.id, projectId, action: "member.removed", detail: { userId, role: current }, clientAddress: meta.clientAddress });
  });
}

export async function memberCount(projectId: number): Promise<number> {
  const [r] = await db().select({ n: count() }).from(memberships).where(eq(memberships.projectId, projectId));
  return r.n;
}

/**
 * Names the community a member speaks for as custodian (design §9), or clears it with null. The
 * custodian then controls the visibility of the records that community contributed.
 */
export async function setCustodian(actor: SessionUser, projectId: number, userId: number, community: string | null, meta: RequestMeta = {}) {
  await db().transaction(async (tx) => {
    const rows = await tx
      .update(memberships)
      .set({ custodianFor: community })
      .where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)))
      .returning({ userId: memberships.userId });
    if (!rows.length) throw new UserError(404, "not_a_member", "That person is not a member of this project.");
    await recordAudit(tx, { actorUserId: actor.id, projectId, action: "member.custodian_set", detail: { userId, community }, clientAddress: meta.clientAddress });
  });
}
