// Invitations and password resets end to end: mail over real SMTP to the catcher, links used once.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import { db } from "~/db.server";
import { auditLog, invitations, memberships, sessions } from "~/db/schema";
import * as members from "~/routes/project-members";
import * as invitation from "~/routes/invitation";
import * as forgot from "~/routes/forgot-password";
import * as reset from "~/routes/reset-password";
import * as login from "~/routes/login";
import * as apiMe from "~/routes/api.me";
import * as apiMember from "~/routes/api.project-member";
import * as apiMembers from "~/routes/api.project-members";
import { buildWorld, call, ORIGIN, PASSWORD, userIdByEmail, type World } from "../tests/support/world";
import { latestMailTo, linkIn, startTestCatcher } from "../tests/support/mail";
import type { CatcherHandle } from "~/mail-catcher.server";

let world: World;
let catcher: CatcherHandle;
beforeAll(async () => {
  catcher = await startTestCatcher();
  world = await buildWorld("inv");
});
afterAll(async () => {
  await catcher.close();
});

const pid = () => String(world.projectId);

async function invite(as: keyof World["cookies"], email: string, role: string) {
  return call(members.action, `/projects/${pid()}/members`, {
    method: "POST",
    params: { projectId: pid() },
    headers: { Cookie: world.cookies[as] },
    form: { intent: "invite", email, role },
  });
}

describe("invitations", () => {
  it("e-mails a link built from PUBLIC_URL that creates the account and works exactly once", async () => {
    const res = await invite("lead", "Newcomer@Farrow.example", "analyst");
    expect(res.status).toBe(200);
    const mail = await latestMailTo("newcomer@farrow.example");
    expect(mail.subject).toContain("Farrow Deep");
    const link = linkIn(mail.textBody, "/invitations");
    expect(link.startsWith(`${ORIGIN}/invitations/`)).toBe(true);
    const token = link.split("/invitations/")[1];
    // Only the hash is stored.
    const stored = await db().select({ h: invitations.tokenHash }).from(invitations).where(eq(invitations.email, "newcomer@farrow.example"));
    expect(stored[0].h).not.toContain(token);

    const view = await (await call(invitation.loader, `/invitations/${token}`, { params: { token } })).json();
    expect(view).toMatchObject({ ok: true, inv: { email: "newcomer@farrow.example", role: "analyst", accountExists: false } });

    const accept = await call(invitation.action, `/invitations/${token}`, { method: "POST", params: { token }, form: { name: "Nell Comer", password: "a long enough password" } });
    expect(accept.status).toBe(302);
    expect(accept.headers.get("Location")).toBe(`/projects/${pid()}`);
    expect(accept.headers.get("Set-Cookie")).toMatch(/lowstand_session=/);
    const uid = await userIdByEmail("newcomer@farrow.example");
    const [m] = await db().select().from(memberships).where(and(eq(memberships.userId, uid!), eq(memberships.projectId, world.projectId)));
    expect(m.role).toBe("analyst");

    const again = await call(invitation.action, `/invitations/${token}`, { method: "POST", params: { token }, form: { name: "Second Try", password: "a long enough password" } });
    expect(again.status).toBe(410);
    expect((await call(invitation.loader, `/invitations/${token}`, { params: { token } })).status).toBe(410);
  });

  it("refuses an expired link", async () => {
    await invite("owner", "late@farrow.example", "viewer");
    const token = linkIn((await latestMailTo("late@farrow.example")).textBody, "/invitations").split("/invitations/")[1];
    await db().update(invitations).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(invitations.email, "late@farrow.example"));
    const res = await call(invitation.action, `/invitations/${token}`, { method: "POST", params: { token }, form: { name: "Late Person", password: "a long enough password" } });
    expect(res.status).toBe(410);
    expect(await userIdByEmail("late@farrow.example")).toBeUndefined();
  });

  it("refuses HTML in a new member's name, leaving the link usable", async () => {
    await invite("owner", "markup@farrow.example", "viewer");
    const token = linkIn((await latestMailTo("markup@farrow.example")).textBody, "/invitations").split("/invitations/")[1];
    const bad = await call(invitation.action, `/invitations/${token}`, { method: "POST", params: { token }, form: { name: "<script>x</script>", password: "a long enough password" } });
    expect(bad.status).toBe(422);
    expect((await bad.json()).error).toMatch(/cannot contain/);
    const good = await call(invitation.action, `/invitations/${token}`, { method: "POST", params: { token }, form: { name: "Mark Up", password: "a long enough password" } });
    expect(good.status).toBe(302);
  });

  it("refuses to invite an existing member, with nothing queued", async () => {
    const before = await db().execute(sql`select count(*)::int as n from mail_outbox`);
    const res = await invite("owner", "viewer.inv@farrow.example", "analyst");
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatch(/already a member/);
    const after = await db().execute(sql`select count(*)::int as n from mail_outbox`);
    expect(after.rows[0].n).toBe(before.rows[0].n);
  });

  it("does not let a lead make an owner", async () => {
    const res = await invite("lead", "boss@farrow.example", "owner");
    expect(res.status).toBe(403);
  });

  it("records invitations in the audit log", async () => {
    const rows = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "member.invited")));
    expect(rows.length).toBeGreaterThanOrEqual(3);
  });
});

describe("members through the API", () => {
  const memberPath = (uid: number) => `/api/projects/${pid()}/members/${uid}`;

  it("refuses malformed JSON and unknown roles with a message, changing nothing", async () => {
    const malformed = await call(apiMembers.action, `/api/projects/${pid()}/members`, { method: "POST", params: { projectId: pid() }, headers: { Cookie: world.cookies.owner, "Content-Type": "application/json" }, body: "{not json" });
    expect(malformed.status).toBe(400);
    expect((await malformed.json()).error.code).toBe("malformed_json");
    const badRole = await call(apiMember.action, memberPath(world.userIds.viewer), { method: "PATCH", params: { projectId: pid(), userId: String(world.userIds.viewer) }, headers: { Cookie: world.cookies.owner }, json: { role: "emperor" } });
    expect(badRole.status).toBe(422);
    expect((await badRole.json()).error.message).toMatch(/role/);
    const long = await call(apiMembers.action, `/api/projects/${pid()}/members`, { method: "POST", params: { projectId: pid() }, headers: { Cookie: world.cookies.owner }, json: { email: `${"a".repeat(400)}@x.example`, role: "viewer" } });
    expect(long.status).toBe(422);
  });

  it("changes a role, and keeps the last owner in place", async () => {
    const ok = await call(apiMember.action, memberPath(world.userIds.viewer), { method: "PATCH", params: { projectId: pid(), userId: String(world.userIds.viewer) }, headers: { Cookie: world.cookies.owner }, json: { role: "reviewer" } });
    expect(ok.status).toBe(200);
    const demote = await call(apiMember.action, memberPath(world.userIds.owner), { method: "PATCH", params: { projectId: pid(), userId: String(world.userIds.owner) }, headers: { Cookie: world.cookies.owner }, json: { role: "lead" } });
    expect(demote.status).toBe(409);
    const remove = await call(apiMember.action, memberPath(world.userIds.owner), { method: "DELETE", params: { projectId: pid(), userId: String(world.userIds.owner) }, headers: { Cookie: world.cookies.owner } });
    expect(remove.status).toBe(409);
    expect((await remove.json()).error.code).toBe("last_owner");
  });

  it("removes a member and ends their sessions", async () => {
    const victim = world.userIds.analyst;
    expect((await call(apiMe.loader, "/api/me", { headers: { Cookie: world.cookies.analyst } })).status).toBe(200);
    const res = await call(apiMember.action, memberPath(victim), { method: "DELETE", params: { projectId: pid(), userId: String(victim) }, headers: { Cookie: world.cookies.lead } });
    expect(res.status).toBe(204);
    expect((await call(apiMe.loader, "/api/me", { headers: { Cookie: world.cookies.analyst } })).status).toBe(401);
    const live = await db().execute(sql`select count(*)::int as n from sessions where user_id = ${victim} and revoked_at is null`);
    expect(live.rows[0].n).toBe(0);
  });
});

describe("password reset", () => {
  it("answers alike for unknown addresses and mails nobody", async () => {
    const res = await call(forgot.action, "/forgot-password", { method: "POST", form: { email: "nobody@farrow.example" } });
    expect(await res.json()).toMatchObject({ sent: true });
    expect(await latestMailTo("nobody@farrow.example")).toBeUndefined();
  });

  it("sets a new password once, ends every session, and the old password stops working", async () => {
    const email = "reviewer.inv@farrow.example";
    const res = await call(forgot.action, "/forgot-password", { method: "POST", form: { email } });
    expect(await res.json()).toMatchObject({ sent: true });
    const link = linkIn((await latestMailTo(email)).textBody, "/reset-password");
    expect(link.startsWith(`${ORIGIN}/reset-password/`)).toBe(true);
    const token = link.split("/reset-password/")[1];

    const short = await call(reset.action, link, { method: "POST", params: { token }, form: { password: "short" } });
    expect(short.status).toBe(422);

    const done = await call(reset.action, link, { method: "POST", params: { token }, form: { password: "a brand new passphrase" } });
    expect(done.status).toBe(302);
    const live = await db().select().from(sessions).where(and(eq(sessions.userId, world.userIds.reviewer), sql`revoked_at is null`));
    expect(live).toHaveLength(0);
    expect((await call(reset.action, link, { method: "POST", params: { token }, form: { password: "another new passphrase" } })).status).toBe(410);

    const oldPw = await call(login.action, "/login", { method: "POST", form: { email, password: PASSWORD }, clientAddress: "10.9.9.9" });
    expect(oldPw.status).toBe(400);
    const newPw = await call(login.action, "/login", { method: "POST", form: { email, password: "a brand new passphrase" }, clientAddress: "10.9.9.9" });
    expect(newPw.status).toBe(302);
  });
});
