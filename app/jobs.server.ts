// Long tasks as routes see them: start one, read its progress, ask it to stop, list a project's.
// The work runs in worker processes (jobs/worker.ts); this module only writes job_runs rows and
// sends to pg-boss, in one transaction. Role checks are the caller's (routes ask permissions first).
import { and, desc, eq, sql } from "drizzle-orm";
import { randomUUID } from "node:crypto";
import { db, type Db } from "./db.server";
import { jobRuns } from "./db/schema";
import { kickMailDispatcher } from "./mail.server";
import { boss, bossDbFor, expiryForWorkSize, jobSettings, queueNames } from "../jobs/boss.server";
import { CANCELLED_MESSAGE, queueJobEndedMail, type Tx } from "../jobs/notify";

export type JobRun = typeof jobRuns.$inferSelect;

export interface EnqueueJobInput {
  /** A job kind, which is also its queue (PRODUCT_QUEUES in jobs/boss.server.ts). */
  kind: string;
  projectId: number | null;
  /** The user who starts it: they get the e-mail when it ends (unless they opted out). */
  startedBy: number | null;
  payload: Record<string, unknown>;
  /** Size of the work in engine units (cells × (ages + 1) for a reconstruction): sets the attempt's expiry. */
  workSize?: number;
}

/**
 * Starts a job: inserts its job_runs row and sends it to pg-boss in one transaction, so a failure
 * leaves neither. Pass `tx` to make both part of a larger transaction of the caller's (e.g. the
 * reconstruction row). Returns the run's id. Throws if pg-boss does not accept the job.
 */
export async function enqueueJob(input: EnqueueJobInput, tx?: Tx): Promise<string> {
  if (!queueNames().includes(input.kind)) throw new Error(`enqueueJob: unknown job kind "${input.kind}" (queues: ${queueNames().join(", ")})`);
  const b = await boss("app");
  const s = jobSettings();
  const run = async (t: Tx) => {
    const queueJobId = randomUUID();
    const [row] = await t
      .insert(jobRuns)
      .values({ projectId: input.projectId, kind: input.kind, payload: input.payload, startedBy: input.startedBy, queueJobId })
      .returning({ id: jobRuns.id });
    const sent = await b.send(input.kind, { runId: row.id }, {
      id: queueJobId,
      retryLimit: s.retryLimit,
      retryDelay: s.retryDelayS,
      retryBackoff: true,
      expireInSeconds: expiryForWorkSize(input.workSize),
      db: bossDbFor(t),
    });
    // pg-boss returns null instead of throwing when the queue does not exist or the job was refused.
    if (!sent) throw new Error(`pg-boss did not accept a "${input.kind}" job (no queue of that name?); run ${row.id} not started`);
    return row.id;
  };
  try {
    return tx ? await run(tx) : await db().transaction(run);
  } catch (err) {
    console.error(`[jobs] enqueueJob ${input.kind} for project ${input.projectId} by user ${input.startedBy} failed:`, err);
    throw err;
  }
}

export async function getJobRun(id: string, database: Pick<Db, "select"> = db()): Promise<JobRun | null> {
  if (!/^[0-9a-f-]{36}$/i.test(id)) return null;
  const [row] = await database.select().from(jobRuns).where(eq(jobRuns.id, id));
  return row ?? null;
}

/** A project's runs, newest first. */
export async function listJobRuns(projectId: number, limit = 50): Promise<JobRun[]> {
  return db().select().from(jobRuns).where(eq(jobRuns.projectId, projectId)).orderBy(desc(jobRuns.createdAt)).limit(limit);
}

export type CancelResult = "cancelled" | "requested" | "already_ended" | "not_found";

/**
 * Asks a run to stop. A queued run (never started, or waiting for a retry) is cancelled at once,
 * with its pg-boss job; a running one gets the flag its worker polls (within about a second) and
 * ends as cancelled. `userId` is who asked (for the log; the route checks they may).
 */
export async function requestCancel(id: string, userId: number | null): Promise<CancelResult> {
  if (!/^[0-9a-f-]{36}$/i.test(id)) return "not_found";
  const b = await boss("app");
  let mailed = false;
  const result = await db().transaction(async (tx): Promise<CancelResult> => {
    const [row] = await tx.select().from(jobRuns).where(eq(jobRuns.id, id)).for("update");
    if (!row) return "not_found";
    if (row.state === "succeeded" || row.state === "failed" || row.state === "cancelled") return "already_ended";
    if (row.state === "queued") {
      const [ended] = await tx
        .update(jobRuns)
        .set({ state: "cancelled", cancelRequested: true, message: CANCELLED_MESSAGE, finishedAt: new Date() })
        .where(and(eq(jobRuns.id, id), eq(jobRuns.state, "queued")))
        .returning();
      if (row.queueJobId) await b.cancel(row.kind, row.queueJobId, { db: bossDbFor(tx) });
      mailed = await queueJobEndedMail(tx, ended, "cancelled", CANCELLED_MESSAGE);
      return "cancelled";
    }
    await tx.update(jobRuns).set({ cancelRequested: true }).where(eq(jobRuns.id, id));
    return "requested";
  });
  if (result === "cancelled" || result === "requested") console.log(`[jobs] run ${id}: cancellation ${result} by user ${userId ?? "system"}`);
  if (mailed) kickMailDispatcher();
  return result;
}

/** For status APIs: the fields a progress bar needs. */
export function jobRunStatus(run: JobRun) {
  return {
    id: run.id,
    kind: run.kind,
    state: run.state,
    progress: run.fraction,
    step: run.step,
    message: run.message,
    attempt: run.attempt,
    cancelRequested: run.cancelRequested,
    createdAt: run.createdAt.toISOString(),
    startedAt: run.startedAt?.toISOString() ?? null,
    finishedAt: run.finishedAt?.toISOString() ?? null,
    heartbeatAt: run.heartbeatAt?.toISOString() ?? null,
    result: run.result,
  };
}

/**
 * The status people see for a product row run by a job (reconstruction, scoring, model, uncertainty
 * run): the row says "running" until its attempt publishes, so a row whose job ended without
 * publishing reads as failed or cancelled.
 */
export function effectiveRunStatus<S extends string>(status: S | "running" | "failed" | "cancelled", run: Pick<JobRun, "state"> | null | undefined) {
  if (status !== "running" || !run) return status;
  if (run.state === "failed") return "failed" as const;
  if (run.state === "cancelled") return "cancelled" as const;
  return "running" as const;
}

/**
 * The guard every publication uses (decisions 009, 402): true only while `attempt` is still the
 * current attempt of job run `runId`, the run is running, and nobody has asked it to stop — a
 * retried or taken-over attempt publishes nothing, and a cancel asked before the publication
 * wins even when the engine had already finished. The run's row is locked (as `requestCancel`
 * locks it), so a cancel and a publication are ordered: whichever commits first decides.
 */
export function attemptMayPublish(runId: string, attempt: number) {
  return sql`exists (select 1 from ${jobRuns} where ${jobRuns.id} = ${runId} and ${jobRuns.attempt} = ${attempt} and ${jobRuns.state} = 'running' and not ${jobRuns.cancelRequested} for share)`;
}
