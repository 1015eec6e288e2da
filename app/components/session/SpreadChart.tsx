// Where each member stands on each factor: one row per factor, a mark per member's normalised
// weight (shape and colour per member, named in the legend and the table), and the group's weight as
// a bar through the row. Drawn with Observable Plot after hydration; the table below is its text.
import { useEffect, useMemo, useRef } from "react";

export interface SpreadRow {
  factor: string;
  label: string;
  group: number;
  members: { name: string; weight: number }[];
}

const SYMBOLS = ["circle", "square", "triangle", "diamond", "star", "cross", "wye", "times"] as const;

export function SpreadChart({ rows, memberNames }: { rows: SpreadRow[]; memberNames: string[] }) {
  const ref = useRef<HTMLDivElement>(null);
  const shown = useMemo(() => rows.filter((r) => r.group > 0 || r.members.some((m) => m.weight > 0)), [rows]);
  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !ref.current) return;
      const points = shown.flatMap((r) => r.members.map((m) => ({ label: r.label, name: m.name, weight: m.weight * 100 })));
      const groups = shown.map((r) => ({ label: r.label, weight: r.group * 100 }));
      const chart = Plot.plot({
        width: 640,
        height: 36 + 26 * Math.max(1, shown.length),
        marginLeft: 210,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent" },
        x: { label: "normalised weight (%)", domain: [0, Math.max(10, ...points.map((p) => p.weight), ...groups.map((g) => g.weight)) * 1.05], grid: true },
        y: { label: null, domain: shown.map((r) => r.label) },
        symbol: { domain: memberNames, range: SYMBOLS.slice(0, Math.max(1, memberNames.length)) as unknown as string[], legend: true },
        color: { domain: memberNames, scheme: "observable10" },
        marks: [
          Plot.tickX(groups, { x: "weight", y: "label", stroke: "var(--color-ember-500)", strokeWidth: 3 }),
          Plot.dot(points, { x: "weight", y: "label", symbol: "name", stroke: "name", r: 5, strokeWidth: 1.6, title: (d: { name: string; weight: number }) => `${d.name}: ${d.weight.toFixed(1)} %` }),
        ],
      });
      ref.current.replaceChildren(chart);
    });
    return () => {
      cancelled = true;
    };
  }, [shown, memberNames]);
  return (
    <figure>
      <div ref={ref} aria-hidden="true" className="min-h-[120px]" data-testid="spread-chart" />
      <figcaption className="text-xs text-sediment-600">
        Each member's weight per factor (normalised to 100 %), and the group's weight as the orange bar. Factors no one weighs are left out.
      </figcaption>
    </figure>
  );
}
