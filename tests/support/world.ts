// A small world for integration tests: one project with a member of each role, a second project
// with its own owner (the "outsider" of the first), sessions, a token, and a way to call routes
// in-process with real Requests. Everything runs against the per-file test database.
import { eq } from "drizzle-orm";
import { db } from "~/db.server";
import { memberships, projects, users } from "~/db/schema";
import { createApiToken, hashPassword, startSession } from "~/auth.server";
import { REFUSAL_HEADER } from "~/security.server";
import type { Role } from "~/permissions";
import type { LowstandLoadContext } from "~/load-context";

export const PASSWORD = "correct horse battery";
export const ORIGIN = "http://lowstand.test";
process.env.PUBLIC_URL = ORIGIN;

export type Who = "signedOut" | Role | "outsider" | "viewerToken";
export const EVERYONE: Who[] = ["signedOut", "owner", "lead", "analyst", "reviewer", "viewer", "outsider", "viewerToken"];

export interface World {
  projectId: number;
  otherProjectId: number;
  userIds: Record<Role | "outsider", number>;
  cookies: Record<Role | "outsider", string>;
  viewerToken: string;
}

let passwordHash: string | undefined;

export async function makeUser(email: string, name: string, mayCreateProjects = false): Promise<number> {
  passwordHash ??= await hashPassword(PASSWORD);
  const [u] = await db().insert(users).values({ email, name, passwordHash, mayCreateProjects }).returning({ id: users.id });
  return u.id;
}

export async function buildWorld(tag = "w"): Promise<World> {
  const roles: Role[] = ["owner", "lead", "analyst", "reviewer", "viewer"];
  const [project] = await db().insert(projects).values({ slug: `${tag}-main`, name: "Farrow Deep", crsEpsg: 32733 }).returning();
  const [other] = await db().insert(projects).values({ slug: `${tag}-other`, name: "Tessel Bank", crsEpsg: 32733 }).returning();
  const userIds = {} as World["userIds"];
  const cookies = {} as World["cookies"];
  for (const r of roles) {
    userIds[r] = await makeUser(`${r}.${tag}@farrow.example`, `${r[0].toUpperCase()}${r.slice(1)} Person`, r === "owner" || r === "lead");
    await db().insert(memberships).values({ projectId: project.id, userId: userIds[r], role: r });
  }
  userIds.outsider = await makeUser(`outsider.${tag}@tessel.example`, "Outside Person");
  await db().insert(memberships).values({ projectId: other.id, userId: userIds.outsider, role: "owner" });
  for (const k of Object.keys(userIds) as (keyof World["userIds"])[]) cookies[k] = await cookieFor(userIds[k]);
  const { token } = await createApiToken(userIds.viewer, "matrix");
  return { projectId: project.id, otherProjectId: other.id, userIds, cookies, viewerToken: token };
}

export async function cookieFor(userId: number): Promise<string> {
  const setCookie = await startSession(userId, { clientAddress: "127.0.0.1" });
  return setCookie.split(";")[0];
}

export function headersFor(world: World | null, who: Who): Record<string, string> {
  if (!world || who === "signedOut") return {};
  if (who === "viewerToken") return { Authorization: `Bearer ${world.viewerToken}` };
  return { Cookie: world.cookies[who] };
}

export interface CallOptions {
  method?: string;
  headers?: Record<string, string>;
  form?: Record<string, string>;
  json?: unknown;
  body?: string;
  params?: Record<string, string>;
  clientAddress?: string;
  /** Omit the Origin header a browser would send. */
  noOrigin?: boolean;
}

export function makeRequest(path: string, o: CallOptions = {}): Request {
  const method = (o.method ?? "GET").toUpperCase();
  const headers = new Headers(o.headers);
  let body: BodyInit | undefined;
  if (o.form) {
    body = new URLSearchParams(o.form);
    headers.set("Content-Type", "application/x-www-form-urlencoded");
  } else if (o.json !== undefined) {
    body = JSON.stringify(o.json);
    if (!headers.has("Content-Type")) headers.set("Content-Type", "application/json");
  } else if (o.body !== undefined) {
    body = o.body;
  }
  if (method !== "GET" && method !== "HEAD" && !o.noOrigin && !headers.has("Origin")) headers.set("Origin", ORIGIN);
  return new Request(new URL(path, ORIGIN), { method, headers, body });
}

// Loaders and actions take more (url, pattern, typed params); we pass what React Router passes.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type RouteFn = (args: any) => unknown;

/** Calls a loader or action as React Router would, returning a Response for thrown or returned results. */
export async function call(fn: RouteFn, path: string, o: CallOptions = {}): Promise<Response> {
  return callWith(fn, makeRequest(path, o), o.params ?? {}, o.clientAddress);
}

/** The same, with a Request made by the caller (multipart bodies, say). */
export async function callWith(fn: RouteFn, request: Request, params: Record<string, string>, clientAddress = "127.0.0.1"): Promise<Response> {
  try {
    const context: LowstandLoadContext = { clientAddress, requestId: "test" };
    const out = await fn({ request, url: new URL(request.url), pattern: new URL(request.url).pathname, params, context });
    return toResponse(out);
  } catch (e) {
    if (e instanceof Response) return e;
    throw e;
  }
}

function toResponse(out: unknown): Response {
  if (out instanceof Response) return out;
  // React Router's data() helper returns { type: "DataWithResponseInit", data, init }.
  const d = out as { type?: string; data?: unknown; init?: ResponseInit } | null;
  if (d && d.type === "DataWithResponseInit") return Response.json(d.data, d.init ?? {});
  return Response.json(out ?? null);
}

/** Refused: a 401/403/404 marked as an access refusal, or the redirect to sign-in that requireIdentity sends. */
export function isRefusal(res: Response): boolean {
  if (res.headers.has(REFUSAL_HEADER)) return true;
  const loc = res.headers.get("Location");
  return res.status >= 300 && res.status < 400 && !!loc && loc.startsWith("/login?next=");
}

export async function userIdByEmail(email: string): Promise<number | undefined> {
  const [u] = await db().select({ id: users.id }).from(users).where(eq(users.email, email));
  return u?.id;
}
