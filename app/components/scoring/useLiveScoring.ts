// Live scoring on the weighing page: fetch the display layers a weight set needs (TanStack Query,
// shared with the map), hand each to the scoring worker once, and ask for a new picture whenever the
// weights, curves, target or comparison change. Requests are coalesced: while the worker is busy
// only the newest request waits, so dragging a slider never queues stale work.
import { useQueries } from "@tanstack/react-query";
import { useCallback, useEffect, useMemo, useRef, useState } from "react";
import { rasterQuery } from "~/components/map/queries";
import type { DisplayRaster } from "~/components/map/raster";
import type { MapData } from "~/components/map/types";
import { factorDef, type FactorId } from "~/scoring/factors";
import type { WeightSetContent } from "~/scoring/weight-set";
import { scoredAges, type EvidencePoint, type ScoreTarget } from "~/scoring/scoring-inputs";
import { layerKey, type FromWorker, type ScoredMessage, type ToWorker, type WorkerGrid } from "./protocol";

type Reconstruction = NonNullable<MapData["reconstruction"]>;

export const PRESERVATION_LAYERS = ["tpi", "rise_rate_at_flooding", "flooding_age", "flooding_status", "unassessed"] as const;

/** Every (layer, age) a score of `contents` at `target` reads, limited to what the reconstruction holds. */
export function layersNeeded(r: Reconstruction, contents: WeightSetContent[], target: ScoreTarget): Array<{ layer: string; ageKa: number | null }> {
  const have = new Set(r.layers.map((l) => `${l.name}@${l.ageKa === null ? "static" : l.ageKa}`));
  const ages = target.kind === "age" ? [target.ageKa] : r.agesKa;
  let scored: number[] = ages;
  try {
    scored = scoredAges(target, r.agesKa);
  } catch {
    // a period outside the ages: the worker reports it
  }
  const out = new Map<string, { layer: string; ageKa: number | null }>();
  const add = (layer: string, ageKa: number | null) => {
    const k = layerKey(layer, ageKa);
    if (have.has(k)) out.set(k, { layer, ageKa });
  };
  for (const a of ages) add("land_class", a);
  for (const c of contents) {
    for (const f of c.factors) {
      if (!(f.weight > 0)) continue;
      const def = factorDef(f.factor);
      if (!def || f.factor === "shelter") continue;
      for (const a of scored) add(def.layer, def.perAge ? a : null);
    }
    if (c.preservation.enabled) {
      for (const l of PRESERVATION_LAYERS) add(l, null);
      for (const a of r.agesKa) add("land_class", a);
    }
  }
  return [...out.values()];
}

/** Post to the worker every loaded layer it does not hold yet (once per array and key). */
export function sendNewLayers(w: Worker, needed: Array<{ layer: string; ageKa: number | null }>, data: Array<DisplayRaster | undefined>, sent: Map<string, DisplayRaster>) {
  const batch: Extract<ToWorker, { type: "layers" }>["layers"] = [];
  needed.forEach((n, i) => {
    const d = data[i];
    if (!d) return;
    const key = layerKey(n.layer, n.ageKa);
    if (sent.get(key) === d) return;
    sent.set(key, d);
    batch.push({ key, raster: { width: d.width, height: d.height, scale: d.scale, offset: d.offset, nodataCode: d.nodataCode, codes: d.codes } });
  });
  if (batch.length) w.postMessage({ type: "layers", layers: batch } satisfies ToWorker);
}

export type Correlations = Extract<FromWorker, { type: "correlated" }>;

export interface LiveScore {
  result: ScoredMessage | null;
  /** the correlation table of the weighted factors at an age, from the layers the worker holds */
  correlate: (ageKa: number, factors: FactorId[], shelterRadiusM: number) => Promise<Correlations>;
  error: string | null;
  /** layers still loading */
  loading: number;
  busy: boolean;
}

export function useLiveScoring(opts: {
  reconstruction: Reconstruction;
  content: WeightSetContent | null;
  target: ScoreTarget;
  evidence: EvidencePoint[];
  compare: { content: WeightSetContent; topN: number } | null;
}): LiveScore {
  const { reconstruction: r, content, target, evidence, compare } = opts;
  // the display copies' grid (the layer API reduces a large reconstruction to it)
  const grid: WorkerGrid = r.displayGrid;
  const needed = useMemo(() => (content ? layersNeeded(r, compare ? [content, compare.content] : [content], target) : []), [r, content, compare, target]);
  const results = useQueries({ queries: needed.map((n) => rasterQuery(r.id, n.layer, n.ageKa)) });
  const loading = results.filter((q) => !q.data && !q.isError).length;
  const layerError = results.find((q) => q.isError)?.error?.message ?? null;

  const worker = useRef<Worker | null>(null);
  const sentKeys = useRef(new Map<string, DisplayRaster>());
  const nextId = useRef(1);
  const inFlight = useRef<number | null>(null);
  const pending = useRef<ToWorker | null>(null);
  const [result, setResult] = useState<ScoredMessage | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const waiting = useRef(new Map<number, { resolve: (c: Correlations) => void; reject: (e: Error) => void }>());

  useEffect(() => {
    const w = new Worker(new URL("./potential.worker.ts", import.meta.url), { type: "module" });
    worker.current = w;
    w.onmessage = (ev: MessageEvent<FromWorker>) => {
      const m = ev.data;
      const waiter = waiting.current.get(m.id);
      if (waiter) {
        waiting.current.delete(m.id);
        if (m.type === "correlated") waiter.resolve(m);
        else if (m.type === "error") waiter.reject(new Error(m.message));
        return;
      }
      if (m.type === "scored") {
        if (m.id === inFlight.current) {
          setResult(m);
          setError(null);
        }
      } else if (m.type === "error") {
        if (m.id === inFlight.current) setError(m.message);
      }
      if (m.type !== "correlated") {
        inFlight.current = null;
        const p = pending.current;
        pending.current = null;
        if (p && p.type === "score") {
          inFlight.current = p.id;
          w.postMessage(p);
        } else setBusy(false);
      }
    };
    w.onerror = (e) => setError(`The scoring worker stopped: ${e.message || "unknown error"}.`);
    return () => {
      w.terminate();
      worker.current = null;
    };
  }, []);

  // Send every loaded layer the worker does not hold yet (once per array).
  const allLoaded = loading === 0 && !layerError;
  const loadedTag = results.map((q) => (q.data ? 1 : 0)).join("");
  useEffect(() => {
    if (worker.current) sendNewLayers(worker.current, needed, results.map((q) => q.data), sentKeys.current);
  }, [loadedTag, needed]);

  // Ask for a new picture on every change, once the layers are there.
  useEffect(() => {
    const w = worker.current;
    if (!w || !content || !allLoaded) return;
    const msg: ToWorker = { type: "score", id: nextId.current++, grid, agesKa: r.agesKa, content, target, evidence, compare };
    if (inFlight.current !== null) {
      pending.current = msg;
      return;
    }
    inFlight.current = msg.id;
    setBusy(true);
    w.postMessage(msg);
  }, [content, target, compare, evidence, allLoaded, loadedTag]);

  const correlate = useCallback(
    (ageKa: number, factors: FactorId[], shelterRadiusM: number) =>
      new Promise<Correlations>((resolve, reject) => {
        const w = worker.current;
        if (!w) return reject(new Error("The scoring worker is not running."));
        const id = nextId.current++;
        waiting.current.set(id, { resolve, reject });
        w.postMessage({ type: "correlate", id, grid, ageKa, factors, shelterRadiusM } satisfies ToWorker);
      }),
    [grid],
  );

  return { result, correlate, error: error ?? layerError, loading, busy };
}
