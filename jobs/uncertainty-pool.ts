/**
 * The uncertainty run's cells × draws loop across worker threads (Node only; issue 12: "split it over
 * both cores"). The factor scores, preservation, land classes, weight draws and the per-cell
 * accumulators all sit on SharedArrayBuffers; for each block of draws every thread runs
 * `accumulateDraws` on its own contiguous range of cells — the same function as the single-thread
 * runner, so the result is equal — and returns its convergence counts, which are summed here.
 *
 * Node 20 cannot start a .ts file as a worker, so the worker starts scripts/run-ts.mjs with this file
 * as its entry, as jobs/forest-predict-pool.ts does. Common practice, no source.
 */
import { Worker, isMainThread, parentPort, workerData } from "node:worker_threads";
import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { accumulateDraws, CONVERGENCE_FIELDS, type Accumulators, type DrawBlock } from "../app/scoring/monte-carlo.ts";
import type { BlockRunner } from "../app/scoring/uncertainty-run.ts";

const ROLE = "lowstand-uncertainty-worker";

type ToWorker = { type: "block"; block: DrawBlock; acc: Accumulators; start: number; end: number } | { type: "exit" };
type FromWorker = { type: "ready" } | { type: "done"; conv: Float64Array } | { type: "error"; message: string; stack?: string };

export interface DrawPool {
  run: BlockRunner;
  threads: number;
  close(): Promise<void>;
}

/**
 * Starts `threads` workers (default: the number of cores) and returns a BlockRunner that splits each
 * block's cells evenly among them. Every array in the block and the accumulators must be on
 * SharedArrayBuffers (runUncertainty makes them so). close() ends the workers.
 */
export async function createDrawPool(threads = availableParallelism()): Promise<DrawPool> {
  const count = Math.max(1, threads);
  const runTs = fileURLToPath(new URL("../scripts/run-ts.mjs", import.meta.url));
  const entry = fileURLToPath(import.meta.url);
  const workers: Worker[] = [];
  let failure: Error | null = null;
  const waiting = new Map<Worker, { resolve: (c: Float64Array) => void; reject: (e: Error) => void }>();
  await Promise.all(
    Array.from({ length: count }, () =>
      new Promise<void>((resolve, reject) => {
        const w = new Worker(runTs, { workerData: { entry, role: ROLE } });
        workers.push(w);
        w.on("message", (m: FromWorker) => {
          if (m.type === "ready") resolve();
          else if (m.type === "done") {
            const p = waiting.get(w);
            waiting.delete(w);
            p?.resolve(m.conv);
          } else if (m.type === "error") {
            const e = new Error(m.message);
            if (m.stack) e.stack = m.stack;
            const p = waiting.get(w);
            waiting.delete(w);
            p?.reject(e);
          }
        });
        w.on("error", (e) => {
          failure = e;
          reject(e);
          const p = waiting.get(w);
          waiting.delete(w);
          p?.reject(e);
        });
        w.on("exit", (code) => {
          const p = waiting.get(w);
          waiting.delete(w);
          if (code !== 0) p?.reject(new Error(`uncertainty worker stopped with exit code ${code}`));
        });
      }),
    ),
  );
  const run: BlockRunner = async (block, acc) => {
    if (failure) throw failure;
    const n = acc.n;
    const parts = workers.map((w, t) => {
      const start = Math.floor((t * n) / workers.length);
      const end = Math.floor(((t + 1) * n) / workers.length);
      return new Promise<Float64Array>((resolve, reject) => {
        waiting.set(w, { resolve, reject });
        w.postMessage({ type: "block", block, acc, start, end } satisfies ToWorker);
      });
    });
    const convs = await Promise.all(parts);
    const out = new Float64Array(block.checkpoints.length * CONVERGENCE_FIELDS);
    for (const c of convs) for (let q = 0; q < out.length; q++) out[q] += c[q];
    return out;
  };
  return {
    run,
    threads: workers.length,
    close: async () => {
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}

// ---- worker side ---------------------------------------------------------------------------------

if (!isMainThread && workerData?.role === ROLE && parentPort) {
  const port = parentPort;
  let scratch = new Float64Array(16);
  port.on("message", (m: ToWorker) => {
    if (m.type === "exit") {
      port.close();
      return;
    }
    try {
      if (scratch.length < m.block.scores.length) scratch = new Float64Array(m.block.scores.length);
      const conv = new Float64Array(m.block.checkpoints.length * CONVERGENCE_FIELDS);
      accumulateDraws(m.block, m.acc, m.start, m.end, conv, scratch);
      port.postMessage({ type: "done", conv } satisfies FromWorker);
    } catch (e) {
      const err = e as Error;
      port.postMessage({ type: "error", message: err?.message ?? String(e), stack: err?.stack } satisfies FromWorker);
    }
  });
  port.postMessage({ type: "ready" } satisfies FromWorker);
}
