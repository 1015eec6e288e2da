// The disagreement between several proposals (a weighing session): every proposal scored on the
// display grid by the scoring worker — the same code as the weighing page and the scoring job — and
// the per-cell spread of their potentials and the top-N overlap of each pair returned as one message.
import { useQueries } from "@tanstack/react-query";
import { useEffect, useMemo, useRef, useState } from "react";
import { rasterQuery } from "~/components/map/queries";
import type { DisplayRaster } from "~/components/map/raster";
import type { MapData } from "~/components/map/types";
import type { WeightSetContent } from "~/scoring/weight-set";
import type { EvidencePoint, ScoreTarget } from "~/scoring/scoring-inputs";
import { layersNeeded, sendNewLayers } from "./useLiveScoring";
import type { DisagreedMessage, FromWorker, ToWorker } from "./protocol";

type Reconstruction = NonNullable<MapData["reconstruction"]>;

export function useDisagreement(opts: { reconstruction: Reconstruction; contents: WeightSetContent[]; target: ScoreTarget; evidence: EvidencePoint[]; topN: number }) {
  const { reconstruction: r, contents, target, evidence, topN } = opts;
  const needed = useMemo(() => (contents.length ? layersNeeded(r, contents, target) : []), [r, contents, target]);
  const results = useQueries({ queries: needed.map((n) => rasterQuery(r.id, n.layer, n.ageKa)) });
  const loading = results.filter((q) => !q.data && !q.isError).length;
  const layerError = results.find((q) => q.isError)?.error?.message ?? null;
  const worker = useRef<Worker | null>(null);
  const sent = useRef(new Map<string, DisplayRaster>());
  const latest = useRef(0);
  const [result, setResult] = useState<DisagreedMessage | null>(null);
  const [error, setError] = useState<string | null>(null);

  useEffect(() => {
    const w = new Worker(new URL("./potential.worker.ts", import.meta.url), { type: "module" });
    worker.current = w;
    w.onmessage = (ev: MessageEvent<FromWorker>) => {
      const m = ev.data;
      if (m.id !== latest.current) return; // an older request: a newer one is on its way
      if (m.type === "disagreed") {
        setResult(m);
        setError(null);
      } else if (m.type === "error") setError(m.message);
    };
    w.onerror = (e) => setError(`The scoring worker stopped: ${e.message || "unknown error"}.`);
    return () => {
      w.terminate();
      worker.current = null;
    };
  }, []);

  const loadedTag = results.map((q) => (q.data ? 1 : 0)).join("");
  useEffect(() => {
    if (worker.current) sendNewLayers(worker.current, needed, results.map((q) => q.data), sent.current);
  }, [loadedTag, needed]);

  useEffect(() => {
    const w = worker.current;
    if (!w || loading > 0 || layerError || contents.length < 2) return;
    const id = ++latest.current;
    w.postMessage({ type: "disagree", id, grid: r.displayGrid, agesKa: r.agesKa, contents, target, evidence, topN } satisfies ToWorker);
  }, [contents, target, evidence, topN, loading, layerError, loadedTag]);

  return { result, error: error ?? layerError, loading };
}
