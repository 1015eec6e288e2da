// Sign-in, sessions stored in the database, and API tokens. See docs/decisions/006-accounts.md.
import argon2 from "argon2";
import { and, eq, gt, isNull, sql } from "drizzle-orm";
import { redirect } from "react-router";
import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { db, type Db } from "./db.server";
import { apiTokens, sessions, users } from "./db/schema";
import { assertSameOrigin, hashToken, isApiRequest, publicUrl, randomToken, refusal } from "./security.server";
import { recordAudit } from "./audit.server";

export interface SessionUser {
  id: number;
  email: string;
  name: string;
  mayCreateProjects: boolean;
}

export interface Identity {
  user: SessionUser;
  via: "session" | "token";
  sessionIdHash?: string;
  tokenId?: number;
}

export const SESSION_COOKIE = "lowstand_session";
export const SESSION_DAYS = 14;
export const TOKEN_PREFIX = "lst_";

// ---------------------------------------------------------------------------------------------
// Passwords

export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 200;

export function hashPassword(password: string): Promise<string> {
  return argon2.hash(password, { type: argon2.argon2id });
}

/** Verified against this when the e-mail is unknown, so unknown and known e-mails take the same time. */
let dummyHash: Promise<string> | undefined;
function timingDummy(): Promise<string> {
  dummyHash ??= hashPassword(randomToken(16));
  return dummyHash;
}

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

// ---------------------------------------------------------------------------------------------
// Sign-in through remix-auth's form strategy

export class SignInRefused extends Error {}

const SIGN_IN_REFUSED = "That e-mail and password do not match an account. Check both and try again.";

export const authenticator = new Authenticator<SessionUser>();
authenticator.use(
  new FormStrategy(async ({ form }) => {
    const email = normaliseEmail(String(form.get("email") ?? ""));
    const password = String(form.get("password") ?? "");
    if (!email || !password) throw new SignInRefused("Enter your e-mail and password.");
    if (email.length > 320 || password.length > PASSWORD_MAX) throw new SignInRefused(SIGN_IN_REFUSED);
    const [row] = await db().select().from(users).where(eq(users.email, email)).limit(1);
    // Always run one argon2 verification, against a throw-away hash when there is no account.
    const ok = await argon2.verify(row?.passwordHash ?? (await timingDummy()), password).catch(() => false);
    if (!row || !ok) throw new SignInRefused(SIGN_IN_REFUSED);
    return { id: row.id, email: row.email, name: row.name, mayCreateProjects: row.mayCreateProjects };
  }),
  "form",
);

// ---------------------------------------------------------------------------------------------
// Sessions

function cookieAttributes(maxAgeSeconds: number): string {
  const secure = publicUrl().protocol === "https:" ? "; Secure" : "";
  return `Path=/; HttpOnly; SameSite=Lax; Max-Age=${maxAgeSeconds}${secure}`;
}

/** Starts a new session (a new id at every sign-in) and returns its Set-Cookie header value. */
export async function startSession(
  userId: number,
  meta: { clientAddress?: string; userAgent?: string },
  database: Db = db(),
): Promise<string> {
  const id = randomToken(32);
  await database.insert(sessions).values({
    idHash: hashToken(id),
    userId,
    expiresAt: new Date(Date.now() + SESSION_DAYS * 86_400_000),
    clientAddress: meta.clientAddress ?? "",
    userAgent: (meta.userAgent ?? "").slice(0, 300),
  });
  return `${SESSION_COOKIE}=${id}; ${cookieAttributes(SESSION_DAYS * 86_400)}`;
}

export function clearSessionCookie(): string {
  return `${SESSION_COOKIE}=; ${cookieAttributes(0)}`;
}

export function readSessionId(request: Request): string | null {
  const header = request.headers.get("Cookie");
  if (!header) return null;
  for (const part of header.split(";")) {
    const [k, ...v] = part.trim().split("=");
    if (k === SESSION_COOKIE) return v.join("=") || null;
  }
  return null;
}

export async function revokeSession(idHash: string): Promise<void> {
  await db().update(sessions).set({ revokedAt: new Date() }).where(eq(sessions.idHash, idHash));
}

/** Ends every session of a user (password reset, and available to admins). */
export async function revokeAllSessions(userId: number, database: Pick<Db, "update"> = db()): Promise<void> {
  await database.update(sessions).set({ revokedAt: new Date() }).where(and(eq(sessions.userId, userId), isNull(sessions.revokedAt)));
}

async function userFromSession(request: Request): Promise<Identity | null> {
  const id = readSessionId(request);
  if (!id) return null;
  const idHash = hashToken(id);
  const now = new Date();
  const [row] = await db()
    .select({ user: { id: users.id, email: users.email, name: users.name, mayCreateProjects: users.mayCreateProjects }, lastSeenAt: sessions.lastSeenAt })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .where(and(eq(sessions.idHash, idHash), isNull(sessions.revokedAt), gt(sessions.expiresAt, now)))
    .limit(1);
  if (!row) return null;
  if (now.getTime() - row.lastSeenAt.getTime() > 5 * 60_000) {
    await db().update(sessions).set({ lastSeenAt: now }).where(eq(sessions.idHash, idHash));
  }
  return { user: row.user, via: "session", sessionIdHash: idHash };
}

// ---------------------------------------------------------------------------------------------
// API tokens

/** Creates a personal API token; the plain token is returned once and never stored. */
export async function createApiToken(userId: number, name: string): Promise<{ id: number; token: string; prefix: string }> {
  const secret = randomToken(24);
  const token = `${TOKEN_PREFIX}${secret}`;
  const prefix = token.slice(0, TOKEN_PREFIX.length + 6);
  const [row] = await db().insert(apiTokens).values({ userId, name, prefix, tokenHash: hashToken(token) }).returning({ id: apiTokens.id });
  return { id: row.id, token, prefix };
}

async function userFromToken(request: Request, header: string): Promise<Identity> {
  const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
  const unauthorized = () =>
    refusal(request, 401, "invalid_token", "The API token is missing, malformed, revoked or unknown. Create a new one in your account settings.");
  if (!m || !m[1].startsWith(TOKEN_PREFIX)) throw unauthorized();
  const [row] = await db()
    .select({ tokenId: apiTokens.id, lastUsedAt: apiTokens.lastUsedAt, user: { id: users.id, email: users.email, name: users.name, mayCreateProjects: users.mayCreateProjects } })
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(and(eq(apiTokens.tokenHash, hashToken(m[1])), isNull(apiTokens.revokedAt)))
    .limit(1);
  if (!row) throw unauthorized();
  const now = new Date();
  if (!row.lastUsedAt || now.getTime() - row.lastUsedAt.getTime() > 60_000) {
    await db().update(apiTokens).set({ lastUsedAt: now }).where(eq(apiTokens.id, row.tokenId));
    // Token use is audited at most once an hour per token, so the log stays readable.
    if (!row.lastUsedAt || now.getTime() - row.lastUsedAt.getTime() > 3_600_000) {
      await recordAudit(db(), { actorUserId: row.user.id, action: "token.used", detail: { tokenId: row.tokenId, path: new URL(request.url).pathname } });
    }
  }
  return { user: row.user, via: "token", tokenId: row.tokenId };
}

// ---------------------------------------------------------------------------------------------
// Asking who the request is from

/**
 * The signed-in identity, or null. With an `Authorization` header the token alone decides
 * (cookies are ignored, and a bad token is refused with 401); tokens count only under /api/. Cookie-authenticated
 * state-changing requests must come from our own origin (CSRF).
 */
export async function getIdentity(request: Request): Promise<Identity | null> {
  const header = request.headers.get("Authorization");
  if (header !== null) {
    // Tokens are for the JSON API; pages (and so account settings, where tokens are made) need a session.
    if (!isApiRequest(request)) throw refusal(request, 401, "token_not_for_pages", "Personal API tokens work only under /api/. Sign in to use the pages.");
    return userFromToken(request, header);
  }
  const identity = await userFromSession(request);
  if (identity) assertSameOrigin(request);
  return identity;
}

/** The identity, or: pages redirect to sign-in, API routes answer 401. */
export async function requireIdentity(request: Request): Promise<Identity> {
  const identity = await getIdentity(request);
  if (identity) return identity;
  if (isApiRequest(request)) throw refusal(request, 401, "not_signed_in", "Sign in, or send a personal API token as Authorization: Bearer <token>.");
  const url = new URL(request.url);
  throw redirect(`/login?next=${encodeURIComponent(url.pathname + url.search)}`);
}

export async function requireUser(request: Request): Promise<SessionUser> {
  return (await requireIdentity(request)).user;
}

/** Sessions and tokens that ended are kept a while for the audit trail, then removed. */
export async function pruneExpiredSessions(): Promise<void> {
  await db().delete(sessions).where(sql`${sessions.expiresAt} < now() - interval '30 days'`);
}

/** The refusal for an account without the right to create projects (docs/decisions/006-accounts.md). */
export function mayNotCreate(request: Request): Response {
  return refusal(request, 403, "may_not_create_projects", "Your account may not create projects. Ask an administrator of this installation, or a lead, to create one and invite you.");
}
