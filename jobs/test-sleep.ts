// A job kind for the job runner's own tests only (registered when LOWSTAND_TEST_JOBS=1): it sleeps
// in steps, reports progress, honours cancellation, and can be told to fail on bad input or crash.
import { TerrainInputError } from "../app/terrain/grid";
import { sql } from "drizzle-orm";
import { db } from "../app/db.server";
import { attemptMayPublish } from "../app/jobs.server";
import { defineJob, JobUserError } from "./wrapper";

export interface TestSleepPayload {
  /** Number of steps (default 5) and milliseconds per step (default 200). */
  steps?: number;
  stepMs?: number;
  /** Throw a JobUserError ("job") or a TerrainInputError ("terrain") with `message` before step `atStep` (default 0). */
  userError?: "job" | "terrain";
  message?: string;
  atStep?: number;
  /** Crash (a plain Error) before step `atStep` on these attempts. */
  crashOnAttempts?: number[];
  /**
   * After the steps, a last stretch of `deafMs` that does not look at the cancellation flag (as an
   * engine's last layer does not), then a publication through the guard every real job uses.
   */
  deafMs?: number;
  publish?: boolean;
}

function sleep(ms: number, signal: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    if (signal.aborted) return resolve();
    const t = setTimeout(done, ms);
    function done() {
      clearTimeout(t);
      signal.removeEventListener("abort", done);
      resolve();
    }
    signal.addEventListener("abort", done);
  });
}

export const testSleepJob = defineJob<TestSleepPayload>("test.sleep", async (ctx) => {
  const { steps = 5, stepMs = 200, userError, message = "the test input is bad", atStep = 0, crashOnAttempts = [], deafMs = 0, publish = false } = ctx.payload;
  ctx.progress(0, "sleeping", `attempt ${ctx.attempt}`);
  for (let i = 0; i < steps; i++) {
    if (i === atStep) {
      if (userError === "job") throw new JobUserError(message);
      if (userError === "terrain") throw new TerrainInputError(message);
      if (crashOnAttempts.includes(ctx.attempt)) throw new Error(`test crash on attempt ${ctx.attempt}`);
    }
    // The engine's way: ask between units of work.
    if (ctx.control.shouldCancel?.()) ctx.throwIfCancelled();
    await sleep(stepMs, ctx.signal);
    ctx.throwIfCancelled();
    ctx.progress((i + 1) / steps, `step ${i + 1} of ${steps}`);
  }
  if (deafMs > 0) {
    ctx.progress(1, "finishing");
    await new Promise((resolve) => setTimeout(resolve, deafMs));
  }
  if (publish) {
    const rows = await db().execute<{ ok: boolean }>(sql`select ${attemptMayPublish(ctx.runId, ctx.attempt)} as ok`);
    if (!rows.rows[0]?.ok) throw new Error("the publication was refused");
  }
  return { steps, attempt: ctx.attempt, pid: process.pid, published: publish };
});
