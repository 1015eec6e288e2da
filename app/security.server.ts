// Small security primitives shared by auth, invitations, resets and API tokens.
import { createHash, randomBytes, timingSafeEqual } from "node:crypto";

/** A URL-safe random token of `bytes` random bytes. */
export function randomToken(bytes = 32): string {
  return randomBytes(bytes).toString("base64url");
}

/** Tokens are stored only as their SHA-256 (they are long and random, so no salt or slow hash is needed). */
export function hashToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}

export function safeEqual(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/** The configured public address. Links in e-mails are built from it, never from the Host header. */
export function publicUrl(): URL {
  const raw = process.env.PUBLIC_URL ?? `http://${process.env.HOST ?? "127.0.0.1"}:${process.env.PORT ?? 3000}`;
  return new URL(raw);
}

export function absoluteUrl(pathname: string): string {
  return new URL(pathname, publicUrl()).toString();
}

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Cross-site request forgery guard for state-changing requests. Browsers send `Origin` on every
 * non-GET request (and `Sec-Fetch-Site`); such a request must come from our own origin. A request
 * with neither header is not from a browser (curl, scripts) and cannot be a forged cross-site
 * request, so it passes. Throws a 403 response otherwise. See docs/decisions/006-accounts.md.
 */
export function assertSameOrigin(request: Request): void {
  if (SAFE_METHODS.has(request.method.toUpperCase())) return;
  const origin = request.headers.get("Origin");
  const site = request.headers.get("Sec-Fetch-Site");
  const allowed = new Set([publicUrl().origin, new URL(request.url).origin]);
  if (origin !== null ? allowed.has(origin) : site === null || site === "same-origin" || site === "none") return;
  throw refusal(request, 403, "cross_site", "This request did not come from a Lowstand page, so it was refused. Reload the page and try again.");
}

/** True for the JSON API (paths under /api/). */
export function isApiRequest(request: Request): boolean {
  return new URL(request.url).pathname.startsWith("/api/");
}

/** An error response in the API's shape for /api/ requests, plain text for pages. */
/**
 * An access refusal (not signed in, bad token, not a member, role may not, cross-site): for /api/
 * requests in the API's error shape, for pages as plain text. It carries `X-Lowstand-Refusal: <code>`
 * so tools and tests can tell a refusal of access from an ordinary 4xx about the input.
 */
export function refusal(request: Request, status: number, code: string, message: string): Response {
  const headers = { [REFUSAL_HEADER]: code };
  if (isApiRequest(request)) return apiError(status, code, message, headers);
  return new Response(message, { status, statusText: statusText(status), headers: { "Content-Type": "text/plain; charset=utf-8", ...headers } });
}

export const REFUSAL_HEADER = "X-Lowstand-Refusal";

export function apiError(status: number, code: string, message: string, headers?: HeadersInit): Response {
  return Response.json({ error: { code, message } }, { status, headers });
}

function statusText(status: number): string {
  return ({ 400: "Bad Request", 401: "Unauthorized", 403: "Forbidden", 404: "Not Found", 409: "Conflict", 413: "Payload Too Large", 415: "Unsupported Media Type", 429: "Too Many Requests" } as Record<number, string>)[status] ?? "Error";
}
