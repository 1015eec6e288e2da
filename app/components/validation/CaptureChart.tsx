// The site-capture curve (share of sites against share of area, cells ranked by score) and gain along
// the same ranking, for one or two subjects; the diagonal is chance. Observable Plot after hydration.
import { useEffect, useRef } from "react";
import { num, SERIES_STYLE, type ValidationView } from "./types";

export function CaptureChart({ series }: { series: { name: string; v: ValidationView }[] }) {
  const ref = useRef<HTMLDivElement>(null);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const pts = series.flatMap(({ name, v }) => (v.capture ? v.capture.points.map((p) => ({ subject: name, area: p.areaShare * 100, sites: p.siteShare * 100, gain: num(p.gain) })) : []));
      const names = series.map((s) => s.name);
      const colour = { domain: names, range: SERIES_STYLE.map((s) => s.stroke), legend: names.length > 1 };
      const symbol = { domain: names, range: SERIES_STYLE.map((s) => s.symbol) as unknown as string[] };
      const style = { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" };
      const capture = Plot.plot({
        width: 320,
        height: 280,
        marginLeft: 45,
        style,
        x: { domain: [0, 100], label: "share of area searched (%)", grid: true },
        y: { domain: [0, 100], label: "share of sites found (%)", grid: true },
        color: colour,
        symbol,
        marks: [
          Plot.line([[0, 0], [100, 100]], { stroke: "var(--color-sediment-400)", strokeDasharray: "4 3" }),
          Plot.line(pts, { x: "area", y: "sites", stroke: "subject", curve: "linear" }),
          Plot.dot(pts, { x: "area", y: "sites", stroke: "subject", symbol: "subject", r: 3 }),
        ],
      });
      const finite = pts.filter((p) => Number.isFinite(p.gain));
      const gain = Plot.plot({
        width: 320,
        height: 280,
        marginLeft: 45,
        style,
        x: { domain: [0, 100], label: "share of area searched (%)", grid: true },
        y: { domain: [Math.min(0, ...finite.map((p) => p.gain)), 1], label: "gain of the area above the score", grid: true },
        color: colour,
        symbol,
        marks: [Plot.ruleY([0]), Plot.line(finite, { x: "area", y: "gain", stroke: "subject" }), Plot.dot(finite, { x: "area", y: "gain", stroke: "subject", symbol: "subject", r: 3 })],
      });
      const wrap = document.createElement("div");
      wrap.className = "flex flex-wrap gap-4";
      wrap.append(capture, gain);
      ref.current.replaceChildren(wrap);
    });
    return () => {
      cancelled = true;
    };
  }, [series]);
  return (
    <figure>
      <div ref={ref} aria-hidden="true" className="min-h-[280px]" data-testid="capture-chart" />
      <figcaption className="text-xs text-sediment-600">
        Left: cells ranked from the highest score down, the share of sites captured against the share of area searched (the dashed line is chance). Right: Kvamme's gain of the area above each step. Sites in unassessed ground are not in these curves.
      </figcaption>
    </figure>
  );
}
