// The job runner end to end: the real database (a clone per file), real pg-boss, real worker
// processes started as `npm run worker` would start them, and a real SIGKILL. The worker runs with
// short timings (heartbeat 0.3 s, stale after 2 s, retry delay 1 s) so the file stays quick; every
// wait polls the database with a deadline.
process.env.LOWSTAND_TEST_JOBS = "1";
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "5000" });

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, sql } from "drizzle-orm";
import { db } from "~/db.server";
import { caughtMail, jobRuns, mailOutbox, projects, users } from "~/db/schema";
import { enqueueJob, getJobRun, requestCancel, type JobRun } from "~/jobs.server";
import { makeUser } from "../tests/support/world";
import { FAST_JOB_SETTINGS, startWorker, waitFor, workers, type WorkerHandle } from "../tests/support/workers";
import { startTestCatcher } from "../tests/support/mail";
import type { CatcherHandle } from "~/mail-catcher.server";
import { boss, ensureQueues, stopBoss, TEST_QUEUE } from "./boss.server";
import { CANCELLED_MESSAGE } from "./notify";
import type { TestSleepPayload } from "./test-sleep";

const run = async (id: string) => (await getJobRun(id))!;
const ended = (id: string, deadlineMs?: number) =>
  waitFor(`run ${id} to end`, async () => {
    const r = await run(id);
    return ["succeeded", "failed", "cancelled"].includes(r.state) ? r : null;
  }, deadlineMs);

async function queueJob(runId: string) {
  const r = await run(runId);
  return (await boss("app")).getJobById(TEST_QUEUE, r.queueJobId!, { includeArchive: true });
}

let projectId: number;
let starter: number;
let optedOut: number;
let catcher: CatcherHandle;
let worker: WorkerHandle;

const sleepJob = (payload: TestSleepPayload, startedBy = starter) => enqueueJob({ kind: TEST_QUEUE, projectId, startedBy, payload: payload as Record<string, unknown> });

beforeAll(async () => {
  catcher = await startTestCatcher(); // sets SMTP_URL, which the workers inherit
  const [p] = await db().insert(projects).values({ slug: "jobs-main", name: "Farrow Deep", crsEpsg: 32733 }).returning();
  projectId = p.id;
  starter = await makeUser("starter@farrow.example", "Ama Starter");
  optedOut = await makeUser("quiet@farrow.example", "Quiet Person");
  await db().update(users).set({ jobEmails: false }).where(eq(users.id, optedOut));
});

afterAll(async () => {
  for (const w of workers) if (w.proc.exitCode === null && w.proc.signalCode === null) w.proc.kill("SIGKILL");
  await Promise.all(workers.map((w) => w.exited));
  await stopBoss();
  await catcher?.close();
});

describe("starting a job", () => {
  it("refuses an unknown kind, and a job pg-boss does not accept (null id), leaving no run behind", async () => {
    await expect(enqueueJob({ kind: "no.such.kind", projectId, startedBy: starter, payload: {} })).rejects.toThrow(/unknown job kind/);
    const b = await boss("app");
    await b.deleteQueue(TEST_QUEUE); // pg-boss now answers send() with null
    await expect(sleepJob({ steps: 1 })).rejects.toThrow(/did not accept/);
    const [{ n }] = await db().select({ n: sql<number>`count(*)::int` }).from(jobRuns);
    expect(n).toBe(0);
    await ensureQueues(b);
    const id = await sleepJob({ steps: 1 });
    expect((await run(id)).state).toBe("queued");
    expect((await queueJob(id))?.state).toBe("created");
  });
});

describe("a worker process", () => {
  beforeAll(() => {
    worker = startWorker();
  });

  it("runs a job to success, its progress and heartbeat visible while it runs, and e-mails the starter a link", async () => {
    const id = await sleepJob({ steps: 8, stepMs: 250 });
    const seen: JobRun[] = [];
    const done = await waitFor("the run to succeed", async () => {
      const r = await run(id);
      seen.push(r);
      return r.state === "succeeded" ? r : r.state === "failed" || r.state === "cancelled" ? Promise.reject(new Error(`run ${r.state}: ${r.message}`)) : null;
    });
    const midway = seen.filter((r) => r.state === "running" && r.fraction > 0 && r.fraction < 1);
    expect(midway.length).toBeGreaterThan(0);
    expect(midway.every((r) => /^step [1-7] of 8$/.test(r.step))).toBe(true);
    const beats = new Set(seen.filter((r) => r.state === "running" && r.heartbeatAt).map((r) => r.heartbeatAt!.getTime()));
    expect(beats.size).toBeGreaterThanOrEqual(2); // the heartbeat moves while it runs
    expect(done).toMatchObject({ state: "succeeded", fraction: 1, attempt: 1, step: "step 8 of 8", message: "", cancelRequested: false });
    expect(done.result).toMatchObject({ steps: 8, attempt: 1, pid: worker.proc.pid });
    expect(done.startedAt!.getTime()).toBeLessThanOrEqual(done.finishedAt!.getTime());
    expect((await queueJob(id))?.state).toBe("completed");

    const link = `http://lowstand.test/projects/${projectId}/jobs/${id}`;
    const [queued] = await db().select().from(mailOutbox).where(sql`${mailOutbox.textBody} like ${"%" + id + "%"}`);
    expect(queued.toAddress).toBe("starter@farrow.example");
    expect(queued.subject).toBe("Lowstand: Your test job in “Farrow Deep” has finished");
    expect(queued.textBody).toContain(link);
    // The worker's mail dispatcher delivers it over SMTP.
    const caught = await waitFor("the e-mail to be delivered", async () => {
      const [m] = await db().select().from(caughtMail).where(sql`${caughtMail.textBody} like ${"%" + id + "%"}`);
      return m;
    });
    expect(caught.textBody).toContain(link);
  });

  it("sends no e-mail to a starter who turned job e-mails off", async () => {
    const id = await sleepJob({ steps: 1, stepMs: 10 }, optedOut);
    expect((await ended(id)).state).toBe("succeeded");
    const rows = await db().select().from(mailOutbox).where(eq(mailOutbox.toAddress, "quiet@farrow.example"));
    expect(rows).toHaveLength(0);
  });

  it("ends a bad-input job once, with its message, and does not retry it (JobUserError and TerrainInputError)", async () => {
    const msg = "Depth column 'z' holds text in row 12: give depths in metres.";
    const a = await sleepJob({ userError: "job", message: msg, atStep: 1, steps: 3, stepMs: 50 });
    const b = await sleepJob({ userError: "terrain", message: "cell sizes must be positive metres, got 0 × 5" });
    for (const [id, text] of [[a, msg], [b, "cell sizes must be positive metres, got 0 × 5"]] as const) {
      const r = await ended(id);
      expect(r).toMatchObject({ state: "failed", message: text, attempt: 1 });
      // Completed in pg-boss after one attempt: nothing is left to retry it.
      expect(await queueJob(id)).toMatchObject({ state: "completed", retryCount: 0 });
    }
    const [mail] = await db().select().from(mailOutbox).where(sql`${mailOutbox.textBody} like ${"%" + a + "%"}`);
    expect(mail.subject).toMatch(/failed$/);
    expect(mail.textBody).toContain(msg);
  });

  it("retries a crash with backoff, and the next attempt finishes", async () => {
    const id = await sleepJob({ crashOnAttempts: [1], steps: 2, stepMs: 50 });
    const waiting = await waitFor("the run to wait for its retry", async () => {
      const r = await run(id);
      return r.state === "queued" && r.attempt === 1 ? r : null;
    });
    expect(waiting.message).toMatch(/^Attempt 1 stopped on an error on our side; it will be retried/);
    const r = await ended(id);
    expect(r).toMatchObject({ state: "succeeded", attempt: 2 });
    expect(r.result).toMatchObject({ attempt: 2 });
    expect(await queueJob(id)).toMatchObject({ state: "completed", retryCount: 1 });
  });

  it("gives a job up after its last retry, with a message that hides our internals", async () => {
    const id = await sleepJob({ crashOnAttempts: [1, 2, 3], steps: 1, stepMs: 10 });
    const r = await ended(id, 20_000);
    expect(r).toMatchObject({ state: "failed", attempt: 3 });
    expect(r.message).toMatch(/on all 3 attempts/);
    expect(r.message).not.toMatch(/test crash/);
    expect(await queueJob(id)).toMatchObject({ state: "failed", retryCount: 2 });
    const mails = await db().select().from(mailOutbox).where(sql`${mailOutbox.textBody} like ${"%" + id + "%"}`);
    expect(mails).toHaveLength(1); // one e-mail, at the end, not one per attempt
  });

  it("cancels a running job through the flag it polls, and a queued one at once", async () => {
    const long = await sleepJob({ steps: 100, stepMs: 100 });
    const behind = await sleepJob({ steps: 1 }); // one job at a time: this one waits
    await waitFor("the long job to make progress", async () => {
      const r = await run(long);
      return r.state === "running" && r.fraction > 0;
    });
    expect((await run(behind)).state).toBe("queued");
    expect(await requestCancel(behind, starter)).toBe("cancelled");
    expect(await run(behind)).toMatchObject({ state: "cancelled", message: CANCELLED_MESSAGE });
    expect((await queueJob(behind))?.state).toBe("cancelled");

    expect(await requestCancel(long, starter)).toBe("requested");
    const r = await ended(long);
    expect(r).toMatchObject({ state: "cancelled", message: CANCELLED_MESSAGE, attempt: 1 });
    expect(r.fraction).toBeLessThan(1);
    expect((await queueJob(long))?.state).toBe("cancelled");
    expect(await requestCancel(long, starter)).toBe("already_ended");
    const [mail] = await db().select().from(mailOutbox).where(sql`${mailOutbox.textBody} like ${"%" + long + "%"}`);
    expect(mail.subject).toMatch(/was cancelled$/);
  });

  it("lets a cancel asked after the handler's last check win over its publication, which the guard refuses", async () => {
    // Without a cancel, the same job publishes through the guard.
    const plain = await sleepJob({ steps: 1, stepMs: 10, deafMs: 200, publish: true });
    expect(await ended(plain)).toMatchObject({ state: "succeeded", result: { published: true } });

    const id = await sleepJob({ steps: 1, stepMs: 10, deafMs: 3_000, publish: true });
    await waitFor("the job to reach its last, deaf stretch", async () => {
      const r = await run(id);
      return r.state === "running" && r.step === "finishing";
    });
    expect(await requestCancel(id, starter)).toBe("requested");
    const r = await ended(id);
    expect(r).toMatchObject({ state: "cancelled", message: CANCELLED_MESSAGE, attempt: 1, result: null });
    expect(await queueJob(id)).toMatchObject({ state: "cancelled", retryCount: 0 });
  });

  it("retries a job whose worker was killed (SIGKILL) on another worker, once its heartbeat stops", async () => {
    const id = await sleepJob({ steps: 30, stepMs: 100 });
    await waitFor("the job to run on the first worker", async () => {
      const r = await run(id);
      return r.state === "running" && r.fraction >= 0.1;
    });
    worker.proc.kill("SIGKILL");
    expect(await worker.exited).toBeNull(); // killed, not exited
    expect((await run(id)).state).toBe("running"); // nobody has noticed yet

    worker = startWorker();
    const reaped = await waitFor("the reaper to hand the job back", async () => {
      const r = await run(id);
      return r.attempt === 1 && r.state === "queued" ? r : r.attempt > 1 ? r : null;
    });
    if (reaped.attempt === 1) expect(reaped.message).toMatch(/stopped responding; the job will be retried/);
    const r = await ended(id, 20_000);
    expect(r).toMatchObject({ state: "succeeded", attempt: 2, fraction: 1 });
    expect(r.result).toMatchObject({ attempt: 2, pid: worker.proc.pid });
    expect(await queueJob(id)).toMatchObject({ state: "completed", retryCount: 1 });
  });

  it("ends a killed worker's job as cancelled, not retried, when its user had asked to cancel it", async () => {
    const id = await sleepJob({ steps: 100, stepMs: 100 });
    await waitFor("the job to run", async () => {
      const r = await run(id);
      return r.state === "running" && r.fraction > 0;
    });
    worker.proc.kill("SIGKILL");
    await worker.exited;
    expect(await requestCancel(id, starter)).toBe("requested"); // still "running": nobody polls the flag now
    worker = startWorker();
    const r = await ended(id);
    expect(r).toMatchObject({ state: "cancelled", attempt: 1, message: CANCELLED_MESSAGE });
    expect(await queueJob(id)).toMatchObject({ state: "cancelled", retryCount: 0 });
  });

  it("on SIGTERM hands its running job back and exits cleanly; another worker finishes it", async () => {
    const id = await sleepJob({ steps: 20, stepMs: 100 });
    await waitFor("the job to run", async () => {
      const r = await run(id);
      return r.state === "running" && r.fraction > 0;
    });
    worker.proc.kill("SIGTERM");
    expect(await worker.exited).toBe(0);
    const back = await run(id);
    expect(back).toMatchObject({ state: "queued", attempt: 1 });
    expect(back.message).toMatch(/interrupted because its worker shut down/);
    worker = startWorker();
    const r = await ended(id);
    expect(r).toMatchObject({ state: "succeeded", attempt: 2 });
  });
});
