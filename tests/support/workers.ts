// Real worker processes for integration tests, started as `npm run worker` starts them, and a
// polling wait with a deadline that shows the workers' logs when it runs out.
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";

const ROOT = path.resolve(import.meta.dirname, "../..");

/** Short job-runner timings for tests (heartbeat 0.3 s, stale after 2 s, retry after 1 s), read by jobSettings() at use. */
export const FAST_JOB_SETTINGS: Record<string, string> = {
  LOWSTAND_JOB_HEARTBEAT_MS: "300",
  LOWSTAND_JOB_POLL_MS: "100",
  LOWSTAND_JOB_STALE_AFTER_S: "2",
  LOWSTAND_JOB_REAPER_INTERVAL_MS: "500",
  LOWSTAND_JOB_RETRY_LIMIT: "2",
  LOWSTAND_JOB_RETRY_DELAY_S: "1",
  LOWSTAND_JOB_FETCH_INTERVAL_MS: "500",
};

export interface WorkerHandle {
  proc: ChildProcess;
  output: string[];
  exited: Promise<number | null>;
}

export const workers: WorkerHandle[] = [];

export function startWorker(extraEnv: Record<string, string> = {}): WorkerHandle {
  const proc = spawn(process.execPath, ["scripts/run-ts.mjs", "jobs/worker.ts"], { cwd: ROOT, env: { ...process.env, ...extraEnv }, stdio: ["ignore", "pipe", "pipe"] });
  const output: string[] = [];
  proc.stdout!.on("data", (d: Buffer) => output.push(d.toString()));
  proc.stderr!.on("data", (d: Buffer) => output.push(d.toString()));
  const exited = new Promise<number | null>((resolve) => proc.on("exit", (code) => resolve(code)));
  const w = { proc, output, exited };
  workers.push(w);
  return w;
}

export function workerLogs(): string {
  return workers.map((w, i) => `--- worker ${i} (pid ${w.proc.pid}) ---\n${w.output.join("").slice(-4000)}`).join("\n");
}

/** Stops every worker this file started (SIGTERM, then SIGKILL after `graceMs`). */
export async function stopWorkers(graceMs = 8_000): Promise<void> {
  await Promise.all(
    workers.map(async (w) => {
      if (w.proc.exitCode !== null || w.proc.signalCode !== null) return;
      w.proc.kill("SIGTERM");
      const timer = setTimeout(() => w.proc.kill("SIGKILL"), graceMs);
      await w.exited;
      clearTimeout(timer);
    }),
  );
}

/** Polls `probe` until it returns a truthy value, or fails after `deadlineMs` with the last value and the workers' logs. */
export async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, deadlineMs = 15_000): Promise<T> {
  const until = Date.now() + deadlineMs;
  let last: unknown;
  for (;;) {
    const v = await probe();
    if (v) return v;
    last = v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what} (last: ${JSON.stringify(last)})\n${workerLogs()}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
