// The sea-level curve(s) with their ±σ band and index points with their age and height
// uncertainties, drawn with Observable Plot in the browser. Age runs left (oldest) to right.
import { useEffect, useRef } from "react";

export interface ChartCurve {
  name: string;
  points: Array<{ ageKa: number; rslM: number; sigmaM: number | null }>;
}
export interface ChartIndexPoint {
  ageKa: number;
  ageSigmaKa: number;
  heightM: number;
  heightSigmaM: number;
  kind: string | null;
}

export function SeaLevelChart({ curves, indexPoints }: { curves: ChartCurve[]; indexPoints: ChartIndexPoint[] }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const lines = curves.flatMap((c) => c.points.map((p) => ({ ...p, curve: c.name, lo: p.rslM - (p.sigmaM ?? 0), hi: p.rslM + (p.sigmaM ?? 0) })));
      const chart = Plot.plot({
        width: 760,
        height: 300,
        marginLeft: 50,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" },
        x: { label: "age (ka BP)", reverse: true },
        y: { label: "sea level relative to present (m)", grid: true },
        color: { legend: curves.length > 1, scheme: "tableau10" },
        marks: [
          Plot.areaY(lines, { x: "ageKa", y1: "lo", y2: "hi", z: "curve", fill: "curve", fillOpacity: 0.15 }),
          Plot.line(lines, { x: "ageKa", y: "rslM", z: "curve", stroke: "curve", strokeWidth: 1.5 }),
          Plot.link(indexPoints, { x1: (d: ChartIndexPoint) => d.ageKa - d.ageSigmaKa, x2: (d: ChartIndexPoint) => d.ageKa + d.ageSigmaKa, y1: "heightM", y2: "heightM", stroke: "var(--color-ember-700)" }),
          Plot.link(indexPoints, { x1: "ageKa", x2: "ageKa", y1: (d: ChartIndexPoint) => d.heightM - d.heightSigmaM, y2: (d: ChartIndexPoint) => d.heightM + d.heightSigmaM, stroke: "var(--color-ember-700)" }),
          Plot.dot(indexPoints, { x: "ageKa", y: "heightM", symbol: "kind", fill: "var(--color-ember-500)", r: 3, title: (d: ChartIndexPoint) => `${d.ageKa} ± ${d.ageSigmaKa} ka, ${d.heightM} ± ${d.heightSigmaM} m${d.kind ? ` (${d.kind})` : ""}` }),
          Plot.ruleY([0], { stroke: "var(--color-sediment-400)" }),
        ],
      });
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [curves, indexPoints]);
  return <div ref={ref} aria-hidden="true" className="min-h-[300px]" />;
}
