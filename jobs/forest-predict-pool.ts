/**
 * Predicts a forest's probability raster across worker threads (Node only; issue 10: "in chunks in
 * worker threads"). The factor layers and the output are on SharedArrayBuffers seen by every
 * worker; the main thread hands out chunks of cells (start … end), each worker writes its chunk's
 * probabilities straight into the shared output with `predictCells` — the same function, so the
 * result equals the single-thread `predictRaster` cell for cell. The compiled forest (a few typed
 * arrays) is copied to each worker once. Memory: the output raster once more (the shared one is
 * copied into an ordinary Float32Array at the end), plus the layers if they were not shared yet.
 *
 * Node 20 cannot start a .ts file as a worker, so the worker starts scripts/run-ts.mjs (which
 * registers tsx) with this file as its entry, as app/terrain/reconstruct-worker.ts does.
 */
import { Worker, isMainThread, parentPort, workerData } from "node:worker_threads";
import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { checkForestLayers, DEFAULT_FOREST_SETTINGS, PredictionCancelled, predictCells, type CompiledForest } from "../app/scoring/forest.ts";

const ROLE = "lowstand-forest-predict-worker";

export { PredictionCancelled };

type ToWorker = { type: "chunk"; start: number; end: number } | { type: "exit" };
type FromWorker = { type: "ready" } | { type: "done"; start: number; end: number } | { type: "error"; message: string; stack?: string };

function shared(a: Float32Array): Float32Array {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const copy = new Float32Array(new SharedArrayBuffer(a.byteLength));
  copy.set(a);
  return copy;
}

/**
 * Breiman, L. (2001) "Random forests", Machine Learning 45(1), 5–32 (the forest's vote); the
 * chunked thread pool is common practice, no source.
 *
 * The probability raster of `forest` over `layers` (the factor layers in the forest's order), on
 * `threads` worker threads (default: the number of cores, at most the number of chunks), `chunkCells`
 * cells per chunk. `onProgress` gets the share of cells done; `shouldCancel`, polled after each chunk,
 * stops the threads and rejects with {@link PredictionCancelled}.
 * Preconditions: as predictRaster (ScoringInputError for layers that do not fit the forest).
 * Complexity O(n·T·depth / threads) plus about half a second to start the threads.
 */
export function predictRasterInPool(
  forest: CompiledForest,
  layers: readonly Float32Array[],
  options: { threads?: number; chunkCells?: number; onProgress?: (fraction: number) => void; shouldCancel?: () => boolean } = {},
): Promise<Float32Array> {
  const n = checkForestLayers(forest, layers);
  const chunk = options.chunkCells ?? DEFAULT_FOREST_SETTINGS.chunkCells;
  const chunks = Math.ceil(n / chunk);
  if (n === 0) return Promise.resolve(new Float32Array(0));
  const threads = Math.max(1, Math.min(options.threads ?? availableParallelism(), chunks));
  const sharedLayers = layers.map(shared);
  const out = new Float32Array(new SharedArrayBuffer(n * 4));
  const runTs = fileURLToPath(new URL("../scripts/run-ts.mjs", import.meta.url));
  const entry = fileURLToPath(import.meta.url);
  return new Promise((resolve, reject) => {
    const workers: Worker[] = [];
    let next = 0;
    let doneCells = 0;
    let doneChunks = 0;
    let settled = false;
    const stop = () => {
      for (const w of workers) void w.terminate();
    };
    const fail = (e: Error) => {
      if (settled) return;
      settled = true;
      stop();
      reject(e);
    };
    const give = (w: Worker) => {
      if (next < chunks) {
        const start = next * chunk;
        next++;
        w.postMessage({ type: "chunk", start, end: Math.min(n, start + chunk) } satisfies ToWorker);
      } else w.postMessage({ type: "exit" } satisfies ToWorker);
    };
    for (let k = 0; k < threads; k++) {
      const w = new Worker(runTs, { workerData: { entry, role: ROLE, forest, layers: sharedLayers, out } });
      workers.push(w);
      w.on("message", (m: FromWorker) => {
        if (settled) return;
        if (m.type === "ready") give(w);
        else if (m.type === "done") {
          doneCells += m.end - m.start;
          doneChunks++;
          options.onProgress?.(doneCells / n);
          if (options.shouldCancel?.()) return fail(new PredictionCancelled());
          if (doneChunks === chunks) {
            settled = true;
            for (const x of workers) x.postMessage({ type: "exit" } satisfies ToWorker);
            resolve(Float32Array.from(out));
          } else give(w);
        } else if (m.type === "error") {
          const e = new Error(m.message);
          if (m.stack) e.stack = m.stack;
          fail(e);
        }
      });
      w.on("error", (e) => fail(e));
      w.on("exit", (code) => {
        if (!settled && code !== 0) fail(new Error(`forest prediction worker stopped with exit code ${code}`));
      });
    }
  });
}

// ---- worker side ---------------------------------------------------------------------------------

if (!isMainThread && workerData?.role === ROLE && parentPort) {
  const port = parentPort;
  const forest = workerData.forest as CompiledForest;
  const layers = workerData.layers as Float32Array[];
  const out = workerData.out as Float32Array;
  port.on("message", (m: ToWorker) => {
    if (m.type === "exit") {
      port.close();
      return;
    }
    try {
      predictCells(forest, layers, m.start, m.end, out);
      port.postMessage({ type: "done", start: m.start, end: m.end } satisfies FromWorker);
    } catch (e) {
      const err = e as Error;
      port.postMessage({ type: "error", message: err?.message ?? String(e), stack: err?.stack } satisfies FromWorker);
    }
  });
  port.postMessage({ type: "ready" } satisfies FromWorker);
}
