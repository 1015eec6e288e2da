// A factor's curve over the factor's own distribution: the histogram of its values on the cells that
// could be occupied at the current age (from the display layer), the curve on top, and its named
// control points as handles to drag — or to type, for the keyboard. Points are kept in order while
// dragging; typed values out of order are refused with the curve's own message.
import { useEffect, useMemo, useRef, useState } from "react";
import { controlPointNames, evaluateCurve, validateCurve, type FactorCurve } from "~/scoring/factor-curves";
import { ScoringInputError } from "~/scoring/errors";

export interface FactorHistogram {
  edges: number[];
  counts: number[];
}

/** Words for the control points on screen (the names in code stay the curve module's). */
export const POINT_WORDS: Record<string, string> = {
  zeroUntil: "0 until",
  fullAt: "full at",
  fullUntil: "full until",
  zeroAt: "0 at",
  halfAt: "half at",
  preferredDeg: "preferred (°)",
  widthDeg: "reach either side (°)",
  flatValue: "score on flats",
};

export type CurveShape = "linear-increasing" | "linear-decreasing" | "sigmoid-increasing" | "sigmoid-decreasing" | "j-shaped-increasing" | "j-shaped-decreasing" | "band" | "aspect";

export const SHAPE_WORDS: Record<CurveShape, string> = {
  "linear-increasing": "rising, straight",
  "linear-decreasing": "falling, straight",
  "sigmoid-increasing": "rising, S-shaped",
  "sigmoid-decreasing": "falling, S-shaped",
  "j-shaped-increasing": "rising, J-shaped (never 0)",
  "j-shaped-decreasing": "falling, J-shaped (never 0)",
  band: "band (rise, plateau, fall)",
  aspect: "facing a direction",
};

export function shapeOf(c: FactorCurve): CurveShape {
  if (c.kind === "band" || c.kind === "aspect") return c.kind;
  return `${c.kind}-${c.direction}` as CurveShape;
}

/** A new curve of another shape, its points spread over [lo, hi] (the factor's value range). */
export function reshape(shape: CurveShape, lo: number, hi: number): FactorCurve {
  const at = (f: number) => Number((lo + (hi - lo) * f).toPrecision(4));
  switch (shape) {
    case "linear-increasing": return { kind: "linear", direction: "increasing", zeroUntil: at(0.2), fullAt: at(0.6) };
    case "linear-decreasing": return { kind: "linear", direction: "decreasing", fullUntil: at(0.1), zeroAt: at(0.6) };
    case "sigmoid-increasing": return { kind: "sigmoid", direction: "increasing", zeroUntil: at(0.2), fullAt: at(0.6) };
    case "sigmoid-decreasing": return { kind: "sigmoid", direction: "decreasing", fullUntil: at(0.1), zeroAt: at(0.6) };
    case "j-shaped-increasing": return { kind: "j-shaped", direction: "increasing", halfAt: at(0.3), fullAt: at(0.6) };
    case "j-shaped-decreasing": return { kind: "j-shaped", direction: "decreasing", fullUntil: at(0.1), halfAt: at(0.4) };
    case "band": return { kind: "band", shape: "linear", zeroUntil: at(0.1), fullAt: at(0.3), fullUntil: at(0.6), zeroAt: at(0.8) };
    case "aspect": return { kind: "aspect", preferredDeg: 0, widthDeg: 135, flatValue: 0.7 };
  }
}

function checkCurve(c: FactorCurve): string | null {
  try {
    validateCurve(c);
    return null;
  } catch (e) {
    if (e instanceof ScoringInputError) return e.message;
    throw e;
  }
}

const fmt = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(0) : Math.abs(v) >= 1 ? v.toFixed(1) : v.toFixed(2));

export function CurveEditor({ curve, onChange, histogram, units, label, editable }: { curve: FactorCurve; onChange: (c: FactorCurve) => void; histogram: FactorHistogram | null; units: string; label: string; editable: boolean }) {
  const names = controlPointNames(curve);
  const isAspect = curve.kind === "aspect";
  const domain = useMemo<[number, number]>(() => {
    if (isAspect) return [0, 360];
    const pts = names.map((n) => (curve as unknown as Record<string, number>)[n]);
    let lo = Math.min(...pts);
    let hi = Math.max(...pts);
    if (histogram && histogram.edges.length > 1) {
      lo = Math.min(lo, histogram.edges[0]);
      hi = Math.max(hi, histogram.edges[histogram.edges.length - 1]);
    }
    const pad = (hi - lo || 1) * 0.05;
    return [lo - pad, hi + pad];
  }, [curve, histogram, isAspect]);
  const ref = useRef<HTMLDivElement>(null);
  const scaleRef = useRef<{ invert: (px: number) => number; apply: (v: number) => number } | null>(null);
  const [typed, setTyped] = useState<Record<string, string>>({});
  const [problem, setProblem] = useState<string | null>(null);
  const dragging = useRef<string | null>(null);

  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const [lo, hi] = domain;
      const line: { x: number; y: number }[] = [];
      for (let k = 0; k <= 160; k++) {
        const x = lo + ((hi - lo) * k) / 160;
        line.push({ x, y: evaluateCurve(curve, x) });
      }
      const maxCount = histogram ? Math.max(1, ...histogram.counts) : 1;
      const bins = histogram ? histogram.counts.map((c, i) => ({ x1: histogram.edges[i], x2: histogram.edges[i + 1], y: c / maxCount })) : [];
      const handles = isAspect
        ? [{ name: "preferredDeg", x: (((curve.preferredDeg % 360) + 360) % 360), y: 1 }]
        : names.map((n) => ({ name: n, x: (curve as unknown as Record<string, number>)[n], y: evaluateCurve(curve, (curve as unknown as Record<string, number>)[n]) }));
      const chart = Plot.plot({
        width: 380,
        height: 150,
        marginLeft: 34,
        marginBottom: 30,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "10px", background: "transparent" },
        x: { domain, label: `${label} (${units})` },
        y: { domain: [0, 1.05], label: "score", ticks: [0, 0.5, 1] },
        marks: [
          Plot.rectY(bins, { x1: "x1", x2: "x2", y: "y", fill: "var(--color-sand-300)", insetLeft: 0.3 }),
          Plot.line(line, { x: "x", y: "y", stroke: "var(--color-deep-700)", strokeWidth: 2 }),
          Plot.dot(handles, { x: "x", y: "y", r: 6, fill: "var(--color-ember-500)", stroke: "white", strokeWidth: 1.5 }),
          Plot.text(handles, { x: "x", y: "y", text: (d: { name: string }) => POINT_WORDS[d.name] ?? d.name, dy: -11, fontSize: 9, fill: "var(--color-sediment-700)" }),
          Plot.ruleY([0]),
        ],
      });
      scaleRef.current = chart.scale("x") as unknown as { invert: (px: number) => number; apply: (v: number) => number };
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [curve, histogram, domain, label, units]);

  const pointValues = names.map((n) => (curve as unknown as Record<string, number>)[n]);

  /** Move one point to v, keeping the order of the points (strictly increasing; a band's plateau may be 0 wide). */
  const moveTo = (name: string, v: number) => {
    const next = { ...curve } as unknown as Record<string, number>;
    if (isAspect) {
      next[name] = Math.round(((v % 360) + 360) % 360);
    } else {
      const i = names.indexOf(name);
      const span = (domain[1] - domain[0]) / 500;
      const prev = i > 0 ? next[names[i - 1]] : -Infinity;
      const after = i < names.length - 1 ? next[names[i + 1]] : Infinity;
      const lo = prev + (curve.kind === "band" && name === "fullUntil" ? 0 : span);
      const hi = after - (curve.kind === "band" && name === "fullAt" ? 0 : span);
      next[name] = Number(Math.min(hi, Math.max(lo, v)).toPrecision(4));
    }
    const c = next as unknown as FactorCurve;
    if (!checkCurve(c)) onChange(c);
  };

  const pxOf = (e: React.PointerEvent) => {
    const svg = ref.current?.querySelector("svg");
    if (!svg) return null;
    const box = svg.getBoundingClientRect();
    return e.clientX - box.left;
  };
  const onPointerDown = (e: React.PointerEvent) => {
    if (!editable || !scaleRef.current) return;
    const px = pxOf(e);
    if (px === null) return;
    const candidates = isAspect ? ["preferredDeg"] : names;
    let best: string | null = null;
    let bestD = 14;
    for (const n of candidates) {
      const d = Math.abs(scaleRef.current.apply((curve as unknown as Record<string, number>)[n]) - px);
      if (d < bestD) {
        bestD = d;
        best = n;
      }
    }
    if (!best) return;
    dragging.current = best;
    (e.currentTarget as HTMLElement).setPointerCapture(e.pointerId);
    e.preventDefault();
  };
  const onPointerMove = (e: React.PointerEvent) => {
    if (!dragging.current || !scaleRef.current) return;
    const px = pxOf(e);
    if (px === null) return;
    moveTo(dragging.current, scaleRef.current.invert(px));
  };
  const onPointerUp = () => {
    dragging.current = null;
  };

  return (
    <div className="mt-2" data-testid="curve-editor">
      <div
        ref={ref}
        aria-hidden="true"
        className={`min-h-[150px] ${editable ? "cursor-ew-resize touch-none" : ""}`}
        onPointerDown={onPointerDown}
        onPointerMove={onPointerMove}
        onPointerUp={onPointerUp}
        onPointerCancel={onPointerUp}
      />
      <p className="text-[11px] text-sediment-600">
        {histogram ? "Bars: how the factor's values are spread over the land and intertidal cells at this age." : "The factor's distribution appears once its layer has loaded."}
        {editable ? " Drag an orange handle, or type the points:" : ""}
      </p>
      <div className="mt-1 flex flex-wrap gap-2">
        {names.map((n, i) => (
          <label key={n} className="flex items-center gap-1 text-xs">
            <span className="text-sediment-700">{POINT_WORDS[n] ?? n}</span>
            <input
              type="number"
              step="any"
              disabled={!editable}
              aria-label={`${label}: ${POINT_WORDS[n] ?? n}`}
              className="w-20 rounded-sm border border-sand-300 bg-white px-1 py-0.5 tabular-nums disabled:bg-sand-100"
              value={typed[n] ?? fmt(pointValues[i])}
              onChange={(e) => setTyped((t) => ({ ...t, [n]: e.target.value }))}
              onBlur={(e) => {
                const v = Number(e.target.value);
                setTyped((t) => {
                  const { [n]: _, ...rest } = t;
                  return rest;
                });
                if (e.target.value.trim() === "" || !Number.isFinite(v)) {
                  setProblem(`"${POINT_WORDS[n] ?? n}" must be a number.`);
                  return;
                }
                const c = { ...curve, [n]: v } as FactorCurve;
                const msg = checkCurve(c);
                setProblem(msg);
                if (!msg) onChange(c);
              }}
              onKeyDown={(e) => {
                if (e.key === "Enter") (e.target as HTMLInputElement).blur();
              }}
            />
          </label>
        ))}
      </div>
      {problem ? (
        <p role="alert" className="mt-1 text-xs text-caution-800">
          {problem} The curve was not changed.
        </p>
      ) : null}
    </div>
  );
}

/** A histogram of a display layer's values over the cells where `mask` is set (40 bins, min–max). */
export function displayHistogram(codes: Uint8Array, scale: number, offset: number, nodataCode: number, mask: Uint8Array | null, bins = 40): FactorHistogram | null {
  const perCode = new Float64Array(256);
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i];
    if (c === nodataCode) continue;
    if (mask && mask[i] === 0) continue;
    perCode[c]++;
  }
  let lo = -1;
  let hi = -1;
  for (let c = 0; c < 256; c++)
    if (perCode[c] > 0 && c !== nodataCode) {
      if (lo < 0) lo = c;
      hi = c;
    }
  if (lo < 0) return null;
  const vLo = lo * scale + offset;
  const vHi = hi * scale + offset;
  const width = (vHi - vLo) / bins || 1;
  const counts = new Array<number>(bins).fill(0);
  for (let c = lo; c <= hi; c++) {
    if (!perCode[c]) continue;
    const v = c * scale + offset;
    counts[Math.min(bins - 1, Math.floor((v - vLo) / width))] += perCode[c];
  }
  const edges = Array.from({ length: bins + 1 }, (_, k) => vLo + k * width);
  return { edges, counts };
}
