// Kvamme's gain per class for one or two subjects: a bar per class and subject with its bootstrap
// interval as a line, classes from the highest down and unassessed apart. Observable Plot after
// hydration; the gain table beside it is the text alternative.
import { useEffect, useRef } from "react";
import { num, SERIES_STYLE, type ValidationView } from "./types";

const FLOOR = -3;

export function GainChart({ series }: { series: { name: string; v: ValidationView }[] }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const rows = series.flatMap(({ name, v }) =>
        v.gain ? [...v.gain.rows, ...(v.gain.unassessed ? [v.gain.unassessed] : [])].map((r) => ({ subject: name, cls: r.label, gain: Math.max(FLOOR, num(r.gain.estimate)), lower: Math.max(FLOOR, num(r.gain.lower)), upper: Math.max(FLOOR, num(r.gain.upper)) })) : [],
      );
      const classes = [...new Set(rows.map((r) => r.cls))];
      const names = series.map((s) => s.name);
      const chart = Plot.plot({
        width: 640,
        height: 240,
        marginLeft: 50,
        marginBottom: 40,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" },
        fx: { domain: classes, label: "potential class (highest first)" },
        x: { domain: names, axis: null },
        y: { domain: [FLOOR, 1], label: "Kvamme's gain", grid: true },
        color: { domain: names, range: SERIES_STYLE.map((s) => s.stroke), legend: names.length > 1 },
        marks: [
          Plot.ruleY([0]),
          Plot.barY(rows, { fx: "cls", x: "subject", y1: 0, y2: "gain", fill: "subject", fillOpacity: 0.35 }),
          Plot.ruleX(rows, { fx: "cls", x: "subject", y1: "lower", y2: "upper", stroke: "subject", strokeWidth: 2 }),
          Plot.dot(rows, { fx: "cls", x: "subject", y: "gain", stroke: "subject", symbol: "subject", fill: "white", r: 4 }),
        ],
        symbol: { domain: names, range: SERIES_STYLE.map((s) => s.symbol) as unknown as string[] },
      });
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [series]);
  return (
    <figure>
      <div ref={ref} aria-hidden="true" className="min-h-[240px]" data-testid="gain-chart" />
      <figcaption className="text-xs text-sediment-600">
        Kvamme's gain G = 1 − (share of area ÷ share of sites) per class, with its 95 % bootstrap interval (line). 1 is a perfect class, 0 no better than chance, below 0 worse. Values below {FLOOR} are drawn at {FLOOR}; the table gives them.
      </figcaption>
    </figure>
  );
}
