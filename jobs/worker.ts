// The worker process: `npm run worker` (or `node scripts/run-ts.mjs jobs/worker.ts`). It needs only
// DATABASE_URL and the storage settings, so more of them can run on other machines against the same
// database and object store. It installs pg-boss's schema if missing, creates every queue, runs the
// registered job kinds (one job at a time by default: LOWSTAND_WORKER_CONCURRENCY), the reaper and
// the mail dispatcher, and on SIGTERM/SIGINT hands its running jobs back to the queue and exits.
import { pool } from "../app/db.server";
import { startMailDispatcher, stopMailDispatcher } from "../app/mail.server";
import { boss, jobSettings, queueNames, stopBoss } from "./boss.server";
import { startReaper } from "./reaper";
import { startMaintenance } from "./maintenance";
import { JOB_REGISTRY } from "./registry";
import { runAttempt, type QueueJob } from "./wrapper";

const settings = jobSettings();
const tag = `[worker ${process.pid}]`;

const queues = queueNames();
for (const kind of Object.keys(JOB_REGISTRY)) {
  if (!queues.includes(kind)) {
    console.error(`${tag} job kind "${kind}" has no queue: add it to PRODUCT_QUEUES in jobs/boss.server.ts`);
    process.exit(2);
  }
}
const kinds = queues.filter((q) => JOB_REGISTRY[q]);
for (const q of queues) if (!JOB_REGISTRY[q]) console.warn(`${tag} no job kind is registered for queue "${q}"; its jobs wait for a worker that has one`);

const b = await boss("worker");
startMailDispatcher();
const stopReaper = startReaper(settings);
const stopMaintenance = startMaintenance();

const shutdown = new AbortController();
const running = new Set<Promise<void>>();
let wake: (() => void) | null = null;

function pause(ms: number): Promise<void> {
  return new Promise((resolve) => {
    const t = setTimeout(done, ms);
    function done() {
      clearTimeout(t);
      wake = null;
      resolve();
    }
    wake = done;
  });
}

async function nextJob(offset: number): Promise<QueueJob | null> {
  for (let k = 0; k < kinds.length; k++) {
    const name = kinds[(offset + k) % kinds.length];
    const [job] = await b.fetch<{ runId?: string }>(name, { batchSize: 1, includeMetadata: true });
    if (job) return job as unknown as QueueJob;
  }
  return null;
}

async function loop() {
  let turn = 0;
  while (!shutdown.signal.aborted) {
    if (running.size >= settings.concurrency) {
      await Promise.race([...running, pause(settings.fetchIntervalMs)]);
      continue;
    }
    let job: QueueJob | null = null;
    try {
      job = kinds.length ? await nextJob(turn++) : null;
    } catch (err) {
      console.error(`${tag} fetching jobs failed:`, (err as Error).message);
    }
    if (!job) {
      await pause(settings.fetchIntervalMs);
      continue;
    }
    // A job fetched just as shutdown began still goes through the wrapper, which hands it back at once.
    const def = JOB_REGISTRY[job.name];
    const p: Promise<void> = runAttempt(def, job, settings, shutdown.signal)
      .catch((err) => console.error(`${tag} ${job.name} queue job ${job.id}: the wrapper itself failed`, err))
      .finally(() => running.delete(p));
    running.add(p);
  }
}

console.log(`${tag} running ${kinds.join(", ") || "no job kinds"}; ${settings.concurrency} at a time`);
const looping = loop();

let stopping = false;
async function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`${tag} ${signal}: handing back ${running.size} running job(s) and stopping`);
  shutdown.abort();
  wake?.();
  const grace = new Promise((r) => setTimeout(r, settings.shutdownGraceMs).unref());
  await Promise.race([Promise.all([looping, ...running]), grace]);
  await stopReaper();
  stopMaintenance();
  stopMailDispatcher();
  await stopBoss();
  await pool().end();
  console.log(`${tag} stopped`);
  process.exit(0);
}
process.on("SIGTERM", () => void stop("SIGTERM"));
process.on("SIGINT", () => void stop("SIGINT"));
