// The live hub against the real database: notifications reach every listening process (here, two
// hubs on two connections), a hub whose connection is killed connects again, LISTENs again and
// tells its subscribers to read what they may have missed, and NOTIFY inside a transaction is
// delivered only when it commits.
import { afterAll, describe, expect, it } from "vitest";
import { LiveHub, livePayload, notifyLive, type LiveMessage } from "./live.server";
import { db, pool } from "./db.server";

const hubs: LiveHub[] = [];
function hub(): LiveHub {
  const h = new LiveHub(process.env.DATABASE_URL!, "lowstand-live-test");
  hubs.push(h);
  return h;
}
afterAll(async () => {
  await Promise.all(hubs.map((h) => h.stop()));
});

/** Resolves with the first message `pick` accepts (the test's own timeout bounds the wait). */
function next(h: LiveHub, topic: string, pick: (m: LiveMessage) => boolean = () => true): Promise<LiveMessage> {
  return new Promise((resolve) => {
    const off = h.subscribe(topic, (m) => {
      if (!pick(m)) return;
      off();
      resolve(m);
    });
  });
}

async function until(cond: () => boolean | Promise<boolean>) {
  while (!(await cond())) await new Promise((r) => setTimeout(r, 20));
}

describe("the live hub", () => {
  it("delivers one NOTIFY to two hubs on separate connections", async () => {
    const a = hub();
    const b = hub();
    await Promise.all([a.start(), b.start()]);
    expect(a.backendPid).not.toBeNull();
    expect(a.backendPid).not.toBe(b.backendPid);
    const gotA = next(a, "weighing:41");
    const gotB = next(b, "weighing:41");
    const other = next(b, "weighing:42");
    await pool().query("select pg_notify('lowstand_live', $1)", [livePayload("weighing:41", 7)]);
    expect(await gotA).toEqual({ kind: "notify", topic: "weighing:41", id: 7 });
    expect(await gotB).toEqual({ kind: "notify", topic: "weighing:41", id: 7 });
    // a topic nobody notified stays silent: send to it now and it is the next it hears
    await pool().query("select pg_notify('lowstand_live', $1)", [livePayload("weighing:42", 1)]);
    expect(await other).toEqual({ kind: "notify", topic: "weighing:42", id: 1 });
  });

  it("connects again after its connection is killed, listens again and asks subscribers to resynchronise", async () => {
    const a = hub();
    await a.start();
    const killed = a.backendPid!;
    const resync = next(a, "weighing:50", (m) => m.kind === "resync");
    const { rows } = await pool().query<{ ok: boolean }>("select pg_terminate_backend($1) as ok", [killed]);
    expect(rows[0].ok).toBe(true);
    expect(await resync).toEqual({ kind: "resync" });
    await until(() => a.listening);
    expect(a.reconnects).toBe(1);
    expect(a.backendPid).not.toBe(killed);
    // …and hears notifications on the new connection
    const got = next(a, "weighing:50", (m) => m.kind === "notify");
    await pool().query("select pg_notify('lowstand_live', $1)", [livePayload("weighing:50", 3)]);
    expect(await got).toEqual({ kind: "notify", topic: "weighing:50", id: 3 });
  });

  it("delivers a NOTIFY sent in a transaction only if it commits", async () => {
    const a = hub();
    await a.start();
    const heard: LiveMessage[] = [];
    a.subscribe("weighing:60", (m) => heard.push(m));
    await db()
      .transaction(async (tx) => {
        await notifyLive(tx, "weighing:60", 1);
        throw new Error("roll back");
      })
      .catch(() => undefined);
    await db().transaction(async (tx) => notifyLive(tx, "weighing:60", 2));
    await until(() => heard.length > 0);
    // A NOTIFY after both makes sure the rolled-back one would have arrived by now (delivery is in commit order).
    const marker = next(a, "weighing:60", (m) => m.kind === "notify" && m.id === 3);
    await pool().query("select pg_notify('lowstand_live', $1)", [livePayload("weighing:60", 3)]);
    await marker;
    expect(heard.map((m) => (m.kind === "notify" ? m.id : null))).toEqual([2, 3]);
  });
});
