// A histogram drawn with Observable Plot (in the browser, after hydration), with a text table
// beside it for keyboard and screen-reader users (look.md: the tables are the text alternative).
import { useEffect, useRef } from "react";

export function Histogram({ edges, counts, unit, label }: { edges: number[]; counts: number[]; unit: string; label: string }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const bins = counts.map((c, i) => ({ x1: edges[i], x2: edges[i + 1], count: c }));
      const chart = Plot.plot({
        width: 520,
        height: 180,
        marginLeft: 50,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" },
        x: { label: `${label} (${unit})` },
        y: { label: "cells", grid: true },
        marks: [Plot.rectY(bins, { x1: "x1", x2: "x2", y: "count", fill: "var(--color-deep-500)", insetLeft: 0.5 }), Plot.ruleY([0])],
      });
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [edges, counts, unit, label]);
  return (
    <figure>
      <div ref={ref} aria-hidden="true" className="min-h-[180px]" />
      <figcaption className="text-xs text-sediment-600">
        Distribution of {label.toLowerCase()} over {counts.reduce((a, b) => a + b, 0).toLocaleString("en")} valid cells.
      </figcaption>
      <details className="mt-1 text-xs">
        <summary className="cursor-pointer text-sediment-600">Values as a table</summary>
        <table className="mt-1">
          <tbody>
            {counts.map((c, i) => (
              <tr key={i}>
                <td className="pr-3 tabular-nums">
                  {edges[i].toFixed(1)} – {edges[i + 1].toFixed(1)} {unit}
                </td>
                <td className="tabular-nums">{c}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </details>
    </figure>
  );
}
