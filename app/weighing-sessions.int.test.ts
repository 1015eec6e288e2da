// Weighing sessions against the real database and the real routes: events are numbered without gaps
// under concurrency, the live stream catches a reconnecting client up with exactly what it missed,
// refuses non-members and ends when a member's role changes or they are removed, bad proposals are
// refused with nothing stored, and adopting writes a weight-set version with the rationale.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { buildWorld, call, callWith, headersFor, isRefusal, makeRequest, type World } from "../tests/support/world";
import { db } from "./db.server";
import { auditLog, weightSetAdoptions, weightSetVersions } from "./db/schema";
import { weighingEvents, weighingProposals, weighingSessions } from "./db/live-schema";
import { addComment, eventsAfter, getSession, saveProposal, type SessionRow } from "./weighing-sessions.server";
import { changeMemberRole, removeMember } from "./projects.server";
import { stopLiveHub } from "./live.server";
import { defaultWeightSetContent, type WeightSetContent } from "./scoring/weight-set";
import * as liveRoute from "./routes/live.session-events";
import * as startRoute from "./routes/api.project-sessions";
import * as proposalRoute from "./routes/api.session-proposal";
import * as commentRoute from "./routes/api.session-comments";
import * as outcomeRoute from "./routes/api.session-outcome";
import * as eventsRoute from "./routes/api.session-events";
import type { SessionEvent } from "./components/session/session-state";

let w: World;
afterAll(async () => {
  await stopLiveHub();
});
beforeAll(async () => {
  w = await buildWorld("ws");
});

const sid = (s: { id: number }) => ({ sessionId: String(s.id) });

async function start(body: Record<string, unknown> = { title: "Coastal factors", method: "direct" }): Promise<SessionRow> {
  const res = await call(startRoute.action, `/api/projects/${w.projectId}/weighing-sessions`, { method: "POST", headers: headersFor(w, "lead"), params: { projectId: String(w.projectId) }, json: body });
  expect(res.status, await res.clone().text()).toBe(201);
  const { session } = await res.json();
  return (await getSession(session.id))!;
}

function weights(ws: Record<string, number>): WeightSetContent {
  const base = defaultWeightSetContent();
  return { ...base, factors: base.factors.map((f) => ({ ...f, weight: ws[f.factor] ?? 0 })) };
}

async function propose(s: SessionRow, who: "owner" | "lead" | "analyst" | "reviewer" | "viewer", content: unknown) {
  return call(proposalRoute.action, `/api/weighing-sessions/${s.id}/proposal`, { method: "POST", headers: headersFor(w, who), params: sid(s), json: content });
}

// ---------------------------------------------------------------------------------------------
// Reading a live stream in the test

interface Frame {
  id?: number;
  event?: string;
  data?: unknown;
  comment?: string;
}

/** Opens the SSE route as `who` (Last-Event-ID or ?after=), reading frames as they come. */
async function openStream(s: SessionRow, who: "owner" | "lead" | "analyst" | "reviewer" | "viewer" | "outsider", opts: { lastEventId?: number; after?: number } = {}) {
  const ac = new AbortController();
  const headers: Record<string, string> = { ...headersFor(w, who) };
  if (opts.lastEventId !== undefined) headers["Last-Event-ID"] = String(opts.lastEventId);
  const req = new Request(makeRequest(`/live/weighing/${s.id}${opts.after !== undefined ? `?after=${opts.after}` : ""}`, { headers }), { signal: ac.signal });
  const res = await callWith(liveRoute.loader, req, sid(s));
  const frames: Frame[] = [];
  let ended = false;
  const waiters: Array<() => void> = [];
  if (res.status === 200 && res.body) {
    void (async () => {
      const reader = res.body!.getReader();
      const dec = new TextDecoder();
      let buf = "";
      try {
        for (;;) {
          const { done, value } = await reader.read();
          if (done) break;
          buf += dec.decode(value, { stream: true });
          let cut;
          while ((cut = buf.indexOf("\n\n")) >= 0) {
            const block = buf.slice(0, cut);
            buf = buf.slice(cut + 2);
            const f: Frame = {};
            for (const line of block.split("\n")) {
              if (line.startsWith(":")) f.comment = line.slice(1).trim();
              else if (line.startsWith("id: ")) f.id = Number(line.slice(4));
              else if (line.startsWith("event: ")) f.event = line.slice(7);
              else if (line.startsWith("data: ")) f.data = JSON.parse(line.slice(6));
            }
            frames.push(f);
            waiters.splice(0).forEach((x) => x());
          }
        }
      } catch {
        /* aborted */
      }
      ended = true;
      waiters.splice(0).forEach((x) => x());
    })();
  }
  const events = () => frames.filter((f) => f.id !== undefined).map((f) => f.data as SessionEvent);
  const waitFor = async (cond: () => boolean) => {
    while (!cond()) {
      if (ended) throw new Error(`the stream ended first; frames: ${JSON.stringify(frames)}`);
      await new Promise<void>((r) => waiters.push(r));
    }
  };
  const waitEnd = async () => {
    while (!ended) await new Promise<void>((r) => waiters.push(r));
  };
  return { res, frames, events, waitFor, waitEnd, close: () => ac.abort(), get ended() { return ended; } };
}

// ---------------------------------------------------------------------------------------------

describe("event numbering", () => {
  it("gives concurrent changes consecutive numbers, one each, in commit order", async () => {
    const s = await start();
    const names = { lead: "Lead Person", analyst: "Analyst Person", owner: "Owner Person" } as const;
    const writes = Array.from({ length: 24 }, (_, k) => {
      const who = (["lead", "analyst", "owner"] as const)[k % 3];
      return k % 2 === 0
        ? saveProposal(s, { content: weights({ dist_stream: 1 + k, slope: 1 }) }, { userId: w.userIds[who], name: names[who] })
        : addComment(s, { body: `remark ${k}` }, { userId: w.userIds[who], name: names[who] });
    });
    await Promise.all(writes);
    const events = await eventsAfter(s.id, 0);
    // 1 (session.started) + 24 changes
    expect(events.map((e) => e.seq)).toEqual(Array.from({ length: 25 }, (_, i) => i + 1));
    expect((await getSession(s.id))!.lastSeq).toBe(25);
    // the proposals' revisions add up: 12 saves over 3 members, each member's last event holds its final revision
    const proposals = await db().select().from(weighingProposals).where(eq(weighingProposals.sessionId, s.id));
    expect(proposals.map((p) => p.revision).reduce((a, b) => a + b, 0)).toBe(12);
  });
});

describe("the live stream", () => {
  it("refuses callers who are not members, who are signed out, or who bring an API token", async () => {
    const s = await start();
    for (const who of ["outsider", "signedOut", "viewerToken"] as const) {
      const res = await call(liveRoute.loader, `/live/weighing/${s.id}`, { headers: headersFor(w, who), params: sid(s) });
      expect(isRefusal(res), `${who}: ${res.status}`).toBe(true);
    }
    // no such session: the same 404 as not a member
    const none = await call(liveRoute.loader, `/live/weighing/999999`, { headers: headersFor(w, "viewer"), params: { sessionId: "999999" } });
    expect(none.status).toBe(404);
  });

  it("sends everything after Last-Event-ID, then each new event once; a reconnect catches up with no gap and no duplicate", async () => {
    const s = await start();
    for (let k = 0; k < 5; k++) await propose(s, "analyst", { content: weights({ dist_stream: 1 + k, slope: 2 }) });
    // events 1 (started) … 6 (five proposals) and a presence event per stream opening
    const first = await openStream(s, "viewer", { after: 3 });
    expect(first.res.status).toBe(200);
    expect(first.res.headers.get("Content-Type")).toMatch(/^text\/event-stream/);
    await first.waitFor(() => first.events().some((e) => e.kind === "presence"));
    const seen1 = first.events().map((e) => e.seq);
    expect(seen1.slice(0, 3)).toEqual([4, 5, 6]);
    // a new change arrives through LISTEN/NOTIFY
    await propose(s, "lead", { content: weights({ dist_shoreline: 1 }) });
    await first.waitFor(() => first.events().some((e) => e.kind === "proposal.updated" && (e.data as { name: string }).name === "Lead Person"));
    const lastSeen = Math.max(...first.events().map((e) => e.seq));
    first.close();
    await first.waitEnd();
    // while disconnected, three more changes
    await propose(s, "analyst", { content: weights({ dist_stream: 9, slope: 1 }) });
    await call(commentRoute.action, `/api/weighing-sessions/${s.id}/comments`, { method: "POST", headers: headersFor(w, "reviewer"), params: sid(s), json: { body: "Slope matters less on the terraces.", factor: "slope" } });
    await propose(s, "lead", { content: weights({ dist_shoreline: 2 }) });
    const expected = (await eventsAfter(s.id, lastSeen)).map((e) => e.seq);
    // the browser reconnects with Last-Event-ID (it wins over ?after=)
    const again = await openStream(s, "viewer", { lastEventId: lastSeen, after: 0 });
    await again.waitFor(() => again.events().length >= expected.length);
    const got = again.events().map((e) => e.seq);
    expect(got.slice(0, expected.length)).toEqual(expected);
    expect(got[0]).toBe(lastSeen + 1);
    // every number once, in order, with no gap
    const all = [...first.events().map((e) => e.seq), ...got];
    expect(all).toEqual(Array.from({ length: all.length }, (_, i) => all[0] + i));
    again.close();
    await again.waitEnd();
  });

  it("the JSON catch-up returns exactly the events after the number given", async () => {
    const s = await start();
    for (let k = 0; k < 4; k++) await propose(s, "analyst", { content: weights({ slope: 1 + k }) });
    const res = await call(eventsRoute.loader, `/api/weighing-sessions/${s.id}/events?after=2`, { headers: headersFor(w, "viewerToken"), params: sid(s) });
    const body = await res.json();
    expect(body.events.map((e: SessionEvent) => e.seq)).toEqual([3, 4, 5]);
    expect(body.lastSeq).toBe(5);
  });

  it("ends with an access event when the member's role changes, and again when they are removed", async () => {
    const s = await start();
    const stream = await openStream(s, "analyst");
    await stream.waitFor(() => stream.events().some((e) => e.kind === "presence"));
    await changeMemberRole({ id: w.userIds.owner, email: "", name: "Owner Person", mayCreateProjects: true }, "owner", w.projectId, w.userIds.analyst, "viewer");
    await stream.waitEnd();
    const access = stream.frames.find((f) => f.event === "access");
    expect(access?.data).toEqual({ reason: "role_changed", role: "viewer" });

    // as a viewer now: the stream opens again (the browser reconnects), and removal ends it
    const again = await openStream(s, "analyst");
    expect(again.res.status).toBe(200);
    await again.waitFor(() => again.frames.some((f) => f.data !== undefined));
    await removeMember({ id: w.userIds.owner, email: "", name: "Owner Person", mayCreateProjects: true }, "owner", w.projectId, w.userIds.analyst);
    await again.waitEnd();
    expect(again.frames.find((f) => f.event === "access")?.data).toEqual({ reason: "no_longer_member", role: null });
    // and the next attempt is refused
    const refused = await call(liveRoute.loader, `/live/weighing/${s.id}`, { headers: headersFor(w, "analyst"), params: sid(s) });
    expect(isRefusal(refused)).toBe(true);
  });
});

describe("proposals and comments", () => {
  it("refuses bad weights with a message naming the problem, and stores nothing", async () => {
    const s = await start();
    const before = (await getSession(s.id))!.lastSeq;
    const bad = weights({ dist_stream: 1 });
    bad.factors[0].weight = -2;
    const res = await propose(s, "lead", { content: bad });
    expect(res.status).toBe(422);
    expect((await res.json()).error.message).toMatch(/0 or more/);
    const zero = await propose(s, "lead", { content: weights({}) });
    expect(zero.status).toBe(422);
    expect((await zero.json()).error.message).toMatch(/All weights are zero/);
    expect((await getSession(s.id))!.lastSeq).toBe(before);
    expect(await db().select().from(weighingProposals).where(eq(weighingProposals.sessionId, s.id))).toEqual([]);
  });

  it("AHP sessions take judgements over the session's factors and weigh the proposal by them", async () => {
    const s = await start({ title: "Pairwise", method: "ahp", ahpFactors: ["dist_stream", "dist_shoreline", "slope"] });
    const res = await propose(s, "lead", { upper: [2, 4, 2] });
    expect(res.status).toBe(200);
    const { proposal } = await res.json();
    const wOf = (id: string) => proposal.content.factors.find((f: { factor: string }) => f.factor === id).weight;
    // (formula) check-values.md consistent 3×3 (2, 4, 2) → 4/7, 2/7, 1/7; uncompared factors 0
    expect(wOf("dist_stream")).toBeCloseTo(4 / 7, 9);
    expect(wOf("slope")).toBeCloseTo(1 / 7, 9);
    expect(wOf("dist_river_mouth")).toBe(0);
    const wrong = await propose(s, "lead", { upper: [2, 4] });
    expect(wrong.status).toBe(422);
    const outOfScale = await propose(s, "lead", { upper: [2, 12, 2] });
    expect(outOfScale.status).toBe(422);
  });

  it("lets reviewers comment but not propose, and viewers do neither", async () => {
    const s = await start();
    expect(isRefusal(await propose(s, "reviewer", { content: weights({ slope: 1 }) }))).toBe(true);
    expect(isRefusal(await propose(s, "viewer", { content: weights({ slope: 1 }) }))).toBe(true);
    const c = (who: "reviewer" | "viewer") => call(commentRoute.action, `/api/weighing-sessions/${s.id}/comments`, { method: "POST", headers: headersFor(w, who), params: sid(s), json: { body: "A remark." } });
    expect((await c("reviewer")).status).toBe(201);
    expect(isRefusal(await c("viewer"))).toBe(true);
  });
});

describe("the outcome", () => {
  it("adopts the group result as a new weight set with the rationale, audit-logged, and closes the session", async () => {
    const s = await start();
    await propose(s, "lead", { content: weights({ dist_stream: 3, dist_shoreline: 1 }) });
    await propose(s, "owner", { content: weights({ dist_stream: 1, dist_shoreline: 1 }) });
    const rationale = "The team agreed fresh water matters more than the coast on this shelf.";
    const res = await call(outcomeRoute.action, `/api/weighing-sessions/${s.id}/outcome`, {
      method: "POST",
      headers: headersFor(w, "lead"),
      params: sid(s),
      json: { source: "group", target: { newName: "Team weights" }, rationale, adoptForProject: true },
    });
    expect(res.status, await res.clone().text()).toBe(201);
    const { outcome } = await res.json();
    const [v] = await db().select().from(weightSetVersions).where(eq(weightSetVersions.id, outcome.versionId));
    expect(v.note).toContain(rationale);
    const content = v.content as unknown as WeightSetContent;
    const wOf = (id: string) => content.factors.find((f) => f.factor === id)!.weight;
    // (formula) (0.75 + 0.5)/2 = 0.625 and (0.25 + 0.5)/2 = 0.375
    expect(wOf("dist_stream")).toBeCloseTo(0.625, 12);
    expect(wOf("dist_shoreline")).toBeCloseTo(0.375, 12);
    const [adoption] = await db().select().from(weightSetAdoptions).where(eq(weightSetAdoptions.versionId, v.id));
    expect(adoption.rationale).toBe(rationale);
    const audit = await db().select().from(auditLog).where(and(eq(auditLog.projectId, w.projectId), eq(auditLog.action, "weighing.adopted")));
    expect(audit.some((a) => (a.detail as { sessionId: number }).sessionId === s.id)).toBe(true);
    const after = (await getSession(s.id))!;
    expect(after.status).toBe("closed");
    expect(after.outcome?.rationale).toBe(rationale);
    expect((after.finalContent as unknown as WeightSetContent).factors.find((f) => f.factor === "dist_stream")!.weight).toBeCloseTo(0.625, 12);
    const [last] = await db().select().from(weighingEvents).where(and(eq(weighingEvents.sessionId, s.id), eq(weighingEvents.seq, after.lastSeq)));
    expect(last.kind).toBe("session.closed");
    // read-only now
    const late = await propose(s, "lead", { content: weights({ slope: 1 }) });
    expect(late.status).toBe(409);
    // and a closed session's stream, with nothing more to send, tells the browser to stop (204)
    const done = await call(liveRoute.loader, `/live/weighing/${s.id}?after=${after.lastSeq}`, { headers: headersFor(w, "viewer"), params: sid(s) });
    expect(done.status).toBe(204);
  });

  it("adopts one member's proposal as the next version of an existing set, and refuses without a rationale", async () => {
    const s = await start();
    await propose(s, "lead", { content: weights({ slope: 2, tpi: 1 }) });
    const body = (rationale: string) => ({ source: w.userIds.lead, target: { newName: "Lead's view" }, rationale, adoptForProject: false });
    const none = await call(outcomeRoute.action, `/api/weighing-sessions/${s.id}/outcome`, { method: "POST", headers: headersFor(w, "lead"), params: sid(s), json: body("") });
    expect(none.status).toBe(422);
    expect((await getSession(s.id))!.status).toBe("open");
    const ok = await call(outcomeRoute.action, `/api/weighing-sessions/${s.id}/outcome`, { method: "POST", headers: headersFor(w, "lead"), params: sid(s), json: body("Only the lead proposed.") });
    expect(ok.status).toBe(201);
    const { outcome } = await ok.json();
    expect(outcome.source).toEqual({ kind: "proposal", userId: w.userIds.lead, name: "Lead Person" });
    expect(outcome.adopted).toBe(false);
    // analysts may not decide
    const s2 = await start();
    const refused = await call(outcomeRoute.action, `/api/weighing-sessions/${s2.id}/outcome`, { method: "POST", headers: headersFor(w, "analyst"), params: sid(s2), json: body("x") });
    expect(isRefusal(refused)).toBe(true);
    expect((await db().select().from(weighingSessions).where(eq(weighingSessions.id, s2.id)))[0].status).toBe("open");
  });
});
