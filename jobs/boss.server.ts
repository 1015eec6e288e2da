// The queue under every long task: pg-boss 10 in the product's own database (schema "pgboss").
// One PgBoss per process, over this process's one pool (app/db.server.ts). The queue names, the
// retry policy and the timings of the job wrapper live here so the web app (which sends) and the
// workers (which run) agree. See docs/decisions/007-jobs.md.
import PgBoss from "pg-boss";
import { sql, type SQL } from "drizzle-orm";
import { pool } from "../app/db.server";

/**
 * Every job kind the product runs; each is a pg-boss queue of the same name. Add a kind here and
 * its definition in jobs/registry.ts.
 */
export const PRODUCT_QUEUES = ["reconstruction", "scoring", "model", "uncertainty"] as const;

/** The kind used only by the job runner's own tests (LOWSTAND_TEST_JOBS=1). */
export const TEST_QUEUE = "test.sleep";

export function testJobsEnabled(): boolean {
  return process.env.LOWSTAND_TEST_JOBS === "1";
}

/** The queues of this process: the product's, plus the test kind when test jobs are enabled. */
export function queueNames(): string[] {
  return testJobsEnabled() ? [...PRODUCT_QUEUES, TEST_QUEUE] : [...PRODUCT_QUEUES];
}

function envNumber(name: string, fallback: number, min = 0): number {
  const raw = process.env[name];
  if (raw === undefined || raw === "") return fallback;
  const v = Number(raw);
  if (!Number.isFinite(v) || v < min) throw new Error(`${name} must be a number ≥ ${min}, got "${raw}"`);
  return v;
}

/**
 * Timings and retry policy, from the environment (the tests shorten them). Defaults: a killed
 * worker's job is reaped 30–40 s after its last heartbeat and retried 15–30 s later, so it runs
 * again about a minute after the kill.
 */
export function jobSettings() {
  return {
    /** Retries after the first attempt, for crashes and lost workers (never for bad input). */
    retryLimit: envNumber("LOWSTAND_JOB_RETRY_LIMIT", 2, 0),
    /** Base delay before a retry; doubled per retry with jitter (pg-boss retryBackoff). */
    retryDelayS: envNumber("LOWSTAND_JOB_RETRY_DELAY_S", 15, 1),
    /** How often a running job writes heartbeat_at (and its progress). */
    heartbeatMs: envNumber("LOWSTAND_JOB_HEARTBEAT_MS", 5_000, 50),
    /** How often a running job reads its cancellation flag (and writes progress, if any changed). */
    pollMs: envNumber("LOWSTAND_JOB_POLL_MS", 1_000, 50),
    /** A running job without a heartbeat for this long is taken as lost and failed by the reaper. */
    staleAfterS: envNumber("LOWSTAND_JOB_STALE_AFTER_S", 30, 1),
    /** How often the reaper looks. */
    reaperIntervalMs: envNumber("LOWSTAND_JOB_REAPER_INTERVAL_MS", 10_000, 100),
    /** How often an idle worker asks the queues for work. pg-boss refuses less than 0.5 s. */
    fetchIntervalMs: envNumber("LOWSTAND_JOB_FETCH_INTERVAL_MS", 2_000, 500),
    /** Jobs one worker process runs at once (the engine uses worker threads itself). */
    concurrency: envNumber("LOWSTAND_WORKER_CONCURRENCY", 1, 1),
    /** On SIGTERM, how long running jobs get to wind down before the process exits. */
    shutdownGraceMs: envNumber("LOWSTAND_WORKER_SHUTDOWN_GRACE_MS", 15_000, 0),
  };
}
export type JobSettings = ReturnType<typeof jobSettings>;

/** Units of work the engine gets through per second at the least, for the expiry below. */
const SLOWEST_UNITS_PER_S = 100_000;
const MIN_EXPIRY_S = 15 * 60;
const MAX_EXPIRY_S = 23 * 3600; // pg-boss 10 refuses 24 h or more

/**
 * How long pg-boss lets one attempt stay active before it fails it, from the size of the work
 * (for a reconstruction: cells × (ages + 1)). A backstop only: a dead worker is found by the
 * reaper from its missing heartbeat long before; expiry catches an attempt that still beats but
 * never ends. Four times the time at the slowest expected rate, between 15 minutes and 23 hours.
 */
export function expiryForWorkSize(workSize?: number): number {
  if (workSize === undefined || !Number.isFinite(workSize) || workSize <= 0) return MIN_EXPIRY_S;
  const s = Math.ceil((4 * workSize) / SLOWEST_UNITS_PER_S);
  return Math.min(MAX_EXPIRY_S, Math.max(MIN_EXPIRY_S, s));
}

/** pg-boss's database hook over our pool: the same connections as everything else. */
const poolDb: PgBoss.Db = {
  executeSql: (text: string, values?: unknown[]) => pool().query(text, values as unknown[]),
};

interface Executes {
  execute(query: SQL): Promise<{ rows: Record<string, unknown>[] }>;
}

/**
 * pg-boss's database hook over a Drizzle transaction, so a send, fail, complete or cancel commits
 * or rolls back with our own rows. pg-boss's statements use $1…$n placeholders; each becomes a
 * bound parameter (values are never spliced into the text).
 */
export function bossDbFor(tx: Executes): PgBoss.Db {
  return {
    async executeSql(text: string, values: unknown[] = []) {
      if (text.includes("$$")) throw new Error("bossDbFor: dollar-quoted statements are not supported in a transaction");
      const parts = text.split(/\$(\d+)/);
      const chunks: SQL[] = [];
      for (let i = 0; i < parts.length; i++) {
        if (i % 2 === 0) chunks.push(sql.raw(parts[i]));
        else chunks.push(sql`${sql.param(values[Number(parts[i]) - 1])}`);
      }
      return tx.execute(sql.join(chunks));
    },
  };
}

type Role = "app" | "worker";
const g = globalThis as unknown as { lowstandBoss?: Promise<PgBoss>; lowstandBossRole?: Role };

/**
 * The started PgBoss of this process (created once). A worker supervises (expiry, archiving);
 * the web app only installs the schema if missing, creates the queues and sends.
 */
export function boss(role: Role = "app"): Promise<PgBoss> {
  if (!g.lowstandBoss) {
    g.lowstandBossRole = role;
    g.lowstandBoss = (async () => {
      const b = new PgBoss({
        db: poolDb,
        schema: "pgboss",
        migrate: true,
        supervise: role === "worker",
        schedule: false,
        // Jobs removed from the archive after a week; the job_runs row keeps what people see.
        archiveCompletedAfterSeconds: 12 * 3600,
        deleteAfterDays: 7,
      });
      b.on("error", (err) => console.error(`[jobs] pg-boss (${role}):`, err));
      await b.start();
      await ensureQueues(b);
      return b;
    })();
    g.lowstandBoss.catch(() => {
      g.lowstandBoss = undefined;
    });
  }
  return g.lowstandBoss;
}

/** Creates every queue of this process that does not exist yet (pg-boss sends to missing queues return null). */
export async function ensureQueues(b: PgBoss): Promise<void> {
  const s = jobSettings();
  for (const name of queueNames()) {
    await b.createQueue(name, {
      name,
      policy: "standard",
      retryLimit: s.retryLimit,
      retryDelay: s.retryDelayS,
      retryBackoff: true,
      expireInSeconds: MIN_EXPIRY_S,
    });
  }
}

export async function stopBoss(): Promise<void> {
  const p = g.lowstandBoss;
  g.lowstandBoss = undefined;
  if (!p) return;
  const b = await p.catch(() => undefined);
  await b?.stop({ graceful: false, close: false, wait: true });
}
