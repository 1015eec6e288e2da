// The reaper: finds attempts whose worker stopped sending heartbeats (killed, frozen, cut off) and
// fails their pg-boss job so pg-boss retries it with backoff, or marks the run failed when no
// retries are left. Without it a killed worker's job would stay "active" until its expiry (hours
// for a large reconstruction). Any number of workers may run it: one pass at a time holds a
// transaction-scoped advisory lock, and the rows it changes are locked as the wrapper locks them.
import { eq, sql } from "drizzle-orm";
import { db } from "../app/db.server";
import { jobRuns } from "../app/db/schema";
import { kickMailDispatcher } from "../app/mail.server";
import { boss, bossDbFor, type JobSettings } from "./boss.server";
import { CANCELLED_MESSAGE, queueJobEndedMail } from "./notify";

/** Any fixed number shared by every process: the key of the reaper's advisory lock. */
const REAPER_LOCK_KEY = 7_007_001;

export interface ReapedRun {
  runId: string;
  kind: string;
  attempt: number;
  /** What became of the run: retried later, failed for good, cancelled (as its user had asked), or (its end was already recorded) just the queue job closed. */
  action: "retry" | "failed" | "cancelled" | "closed";
}

/**
 * One pass. An attempt is stale when its pg-boss job is active and neither a heartbeat nor the
 * start of the attempt is more recent than `staleAfterS` seconds — the later of the two counts, so
 * a new attempt that has not written its first heartbeat yet is not mistaken for the old one.
 * Reads pg-boss 10's job table (pgboss.job: name, id, state, started_on, retry_count, retry_limit);
 * every change to it goes through pg-boss's own fail/complete.
 */
export async function reapStaleJobs(settings: Pick<JobSettings, "staleAfterS">): Promise<ReapedRun[]> {
  const b = await boss("worker");
  const reaped: ReapedRun[] = [];
  let mailed = false;
  await db().transaction(async (tx) => {
    const lock = await tx.execute<{ ok: boolean }>(sql`select pg_try_advisory_xact_lock(${REAPER_LOCK_KEY}) as ok`);
    if (!lock.rows[0]?.ok) return; // another process is reaping right now
    const stale = await tx.execute<{ run_id: string; kind: string; state: string; cancel_requested: boolean; queue_job_id: string; retry_count: number; retry_limit: number }>(sql`
      select r.id as run_id, r.kind, r.state, r.cancel_requested, j.id::text as queue_job_id, j.retry_count, j.retry_limit
        from pgboss.job j
        join ${jobRuns} r on r.queue_job_id = j.id::text and r.kind = j.name
       where j.state = 'active'
         and greatest(coalesce(r.heartbeat_at, '-infinity'::timestamptz), j.started_on) < now() - make_interval(secs => ${settings.staleAfterS})
       order by j.started_on
       limit 100
         for update of r skip locked`);
    const bdb = bossDbFor(tx);
    for (const s of stale.rows) {
      const lostAttempt = s.retry_count + 1;
      if (s.state === "succeeded" || s.state === "failed" || s.state === "cancelled") {
        // The end was recorded but the queue job was left active: close it, run nothing again.
        await b.complete(s.kind, s.queue_job_id, { runId: s.run_id, outcome: `run already ${s.state}` }, { db: bdb });
        reaped.push({ runId: s.run_id, kind: s.kind, attempt: lostAttempt, action: "closed" });
        continue;
      }
      if (s.cancel_requested) {
        // Its user asked it to stop anyway: end it as cancelled rather than retry it.
        await b.cancel(s.kind, s.queue_job_id, { db: bdb });
        const [run] = await tx.update(jobRuns).set({ state: "cancelled", message: CANCELLED_MESSAGE, finishedAt: new Date() }).where(eq(jobRuns.id, s.run_id)).returning();
        mailed = (await queueJobEndedMail(tx, run, "cancelled", CANCELLED_MESSAGE)) || mailed;
        reaped.push({ runId: s.run_id, kind: s.kind, attempt: lostAttempt, action: "cancelled" });
        continue;
      }
      await b.fail(s.kind, s.queue_job_id, { runId: s.run_id, message: "the worker stopped sending heartbeats" }, { db: bdb });
      if (s.retry_count < s.retry_limit) {
        await tx
          .update(jobRuns)
          .set({ state: "queued", message: `The worker running attempt ${lostAttempt} stopped responding; the job will be retried shortly.` })
          .where(eq(jobRuns.id, s.run_id));
        reaped.push({ runId: s.run_id, kind: s.kind, attempt: lostAttempt, action: "retry" });
      } else {
        const message =
          `The worker running this job stopped responding on attempt ${lostAttempt} of ${s.retry_limit + 1}, and the job was given up. ` +
          "Try again later, or tell the people who run this Lowstand.";
        const [run] = await tx.update(jobRuns).set({ state: "failed", message, finishedAt: new Date() }).where(eq(jobRuns.id, s.run_id)).returning();
        mailed = (await queueJobEndedMail(tx, run, "failed", message)) || mailed;
        reaped.push({ runId: s.run_id, kind: s.kind, attempt: lostAttempt, action: "failed" });
      }
    }
  });
  for (const r of reaped) console.log(`[jobs] reaper: ${r.kind} run ${r.runId} attempt ${r.attempt} had no heartbeat for ${settings.staleAfterS} s → ${r.action}`);
  if (mailed) kickMailDispatcher();
  return reaped;
}

/** Runs the reaper every `reaperIntervalMs` in this process; returns a function that stops it. */
export function startReaper(settings: Pick<JobSettings, "staleAfterS" | "reaperIntervalMs">): () => Promise<void> {
  let busy: Promise<unknown> | null = null;
  const timer = setInterval(() => {
    if (busy) return;
    busy = reapStaleJobs(settings)
      .catch((err) => console.error("[jobs] reaper pass failed:", err instanceof Error ? (err.stack ?? err.message) : err))
      .finally(() => {
        busy = null;
      });
  }, settings.reaperIntervalMs);
  return async () => {
    clearInterval(timer);
    await busy;
  };
}
