/**
 * Runs a reconstruction's ages in worker threads (Node only): `workerAgeRunner` is an AgeRunner for
 * reconstruct(); the same file is the worker's entry. The big inputs are copied once onto
 * SharedArrayBuffers and shared by every worker; each worker takes the next job (the age-independent
 * layers, or one age) from the main thread, and sends every finished layer back with its buffer
 * transferred (no copy), waiting for the sink to take it before going on, so at most one layer per
 * worker is in flight. Cancellation: a shared flag the workers poll through shouldCancel. The
 * threads are started by the runner's `warmUp`, which reconstruct() calls before it builds the
 * analysis surface and the spill elevation, so loading them overlaps that work; each job message
 * carries the (shared-memory) context.
 *
 * Node 20 cannot start a .ts file as a worker, so the worker starts scripts/run-ts.mjs (which
 * registers tsx) with this file as its entry.
 */
import { Worker, isMainThread, parentPort, workerData } from "node:worker_threads";
import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { TerrainCancelled, TerrainInputError } from "./grid.ts";
import {
  type AgeContext,
  type AgeRunner,
  type AgeSummary,
  type LayerOut,
  type StaticSummary,
  reconstructAge,
  reconstructStatic,
} from "./reconstruct.ts";
import type { SeaLevelModel } from "./sea-level.ts";

const ROLE = "lowstand-reconstruct-worker";

type Typed = Float32Array | Float64Array | Int32Array | Uint8Array;

function shared<T extends Typed>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const sab = new SharedArrayBuffer(a.byteLength);
  const copy = new (a.constructor as new (b: SharedArrayBuffer) => T)(sab);
  copy.set(a as never);
  return copy;
}

function sharedSeaLevel(m: SeaLevelModel): SeaLevelModel {
  if (m.kind === "regional") return { ...m, zone: shared(m.zone) };
  if (m.kind === "grids") return { ...m, levels: m.levels.map((g) => shared(g)) };
  return m;
}

/** Copies the context's grids onto SharedArrayBuffers (once; already-shared arrays are kept). */
export function shareContext(ctx: AgeContext): AgeContext {
  return {
    ...ctx,
    surface: shared(ctx.surface),
    nodata: shared(ctx.nodata),
    spillM: shared(ctx.spillM),
    basinLabel: shared(ctx.basinLabel),
    boundaryMask: shared(ctx.boundaryMask),
    palaeochannels: ctx.palaeochannels ? shared(ctx.palaeochannels) : null,
    tidalRangeM: typeof ctx.tidalRangeM === "number" ? ctx.tidalRangeM : shared(ctx.tidalRangeM),
    seaLevel: sharedSeaLevel(ctx.seaLevel),
  };
}

type FromWorker =
  | { type: "ready" }
  | { type: "progress"; ageKa: number | null; fraction: number; step: string }
  | { type: "layer"; layer: LayerOut }
  | { type: "done"; ageKa: number | null; summary: AgeSummary | StaticSummary }
  | { type: "error"; name: string; message: string; stack?: string };

type ToWorker = { type: "job"; ageKa: number | null; ctx: AgeContext } | { type: "ack" } | { type: "exit" };

/** Threads started ahead of the jobs (warmUp), with what they said before the pool took them over. */
interface Pool {
  workers: Worker[];
  cancelFlag: Int32Array;
  ready: Set<Worker>;
  early: Map<Worker, { message: (m: FromWorker) => void; error: (e: Error) => void; exit: (code: number) => void }>;
  earlyError: Error | null;
}

function startWorkers(threads: number): Pool {
  const runTs = fileURLToPath(new URL("../../scripts/run-ts.mjs", import.meta.url));
  const entry = fileURLToPath(import.meta.url);
  const cancelFlag = new Int32Array(new SharedArrayBuffer(4));
  const pool: Pool = { workers: [], cancelFlag, ready: new Set(), early: new Map(), earlyError: null };
  for (let k = 0; k < threads; k++) {
    const w = new Worker(runTs, { workerData: { entry, role: ROLE, cancelFlag } });
    const h = {
      message: (m: FromWorker) => {
        if (m.type === "ready") pool.ready.add(w);
      },
      error: (e: Error) => {
        pool.earlyError ??= e;
      },
      exit: (code: number) => {
        pool.earlyError ??= new Error(`reconstruction worker stopped with exit code ${code}`);
      },
    };
    w.on("message", h.message);
    w.on("error", h.error);
    w.on("exit", h.exit);
    pool.workers.push(w);
    pool.early.set(w, h);
  }
  return pool;
}

/**
 * An AgeRunner that runs the age-independent layers and the ages as jobs on `threads` worker
 * threads (default: the number of cores, at most the number of jobs). Its `warmUp` starts the
 * threads while reconstruct() still builds the analysis surface and the spill elevation (loading a
 * worker takes about half a second); `dispose` stops them if the ages are never handed over.
 */
export function workerAgeRunner(options: { threads?: number } = {}): AgeRunner {
  let pool: Pool | null = null;
  const threadsFor = (jobs: number) => Math.max(1, Math.min(options.threads ?? availableParallelism(), jobs));
  // the context is copied onto shared memory here, outside the pool's closures, so the caller's
  // original arrays can be collected while the ages run
  const runner: AgeRunner = (ctx, agesKa, emit, control) => {
    const p = pool ?? startWorkers(threadsFor(agesKa.length + 1));
    pool = null;
    return runPool(p, shareContext(ctx), agesKa, emit, control);
  };
  runner.warmUp = (jobs) => {
    pool ??= startWorkers(threadsFor(jobs));
  };
  runner.dispose = () => {
    if (pool) for (const w of pool.workers) void w.terminate();
    pool = null;
  };
  return runner;
}

function runPool(
  pool: Pool,
  sctx: AgeContext,
  agesKa: readonly number[],
  emit: Parameters<AgeRunner>[2],
  control: Parameters<AgeRunner>[3],
): ReturnType<AgeRunner> {
  return new Promise((resolve, reject) => {
    const jobs: (number | null)[] = [null, ...agesKa];
    const { workers, cancelFlag } = pool;
    const inFlight = new Map<Worker, { ageKa: number | null; fraction: number }>();
    const ages: AgeSummary[] = [];
    let staticSummary: StaticSummary | null = null;
    let next = 0;
    let finished = 0;
    let failed = false;
    const report = (step: string) => {
      let f = finished;
      for (const j of inFlight.values()) f += j.fraction;
      control.onProgress?.(f / jobs.length, step);
    };
    const fail = (err: Error) => {
      if (failed) return;
      failed = true;
      clearInterval(poll);
      Atomics.store(cancelFlag, 0, 1);
      for (const w of workers) void w.terminate();
      reject(err);
    };
    const poll = setInterval(() => {
      if (control.shouldCancel?.()) {
        Atomics.store(cancelFlag, 0, 1);
        fail(new TerrainCancelled("reconstruction cancelled"));
      }
    }, 100);
    const give = (w: Worker) => {
      if (next < jobs.length) {
        const ageKa = jobs[next++];
        inFlight.set(w, { ageKa, fraction: 0 });
        w.postMessage({ type: "job", ageKa, ctx: sctx } satisfies ToWorker);
      } else {
        inFlight.delete(w);
        w.postMessage({ type: "exit" } satisfies ToWorker);
      }
    };
    // the sink is called for one layer at a time, in arrival order
    let sinkChain: Promise<void> = Promise.resolve();
    for (const w of workers) {
      const early = pool.early.get(w);
      if (early) {
        w.off("message", early.message);
        w.off("error", early.error);
        w.off("exit", early.exit);
      }
      w.on("message", (m: FromWorker) => {
        if (failed) return;
        if (m.type === "ready") give(w);
        else if (m.type === "progress") {
          if (control.shouldCancel?.()) {
            fail(new TerrainCancelled("reconstruction cancelled"));
            return;
          }
          const j = inFlight.get(w);
          if (j) j.fraction = m.fraction;
          control.onAgeProgress?.(m.ageKa, m.fraction, m.step);
          report(m.step);
        } else if (m.type === "layer") {
          sinkChain = sinkChain
            .then(() => emit(m.layer))
            .then(
              () => {
                if (!failed) w.postMessage({ type: "ack" } satisfies ToWorker);
              },
              (e: Error) => fail(e),
            );
        } else if (m.type === "done") {
          if (m.ageKa === null) staticSummary = m.summary as StaticSummary;
          else ages.push(m.summary as AgeSummary);
          finished++;
          inFlight.delete(w);
          report(m.ageKa === null ? "age-independent layers done" : `age ${m.ageKa} ka done`);
          if (finished === jobs.length) {
            clearInterval(poll);
            sinkChain.then(() => {
              for (const x of workers) x.postMessage({ type: "exit" } satisfies ToWorker);
              resolve({ ages, static: staticSummary! });
            }, fail);
          } else give(w);
        } else if (m.type === "error") {
          const E = m.name === "TerrainInputError" ? TerrainInputError : m.name === "TerrainCancelled" ? TerrainCancelled : Error;
          const err = new E(m.message);
          if (m.stack && E === Error) err.stack = m.stack;
          fail(err);
        }
      });
      w.on("error", (e) => fail(e));
      w.on("exit", (code) => {
        if (code !== 0 && !failed && finished < jobs.length) fail(new Error(`reconstruction worker stopped with exit code ${code}`));
      });
    }
    if (pool.earlyError) {
      fail(pool.earlyError);
      return;
    }
    // threads started by warmUp that have loaded already take their first job now; the others
    // will say "ready" to the listener above
    for (const w of workers) if (pool.ready.has(w)) give(w);
  });
}

// ---- worker side ---------------------------------------------------------------------------------

function transferList(l: LayerOut): ArrayBuffer[] {
  const b = l.data.buffer;
  return b instanceof ArrayBuffer && l.data.byteOffset === 0 && l.data.byteLength === b.byteLength ? [b] : [];
}

if (!isMainThread && workerData?.role === ROLE && parentPort) {
  const port = parentPort;
  const cancel = workerData.cancelFlag as Int32Array;
  let ack: (() => void) | null = null;
  const shouldCancel = () => Atomics.load(cancel, 0) === 1;
  const emit = (layer: LayerOut) =>
    new Promise<void>((res) => {
      ack = res;
      port.postMessage({ type: "layer", layer } satisfies FromWorker, transferList(layer));
    });
  port.on("message", (m: ToWorker) => {
    if (m.type === "ack") {
      const a = ack;
      ack = null;
      a?.();
    } else if (m.type === "exit") {
      port.close();
    } else if (m.type === "job") {
      const ageKa = m.ageKa;
      const control = {
        shouldCancel,
        onProgress: (fraction: number, step?: string) =>
          port.postMessage({ type: "progress", ageKa, fraction, step: step ?? "" } satisfies FromWorker),
      };
      const ctx = m.ctx;
      const run = ageKa === null ? reconstructStatic(ctx, emit, control) : reconstructAge(ctx, ageKa, emit, control);
      run.then(
        (summary) => port.postMessage({ type: "done", ageKa, summary } satisfies FromWorker),
        (e: Error) => port.postMessage({ type: "error", name: e?.name ?? "Error", message: e?.message ?? String(e), stack: e?.stack } satisfies FromWorker),
      );
    }
  });
  port.postMessage({ type: "ready" } satisfies FromWorker);
}
