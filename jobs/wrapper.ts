// The one job wrapper every long task runs in (reconstruction; later scoring, model training,
// sensitivity). It owns the job_runs row of its attempt: progress (step, fraction, message) and a
// heartbeat, the cancellation flag the engine polls, and the end — succeeded, failed by bad input
// (not retried), cancelled (not retried), or crashed (retried by pg-boss with backoff). Every end
// is written in one transaction with the pg-boss job's own transition and the starter's e-mail,
// so the queue, the row people see and the outbox never disagree. See docs/decisions/007-jobs.md.
import { eq, sql } from "drizzle-orm";
import { db } from "../app/db.server";
import { jobRuns } from "../app/db/schema";
import { kickMailDispatcher } from "../app/mail.server";
import { TerrainCancelled, TerrainInputError, type RunControl } from "../app/terrain/grid";
import { boss, bossDbFor, type JobSettings } from "./boss.server";
import { CANCELLED_MESSAGE, queueJobEndedMail, type Tx } from "./notify";

/**
 * A problem with what the user asked for (bad input, missing data): the job ends as failed with
 * this message, shown to the user as it is, and is not retried. Write it for the user.
 */
export class JobUserError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "JobUserError";
  }
}

export interface JobContext<P> {
  runId: string;
  /** 1 for the first attempt, 2 for the first retry, … */
  attempt: number;
  /** Attempts this run may have in all (retries + 1). */
  maxAttempts: number;
  projectId: number | null;
  startedBy: number | null;
  payload: P;
  /** Reports progress; written to job_runs at most once per poll interval. `step` and `message` stay until changed. */
  progress(fraction: number, step?: string, message?: string): void;
  /** For the terrain engine: its progress goes to `progress`, and it stops when `isCancelled()`. */
  control: RunControl;
  /** True once the user asked to cancel, or this attempt must stop (worker shutting down, time limit, run taken over). */
  isCancelled(): boolean;
  /**
   * Why `isCancelled()` is true: "cancel" (the user asked: the run ends as cancelled), "shutdown"
   * (the worker is stopping), "expired" (the attempt's time limit) — both retried —, or "lost"
   * (the run was taken from this attempt: nothing it does any more counts). Null while it may go on.
   */
  stopReason(): StopReason | null;
  /**
   * `stopReason()` after reading the run's row again now, rather than at the last poll: for a
   * handler deciding how it ended (a publication refused because a cancel arrived a moment ago).
   */
  refreshStop(): Promise<StopReason | null>;
  /** Throws TerrainCancelled when `isCancelled()`. */
  throwIfCancelled(): void;
  /** Aborted when `isCancelled()` becomes true; for sleeps and fetches inside a handler. */
  signal: AbortSignal;
}

export type StopReason = "cancel" | "shutdown" | "expired" | "lost";

export type JobHandler<P> = (ctx: JobContext<P>) => Promise<Record<string, unknown> | void>;

export interface JobDefinition<P = Record<string, unknown>> {
  kind: string;
  run: JobHandler<P>;
}

/** Declares a job kind; register it in jobs/registry.ts. The handler's return value is stored as job_runs.result. */
export function defineJob<P = Record<string, unknown>>(kind: string, handler: JobHandler<P>): JobDefinition<P> {
  return { kind, run: handler };
}

/** Errors the user caused. Errors thrown in worker threads arrive as plain Errors, so the name counts too. */
export function isUserError(err: unknown): err is Error {
  return err instanceof JobUserError || err instanceof TerrainInputError || (err instanceof Error && (err.name === "JobUserError" || err.name === "TerrainInputError"));
}

function isCancellation(err: unknown): boolean {
  return err instanceof TerrainCancelled || (err instanceof Error && err.name === "TerrainCancelled");
}

/** The pg-boss job of one attempt, as fetched with includeMetadata. */
export interface QueueJob {
  id: string;
  name: string;
  data: { runId?: string } | null;
  retryCount: number;
  retryLimit: number;
  expireInSeconds: number | string;
}

type Outcome =
  | { type: "succeeded"; result: Record<string, unknown> | null }
  | { type: "user_error"; message: string }
  | { type: "cancelled" }
  | { type: "crashed"; error: unknown; note: string }
  | { type: "lost" };

const TERMINAL = new Set(["succeeded", "failed", "cancelled"]);

function log(job: QueueJob, runId: string, attempt: number, text: string, err?: unknown) {
  const where = `[jobs] ${job.name} run ${runId} attempt ${attempt} (queue job ${job.id})`;
  if (err === undefined) console.log(`${where}: ${text}`);
  else console.error(`${where}: ${text}`, err instanceof Error ? (err.stack ?? err.message) : err);
}

/**
 * Runs one attempt of one job to its end. Never throws for the job's own errors: every outcome is
 * recorded (and the pg-boss job moved on) before this returns.
 */
export async function runAttempt(def: JobDefinition<any>, job: QueueJob, settings: JobSettings, shutdown: AbortSignal): Promise<void> {
  const runId = job.data?.runId;
  const attempt = job.retryCount + 1;
  const b = await boss("worker");
  if (!runId) {
    console.error(`[jobs] ${job.name} queue job ${job.id} carries no runId; completing it without running`);
    await b.complete(job.name, job.id, { outcome: "no run" });
    return;
  }

  // Claim the run for this attempt.
  const claimed = await db().transaction(async (tx) => {
    const [row] = await tx.select().from(jobRuns).where(eq(jobRuns.id, runId)).for("update");
    const bdb = bossDbFor(tx);
    if (!row) {
      await b.complete(job.name, job.id, { outcome: "run deleted" }, { db: bdb });
      return null;
    }
    if (TERMINAL.has(row.state)) {
      await b.complete(job.name, job.id, { outcome: `run already ${row.state}` }, { db: bdb });
      return null;
    }
    if (row.cancelRequested) {
      await tx.update(jobRuns).set({ state: "cancelled", message: CANCELLED_MESSAGE, finishedAt: new Date() }).where(eq(jobRuns.id, runId));
      await b.cancel(job.name, job.id, { db: bdb });
      await queueJobEndedMail(tx, row, "cancelled", CANCELLED_MESSAGE);
      return null;
    }
    const now = new Date();
    await tx
      .update(jobRuns)
      .set({ state: "running", attempt, queueJobId: job.id, heartbeatAt: now, startedAt: row.startedAt ?? now, fraction: 0, step: "", message: "" })
      .where(eq(jobRuns.id, runId));
    return row;
  });
  if (!claimed) {
    kickMailDispatcher();
    log(job, runId, attempt, "nothing to run (the run is gone, ended or was cancelled while queued)");
    return;
  }
  log(job, runId, attempt, "started");

  // Progress, heartbeat and the cancellation flag.
  const live = { fraction: 0, step: "", message: "", dirty: false, lastBeat: Date.now(), cancelRequested: false, lost: false, expired: false };
  const stop = new AbortController();
  const isCancelled = () => live.cancelRequested || live.lost || live.expired || shutdown.aborted;
  const checkStop = () => {
    if (isCancelled() && !stop.signal.aborted) stop.abort();
  };
  const onShutdown = () => checkStop();
  shutdown.addEventListener("abort", onShutdown);

  /** Whether this attempt still owns the run, and whether its user asked it to stop. */
  const readFlags = async () => {
    const [row] = await db()
      .select({ cancelRequested: jobRuns.cancelRequested, attempt: jobRuns.attempt, state: jobRuns.state })
      .from(jobRuns)
      .where(eq(jobRuns.id, runId));
    if (!row || row.attempt !== attempt || row.state !== "running") live.lost = true;
    else live.cancelRequested = row.cancelRequested;
  };
  let inFlight: Promise<void> | null = null;
  const tick = () => {
    if (inFlight) return;
    inFlight = (async () => {
      try {
        const beat = live.dirty || Date.now() - live.lastBeat >= settings.heartbeatMs;
        if (beat) {
          const snapshot = { fraction: live.fraction, step: live.step, message: live.message };
          live.dirty = false;
          const rows = await db()
            .update(jobRuns)
            .set({ ...snapshot, heartbeatAt: sql`now()` })
            .where(sql`${jobRuns.id} = ${runId} and ${jobRuns.attempt} = ${attempt} and ${jobRuns.state} = 'running'`)
            .returning({ cancelRequested: jobRuns.cancelRequested });
          live.lastBeat = Date.now();
          if (rows.length === 0) live.lost = true;
          else live.cancelRequested = rows[0].cancelRequested;
        } else await readFlags();
        if (live.lost && !stop.signal.aborted) log(job, runId, attempt, "the run was taken from this attempt (reaped, deleted or ended elsewhere); stopping");
        checkStop();
      } catch (err) {
        // A database hiccup: keep going (and write the progress next time); a missed heartbeat only matters if it lasts.
        live.dirty = true;
        log(job, runId, attempt, "heartbeat failed", err);
      } finally {
        inFlight = null;
      }
    })();
  };
  // Read the flags now (a handler's end, and the wrapper's own classification of an error).
  const refreshFlags = async () => {
    try {
      await readFlags();
    } catch (err) {
      log(job, runId, attempt, "reading the run's flags failed", err);
    }
  };
  const timer = setInterval(tick, settings.pollMs);
  // Stop a little before pg-boss would expire the attempt and retry it on top of this one.
  const expiryMs = Math.max(1_000, Number(job.expireInSeconds) * 1000 - Math.max(settings.pollMs * 2, 5_000));
  const deadline = setTimeout(() => {
    live.expired = true;
    checkStop();
  }, expiryMs);

  const stopReason = (): StopReason | null => (live.lost ? "lost" : live.cancelRequested ? "cancel" : live.expired ? "expired" : shutdown.aborted ? "shutdown" : null);
  const progress = (fraction: number, step?: string, message?: string) => {
    const f = Number.isFinite(fraction) ? Math.min(1, Math.max(0, fraction)) : live.fraction;
    if (f !== live.fraction || (step !== undefined && step !== live.step) || (message !== undefined && message !== live.message)) live.dirty = true;
    live.fraction = f;
    if (step !== undefined) live.step = step;
    if (message !== undefined) live.message = message;
  };
  const ctx: JobContext<unknown> = {
    runId,
    attempt,
    maxAttempts: job.retryLimit + 1,
    projectId: claimed.projectId,
    startedBy: claimed.startedBy,
    payload: claimed.payload,
    progress,
    control: { onProgress: (f, step) => progress(f, step), shouldCancel: isCancelled },
    isCancelled,
    stopReason,
    refreshStop: async () => {
      await refreshFlags();
      return stopReason();
    },
    throwIfCancelled: () => {
      if (isCancelled()) throw new TerrainCancelled();
    },
    signal: stop.signal,
  };

  let outcome: Outcome;
  try {
    const result = await def.run(ctx);
    outcome = { type: "succeeded", result: result ?? null };
  } catch (err) {
    // A cancel asked after the last poll still counts: a publication refused for it throws here.
    if (!isUserError(err) && !live.lost && !live.cancelRequested) await refreshFlags();
    if (live.lost) outcome = { type: "lost" };
    else if (isUserError(err)) outcome = { type: "user_error", message: err.message };
    else if (live.cancelRequested) {
      if (!isCancellation(err) && !stop.signal.aborted) log(job, runId, attempt, "stopped on an error after a cancel was asked; it ends as cancelled", err);
      outcome = { type: "cancelled" };
    }
    else if (live.expired) outcome = { type: "crashed", error: err, note: "ran longer than its time limit" };
    else if (shutdown.aborted) outcome = { type: "crashed", error: err, note: "was interrupted because its worker shut down" };
    else outcome = { type: "crashed", error: err, note: "stopped on an error on our side" };
  } finally {
    clearInterval(timer);
    clearTimeout(deadline);
    shutdown.removeEventListener("abort", onShutdown);
    await inFlight;
  }
  // A handler that ignored a takeover and "succeeded" anyway is dropped by the ownership check in settle.
  if (live.lost) outcome = { type: "lost" };
  await settle(job, runId, attempt, outcome, live);
}

/** Records the end of an attempt, if this attempt still owns the run. */
async function settle(job: QueueJob, runId: string, attempt: number, outcome: Outcome, live: { fraction: number; step: string }): Promise<void> {
  if (outcome.type === "crashed") log(job, runId, attempt, outcome.note, outcome.error);
  if (outcome.type === "lost") {
    log(job, runId, attempt, "ended after losing the run; its outcome is dropped");
    return;
  }
  const b = await boss("worker");
  let mailed = false;
  await db().transaction(async (tx) => {
    const [row] = await tx.select().from(jobRuns).where(eq(jobRuns.id, runId)).for("update");
    if (!row || row.attempt !== attempt || row.state !== "running") {
      log(job, runId, attempt, `ended, but the run is no longer this attempt's (now ${row ? `${row.state}, attempt ${row.attempt}` : "deleted"}); its outcome is dropped`);
      return;
    }
    const bdb = bossDbFor(tx);
    const end = async (state: "succeeded" | "failed" | "cancelled", message: string, extra: Partial<typeof jobRuns.$inferInsert> = {}) => {
      // The last progress may not have been written yet: the end carries it.
      await tx.update(jobRuns).set({ state, message, step: live.step, fraction: live.fraction, finishedAt: new Date(), ...extra }).where(eq(jobRuns.id, runId));
      mailed = (await queueJobEndedMail(tx as Tx, row, state, message)) || mailed;
    };
    switch (outcome.type) {
      case "succeeded":
        await end("succeeded", "", { fraction: 1, result: outcome.result });
        await b.complete(job.name, job.id, { runId }, { db: bdb });
        break;
      case "user_error":
        await end("failed", outcome.message);
        // Completed, not failed: pg-boss would retry a failure, and bad input stays bad.
        await b.complete(job.name, job.id, { runId, outcome: "failed on its input" }, { db: bdb });
        break;
      case "cancelled":
        await end("cancelled", CANCELLED_MESSAGE);
        await b.cancel(job.name, job.id, { db: bdb });
        break;
      case "crashed": {
        const willRetry = job.retryCount < job.retryLimit;
        await b.fail(job.name, job.id, { runId, message: outcome.note }, { db: bdb });
        if (willRetry) {
          await tx
            .update(jobRuns)
            .set({ state: "queued", step: live.step, fraction: live.fraction, message: `Attempt ${attempt} ${outcome.note}; it will be retried shortly.` })
            .where(eq(jobRuns.id, runId));
        } else {
          await end(
            "failed",
            `The job ${outcome.note}, on all ${attempt} attempts, and was given up. The error is logged under run ${runId}; ` +
              "try again later, or tell the people who run this Lowstand.",
          );
        }
        break;
      }
    }
  });
  if (mailed) kickMailDispatcher();
  log(job, runId, attempt, `ended: ${outcome.type}`);
}

/**
 * In a job's catch block: record on the product row (reconstruction, scoring, model, uncertainty run)
 * why this attempt ended — cancelled on request, or failed with the user's own error (our own
 * errors are retried by the wrapper and leave the row running). `mark` writes the row.
 */
export async function markRowEnded(ctx: Pick<JobContext<unknown>, "refreshStop">, err: unknown, mark: (status: "failed" | "cancelled", message: string) => Promise<void>): Promise<void> {
  if (isUserError(err)) {
    await mark("failed", err.message);
    return;
  }
  if ((await ctx.refreshStop()) === "cancel") await mark("cancelled", "Cancelled on request.");
}
