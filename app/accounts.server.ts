// Joining by invitation, resetting a password, personal API tokens, account settings.
import { and, desc, eq, gt, isNull } from "drizzle-orm";
import { db } from "./db.server";
import { apiTokens, invitations, memberships, passwordResets, projects, users } from "./db/schema";
import { UserError } from "./errors";
import { recordAudit } from "./audit.server";
import { kickMailDispatcher, queueMail } from "./mail.server";
import { absoluteUrl, hashToken, randomToken } from "./security.server";
import { createApiToken, hashPassword, normaliseEmail, revokeAllSessions, type SessionUser } from "./auth.server";
import type { Role } from "./permissions";

export const RESET_MINUTES = 60;

export interface InvitationView {
  projectName: string;
  email: string;
  role: Role;
  inviterName: string | null;
  accountExists: boolean;
}

const INVITATION_GONE =
  "This invitation link is not valid any more: it was used, replaced, revoked or has expired. Ask the project's lead to invite you again.";

/** What an invitation link offers, without consuming it. */
export async function viewInvitation(token: string): Promise<InvitationView> {
  const [row] = await db()
    .select({ projectName: projects.name, email: invitations.email, role: invitations.role, invitedBy: invitations.invitedBy })
    .from(invitations)
    .innerJoin(projects, eq(projects.id, invitations.projectId))
    .where(and(eq(invitations.tokenHash, hashToken(token)), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())))
    .limit(1);
  if (!row) throw new UserError(410, "invitation_gone", INVITATION_GONE);
  const [inviter] = row.invitedBy ? await db().select({ name: users.name }).from(users).where(eq(users.id, row.invitedBy)) : [];
  const [account] = await db().select({ id: users.id }).from(users).where(eq(users.email, row.email));
  return { projectName: row.projectName, email: row.email, role: row.role, inviterName: inviter?.name ?? null, accountExists: !!account };
}

/**
 * Accepts an invitation. The token is consumed atomically (one UPDATE … WHERE not yet accepted),
 * so a link works exactly once even when clicked twice at the same moment. A new account is
 * created with `newAccount`; an existing account must be the signed-in `signedIn` user.
 * Returns the user id and project id.
 */
export async function acceptInvitation(
  token: string,
  who: { signedIn: SessionUser | null; newAccount?: { name: string; password: string } },
  meta: { clientAddress?: string } = {},
): Promise<{ userId: number; projectId: number; created: boolean }> {
  const passwordHash = who.newAccount ? await hashPassword(who.newAccount.password) : null;
  return db().transaction(async (tx) => {
    const [inv] = await tx
      .update(invitations)
      .set({ acceptedAt: new Date() })
      .where(and(eq(invitations.tokenHash, hashToken(token)), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())))
      .returning();
    if (!inv) throw new UserError(410, "invitation_gone", INVITATION_GONE);
    const [existing] = await tx.select({ id: users.id }).from(users).where(eq(users.email, inv.email));
    let userId: number;
    let created = false;
    if (existing) {
      if (!who.signedIn || who.signedIn.id !== existing.id) {
        throw new UserError(403, "sign_in_first", `An account for ${inv.email} exists: sign in as ${inv.email}, then open the link again.`);
      }
      userId = existing.id;
    } else {
      if (!who.newAccount || !passwordHash) throw new UserError(422, "account_details_needed", "Choose your name and a password to create your account.");
      const [u] = await tx.insert(users).values({ email: inv.email, name: who.newAccount.name, passwordHash }).returning({ id: users.id });
      userId = u.id;
      created = true;
    }
    await tx
      .insert(memberships)
      .values({ projectId: inv.projectId, userId, role: inv.role })
      .onConflictDoUpdate({ target: [memberships.projectId, memberships.userId], set: { role: inv.role } });
    await tx.update(invitations).set({ acceptedBy: userId }).where(eq(invitations.id, inv.id));
    await recordAudit(tx, { actorUserId: userId, projectId: inv.projectId, action: "member.joined", detail: { invitationId: inv.id, role: inv.role, newAccount: created }, clientAddress: meta.clientAddress });
    return { userId, projectId: inv.projectId, created };
  });
}

/**
 * Starts a password reset. Whether or not an account has the address, the caller sees the same
 * answer; only an existing account gets a message (single-use token, RESET_MINUTES to live).
 */
export async function requestPasswordReset(emailInput: string, meta: { clientAddress?: string } = {}): Promise<void> {
  const email = normaliseEmail(emailInput);
  const token = randomToken(32);
  await db().transaction(async (tx) => {
    const [user] = await tx.select({ id: users.id, name: users.name }).from(users).where(eq(users.email, email));
    if (!user) return;
    // Recent unused tokens stop working when a new one is asked for.
    await tx.update(passwordResets).set({ usedAt: new Date() }).where(and(eq(passwordResets.userId, user.id), isNull(passwordResets.usedAt)));
    await tx.insert(passwordResets).values({ userId: user.id, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + RESET_MINUTES * 60_000) });
    await queueMail(tx, {
      to: email,
      subject: "Reset your Lowstand password",
      text:
        `Someone (we hope you) asked to reset the password of the Lowstand account for ${email}.\n\n` +
        `Choose a new password here (the link works once and expires in ${RESET_MINUTES} minutes):\n${absoluteUrl(`/reset-password/${token}`)}\n\n` +
        `If you did not ask, ignore this message: your password stays as it is.\n`,
    });
    await recordAudit(tx, { actorUserId: user.id, action: "password.reset_requested", clientAddress: meta.clientAddress });
  });
  kickMailDispatcher();
}

/** Whether a reset link is still usable (for showing the form), without consuming it. */
export async function resetTokenUsable(token: string): Promise<boolean> {
  const [row] = await db()
    .select({ id: passwordResets.id })
    .from(passwordResets)
    .where(and(eq(passwordResets.tokenHash, hashToken(token)), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, new Date())));
  return !!row;
}

/** Sets a new password from a reset link, consuming it atomically, and ends every session. */
export async function resetPassword(token: string, newPassword: string, meta: { clientAddress?: string } = {}): Promise<number> {
  const passwordHash = await hashPassword(newPassword);
  return db().transaction(async (tx) => {
    const [reset] = await tx
      .update(passwordResets)
      .set({ usedAt: new Date() })
      .where(and(eq(passwordResets.tokenHash, hashToken(token)), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, new Date())))
      .returning({ userId: passwordResets.userId });
    if (!reset) throw new UserError(410, "reset_gone", "This reset link is not valid any more: it was used, replaced or has expired. Ask for a new one.");
    await tx.update(users).set({ passwordHash }).where(eq(users.id, reset.userId));
    await revokeAllSessions(reset.userId, tx);
    await recordAudit(tx, { actorUserId: reset.userId, action: "password.reset", clientAddress: meta.clientAddress });
    return reset.userId;
  });
}

export async function listApiTokens(userId: number) {
  return db()
    .select({ id: apiTokens.id, name: apiTokens.name, prefix: apiTokens.prefix, createdAt: apiTokens.createdAt, lastUsedAt: apiTokens.lastUsedAt })
    .from(apiTokens)
    .where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .orderBy(desc(apiTokens.createdAt));
}

export async function issueApiToken(user: SessionUser, name: string, meta: { clientAddress?: string } = {}) {
  const active = await listApiTokens(user.id);
  if (active.length >= 20) throw new UserError(409, "too_many_tokens", "You have 20 active API tokens; revoke one you no longer use first.");
  const t = await createApiToken(user.id, name);
  await recordAudit(db(), { actorUserId: user.id, action: "token.created", detail: { tokenId: t.id, name, prefix: t.prefix }, clientAddress: meta.clientAddress });
  return t;
}

export async function revokeApiToken(user: SessionUser, tokenId: number, meta: { clientAddress?: string } = {}) {
  const rows = await db()
    .update(apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, user.id), isNull(apiTokens.revokedAt)))
    .returning({ id: apiTokens.id });
  if (!rows.length) throw new UserError(404, "no_such_token", "No active token of yours has that id.");
  await recordAudit(db(), { actorUserId: user.id, action: "token.revoked", detail: { tokenId }, clientAddress: meta.clientAddress });
}

export async function updateAccount(user: SessionUser, fields: { name: string; jobEmails: boolean }) {
  await db().update(users).set({ name: fields.name, jobEmails: fields.jobEmails }).where(eq(users.id, user.id));
}

export async function accountSettings(userId: number) {
  const [row] = await db().select({ name: users.name, email: users.email, jobEmails: users.jobEmails, mayCreateProjects: users.mayCreateProjects }).from(users).where(eq(users.id, userId));
  return row;
}

/** Creates a user directly (seed and the scripts/ command); the only way in besides an invitation. */
export async function createUserDirect(fields: { email: string; name: string; password: string; mayCreateProjects?: boolean }) {
  const [u] = await db()
    .insert(users)
    .values({ email: normaliseEmail(fields.email), name: fields.name, passwordHash: await hashPassword(fields.password), mayCreateProjects: fields.mayCreateProjects ?? false })
    .returning({ id: users.id });
  return u.id;
}

