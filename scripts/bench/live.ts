// Live-collaboration latency (`node scripts/run-ts.mjs scripts/bench/live.ts [--changes 200] [--streams 3]`,
// or `npm run bench -- --live-only`): on a fresh database cloned from the test template,
//  1. NOTIFY round trip: a notification sent on one connection until a LiveHub on another hears it;
//  2. a change until every open stream has it: a member saves a proposal (the transaction that
//     numbers the event and NOTIFYs), and each of `--streams` members' event streams (the real
//     sessionStream of the SSE route, read as bytes) receives the event — everything but the HTTP hop.
// Changes go one at a time (the next when every stream has the last). Prints p50 / p95 / max in ms
// and a JSON line. Needs the test template: `node scripts/run-ts.mjs tests/support/prepare-template.ts`.
import { performance } from "node:perf_hooks";
import { cpus, loadavg } from "node:os";
import { createTestDatabase, dropTestDatabase } from "../../tests/support/test-db";

const argv = process.argv.slice(2);
const opt = (k: string, d: string) => {
  const i = argv.indexOf(`--${k}`);
  return i >= 0 ? argv[i + 1] : d;
};
const CHANGES = Number(opt("changes", "200"));
const STREAMS = Number(opt("streams", "3"));

const { name, url } = await createTestDatabase("bench");
process.env.DATABASE_URL = url;
process.env.PUBLIC_URL = "http://lowstand.test";

function stats(xs: number[]) {
  const s = [...xs].sort((a, b) => a - b);
  const q = (p: number) => s[Math.min(s.length - 1, Math.floor(p * s.length))];
  return { n: s.length, p50: +q(0.5).toFixed(2), p95: +q(0.95).toFixed(2), max: +s[s.length - 1].toFixed(2) };
}

try {
  const { LiveHub, livePayload, stopLiveHub } = await import("../../app/live.server");
  const { pool } = await import("../../app/db.server");
  const { buildWorld, makeRequest, headersFor } = await import("../../tests/support/world");
  const ws = await import("../../app/weighing-sessions.server");
  const { defaultWeightSetContent } = await import("../../app/scoring/weight-set");

  // 1. NOTIFY round trip between two connections
  const hub = new LiveHub(url, "lowstand-bench");
  await hub.start();
  const notifyMs: number[] = [];
  for (let k = 0; k < 500; k++) {
    const heard = new Promise<void>((resolve) => {
      const off = hub.subscribe("bench:rt", (m) => {
        if (m.kind === "notify" && m.id === k) {
          off();
          resolve();
        }
      });
    });
    const t0 = performance.now();
    await pool().query("select pg_notify('lowstand_live', $1)", [livePayload("bench:rt", k)]);
    await heard;
    notifyMs.push(performance.now() - t0);
  }
  await hub.stop();

  // 2. a saved proposal until every stream has it
  const w = await buildWorld("bench");
  const session = await ws.startSession(w.projectId, { title: "Benchmark", method: "direct" }, { userId: w.userIds.lead });
  const roles = (["owner", "lead", "analyst", "reviewer", "viewer"] as const).slice(0, Math.max(1, Math.min(5, STREAMS)));
  const seen = roles.map(() => new Map<number, number>());
  const waiters: Array<() => void> = [];
  const aborts: AbortController[] = [];
  for (const [i, role] of roles.entries()) {
    const ac = new AbortController();
    aborts.push(ac);
    const req = new Request(makeRequest(`/live/weighing/${session.id}`, { headers: headersFor(w, role) }), { signal: ac.signal });
    const res = ws.sessionStream(req, (await ws.getSession(session.id))!, { userId: w.userIds[role], name: role, role, projectId: w.projectId }, 0);
    void (async () => {
      const reader = res.body!.getReader();
      const dec = new TextDecoder();
      let buf = "";
      try {
        for (;;) {
          const { done, value } = await reader.read();
          if (done) return;
          const at = performance.now();
          buf += dec.decode(value, { stream: true });
          let cut;
          while ((cut = buf.indexOf("\n\n")) >= 0) {
            const m = /^id: (\d+)$/m.exec(buf.slice(0, cut));
            if (m) seen[i].set(Number(m[1]), at);
            buf = buf.slice(cut + 2);
          }
          waiters.splice(0).forEach((x) => x());
        }
      } catch {
        /* aborted */
      }
    })();
  }
  const base = defaultWeightSetContent();
  const commitMs: number[] = [];
  const deliverMs: number[] = [];
  for (let k = 0; k < CHANGES; k++) {
    const content = { ...base, factors: base.factors.map((f, j) => ({ ...f, weight: j === 0 ? 1 + (k % 9) : f.weight })) };
    const t0 = performance.now();
    await ws.saveProposal((await ws.getSession(session.id))!, { content }, { userId: w.userIds.analyst, name: "Analyst" });
    const t1 = performance.now();
    const seq = (await ws.getSession(session.id))!.lastSeq;
    while (!seen.every((m) => m.has(seq))) await new Promise<void>((r) => waiters.push(r));
    commitMs.push(t1 - t0);
    deliverMs.push(Math.max(...seen.map((m) => m.get(seq)!)) - t0);
  }
  aborts.forEach((a) => a.abort());
  await new Promise((r) => setTimeout(r, 200));
  await stopLiveHub();

  const out = {
    machine: { cpus: cpus().length, model: cpus()[0]?.model, node: process.version, loadAverage: loadavg().map((x) => +x.toFixed(2)) },
    notifyRoundTripMs: stats(notifyMs),
    proposalCommitMs: stats(commitMs),
    changeToAllStreamsMs: { ...stats(deliverMs), streams: roles.length },
  };
  console.log(`Lowstand live benchmark — ${out.machine.cpus} cores, Node ${process.version}, load ${out.machine.loadAverage.join(" ")}`);
  const row = (label: string, s: { n: number; p50: number; p95: number; max: number }) => console.log(`  ${label.padEnd(58)} n=${String(s.n).padStart(4)}  p50 ${s.p50.toFixed(2).padStart(7)}  p95 ${s.p95.toFixed(2).padStart(7)}  max ${s.max.toFixed(2).padStart(7)} ms`);
  row("NOTIFY on one connection → heard by a hub on another", out.notifyRoundTripMs);
  row("proposal saved (numbered event + NOTIFY, committed)", out.proposalCommitMs);
  row(`proposal saved → its event read from all ${roles.length} streams`, out.changeToAllStreamsMs);
  await pool().end();
  console.log(JSON.stringify(out));
} finally {
  await dropTestDatabase(name);
}
