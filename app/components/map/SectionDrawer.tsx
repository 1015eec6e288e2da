// The cross-section drawer, opened above the strip once a line is drawn: today's seabed and the
// buried horizon along the line, the sea level at each reconstructed age with its ±σ band (the
// current age in the accent, as on the strip), the flooding age below, and the sub-bottom picks and
// cores within the corridor, drawn with Observable Plot. A table of the cores is the text version.
import { useQuery } from "@tanstack/react-query";
import { useEffect, useLayoutEffect, useRef, useState } from "react";
import type { Markish } from "@observablehq/plot";
import { sectionQuery } from "./queries";
import type { SectionData } from "./types";

const CORRIDOR_M = 250;
const EMBER = "#d97a26";
const SEA = "#4f7291";

export function SectionDrawer({ reconstructionId, from, to, ageKa, onClose }: { reconstructionId: number; from: [number, number]; to: [number, number]; ageKa: number; onClose: () => void }) {
  const q = useQuery(sectionQuery(reconstructionId, from, to, CORRIDOR_M));
  const fmt = (p: [number, number]) => `${Math.round(p[0]).toLocaleString("en").replace(/,/g, " ")}, ${Math.round(p[1]).toLocaleString("en").replace(/,/g, " ")}`;
  return (
    <section aria-label="Cross-section" data-testid="section-drawer" className="max-h-[45vh] overflow-y-auto border-t border-deep-800 bg-sand-50 px-3 py-2">
      <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
        <h2 className="text-sm font-semibold">Cross-section A–B</h2>
        <span className="text-xs text-sediment-600 tabular-nums">
          A {fmt(from)} → B {fmt(to)} m · corridor ±{CORRIDOR_M} m{q.data ? ` · ${(q.data.lengthM / 1000).toFixed(2)} km` : ""}
        </span>
        <span className="flex-1" />
        <button type="button" onClick={onClose} className="rounded-sm border border-sand-300 bg-white px-2 py-0.5 text-sm">
          Close section
        </button>
      </div>
      {q.isPending ? <p className="py-6 text-sm text-sediment-600">Drawing the section…</p> : q.isError ? <p role="alert" className="py-2 text-sm text-caution-800">{q.error.message}</p> : <SectionBody data={q.data} ageKa={ageKa} />}
    </section>
  );
}

const cores0 = (d: SectionData) => d.cores.filter((c) => c.seabedElevationM !== null);

function SectionBody({ data, ageKa }: { data: SectionData; ageKa: number }) {
  const boxRef = useRef<HTMLDivElement>(null);
  const chartRef = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(900);
  const [ve, setVe] = useState<number | null>(null);
  const [fitGround, setFitGround] = useState(false);
  useLayoutEffect(() => {
    const el = boxRef.current;
    if (!el) return;
    const measure = () => setWidth(Math.max(320, el.clientWidth));
    measure();
    const ro = new ResizeObserver(measure);
    ro.observe(el);
    return () => ro.disconnect();
  }, []);
  const hasHorizon = data.samples.some((s) => s.horizonM !== null);
  const hasFlooding = data.samples.some((s) => s.floodingAgeKa !== null);

  useEffect(() => {
    let cancelled = false;
    void import("@observablehq/plot").then((Plot) => {
      if (cancelled || !chartRef.current) return;
      const km = (m: number) => m / 1000;
      const samples = data.samples.map((s) => ({ ...s, km: km(s.distanceM) }));
      const seaLevels = data.ages.filter((a) => Number.isFinite(a.seaLevelM));
      const current = seaLevels.filter((a) => a.ageKa === ageKa);
      const others = seaLevels.filter((a) => a.ageKa !== ageKa);
      const heights = [
        ...samples.flatMap((s) => [s.seabedM, s.horizonM]),
        ...seaLevels.flatMap((a) => [a.seaLevelM - (a.sigmaM ?? 0), a.seaLevelM + (a.sigmaM ?? 0)]),
        ...data.picks.map((p) => p.elevationM),
        ...data.cores.flatMap((c) => (c.seabedElevationM === null ? [] : [c.seabedElevationM, c.seabedElevationM - c.penetrationM])),
      ].filter((v): v is number => v !== null && Number.isFinite(v));
      const groundOnly = [...samples.flatMap((s) => [s.seabedM, s.horizonM]), ...data.picks.map((p) => p.elevationM), ...cores0(data).flatMap((c) => [c.seabedElevationM!, c.seabedElevationM! - c.penetrationM])].filter((v): v is number => v !== null && Number.isFinite(v));
      const span = fitGround && groundOnly.length ? groundOnly : heights;
      const lo = Math.min(...span);
      const hi = Math.max(...span);
      const pad = Math.max(1, (hi - lo) * 0.06);
      const yDomain: [number, number] = [lo - pad, hi + pad];
      const height = 240;
      const margin = { top: 14, right: 64, bottom: 30, left: 52 };
      const lengthKm = km(data.lengthM);
      // Vertical exaggeration: metres per pixel across ÷ metres per pixel up.
      const mPerPxX = data.lengthM / (width - margin.left - margin.right);
      const mPerPxY = (yDomain[1] - yDomain[0]) / (height - margin.top - margin.bottom);
      const exaggeration = mPerPxX / mPerPxY;
      const cores = data.cores.filter((c) => c.seabedElevationM !== null);
      const units = cores.flatMap((c) => c.units.map((u, i) => ({ ...u, i, km: km(c.distanceM), top: c.seabedElevationM! - u.topM, base: c.seabedElevationM! - u.baseM, coreId: c.coreId })));
      const dates = cores.flatMap((c) => c.dates.filter((d) => d.sampleDepthM !== null).map((d) => ({ ...d, km: km(c.distanceM), z: c.seabedElevationM! - (d.sampleDepthM ?? 0) })));
      const barHalf = lengthKm * 0.006;
      const chart = Plot.plot({
        width,
        height,
        marginTop: margin.top,
        marginRight: margin.right,
        marginBottom: margin.bottom,
        marginLeft: margin.left,
        style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent", color: "#34302b" },
        x: { domain: [0, lengthKm], label: "distance from A (km)" },
        y: { domain: yDomain, label: "elevation (m, present MSL)", grid: true },
        clip: true,
        marks: [
          // Sea level at each age: a band for ±σ and a rule, labelled at B; the current age in the accent.
          Plot.rectY(seaLevels.filter((a) => a.sigmaM !== null), { x1: 0, x2: lengthKm, y1: (a) => a.seaLevelM - (a.sigmaM ?? 0), y2: (a) => a.seaLevelM + (a.sigmaM ?? 0), fill: (a) => (a.ageKa === ageKa ? EMBER : SEA), fillOpacity: 0.16 }),
          Plot.ruleY(others, { y: "seaLevelM", stroke: SEA, strokeWidth: 1, strokeDasharray: "4 3" }),
          Plot.ruleY(current, { y: "seaLevelM", stroke: EMBER, strokeWidth: 2 }),
          Plot.text(others, { x: lengthKm, y: "seaLevelM", text: (a) => `${a.ageKa} ka`, textAnchor: "start", dx: 4, fill: SEA }),
          Plot.text(current, { x: lengthKm, y: "seaLevelM", text: (a) => `${a.ageKa} ka`, textAnchor: "start", dx: 4, fill: EMBER, fontWeight: 600 }),
          // Ground: the seabed, the buried horizon and the cover between them.
          hasHorizon ? Plot.areaY(samples, { x: "km", y1: "horizonM", y2: "seabedM", fill: "#d6c8ab", fillOpacity: 0.55, curve: "linear" }) : null,
          Plot.line(samples, { x: "km", y: "seabedM", stroke: "#443a2c", strokeWidth: 1.5 }),
          hasHorizon ? Plot.line(samples, { x: "km", y: "horizonM", stroke: "#9c5214", strokeWidth: 1.2, strokeDasharray: "5 2" }) : null,
          Plot.dot(data.picks, { x: (p) => km(p.distanceM), y: "elevationM", r: 1.6, fill: "#5c554c", title: (p) => `pick on ${p.lineId}: ${p.elevationM.toFixed(1)} m, ${Math.round(Math.abs(p.offsetM))} m off the line` }),
          // Cores: a bar per unit down from the seabed, the dated samples as ticks, the id above.
          Plot.rect(units, { x1: (u) => u.km - barHalf, x2: (u) => u.km + barHalf, y1: "top", y2: "base", fill: (u) => (u.i % 2 ? "#fbf8f2" : "#7f6d4f"), stroke: "#1d1a17", strokeWidth: 0.8, title: (u) => `${u.coreId}: ${u.topM}–${u.baseM} m, ${u.description}` }),
          Plot.link(dates, { x1: (d) => d.km - barHalf * 2, x2: (d) => d.km + barHalf * 2, y1: "z", y2: "z", stroke: EMBER, strokeWidth: 2, title: (d) => `${d.labCode}: ${d.c14Age} ± ${d.c14Sigma} ¹⁴C BP, ${d.material} at ${d.sampleDepthM} m` }),
          Plot.text(dates, { x: (d) => d.km + barHalf * 2, y: "z", text: (d) => `${d.labCode} ${d.c14Age}±${d.c14Sigma} ¹⁴C BP`, textAnchor: "start", dx: 3, fontSize: 10 }),
          Plot.text(cores, { x: (c) => km(c.distanceM), y: (c) => c.seabedElevationM, text: "coreId", dy: -8, fontWeight: 600 }),
        ].filter((m) => m !== null),
      });
      const marks: Markish[] = [
        Plot.areaY(samples, { x: "km", y: "floodingAgeKa", fill: "#7f9db4", fillOpacity: 0.35 }),
        Plot.line(samples, { x: "km", y: "floodingAgeKa", stroke: "#23425e", strokeWidth: 1.2 }),
        Plot.ruleY([ageKa], { stroke: EMBER, strokeDasharray: "3 2" }),
      ];
      const flooding = hasFlooding
        ? Plot.plot({
            width,
            height: 90,
            marginTop: 6,
            marginRight: margin.right,
            marginBottom: 26,
            marginLeft: margin.left,
            style: { fontFamily: "Work Sans, sans-serif", fontSize: "11px", background: "transparent", color: "#34302b" },
            x: { domain: [0, lengthKm], label: null },
            y: { label: "flooding age (ka BP)", grid: true, ticks: 3, domain: [0, Math.max(ageKa, ...samples.map((s) => s.floodingAgeKa ?? 0)) * 1.05] },
            marks,
          })
        : null;
      chartRef.current.replaceChildren(...[chart, flooding].filter((c): c is NonNullable<typeof c> => c !== null));
      chartRef.current.dataset.drawn = "true";
      setVe(exaggeration);
    });
    return () => {
      cancelled = true;
    };
  }, [data, ageKa, width, hasHorizon, hasFlooding, fitGround]);

  return (
    <div ref={boxRef}>
      <p className="text-xs text-sediment-600" data-testid="section-exaggeration">
        {ve !== null ? `Vertical exaggeration ×${ve >= 10 ? Math.round(ve) : ve.toFixed(1)}` : "\u00a0"} · seabed <span className="font-semibold text-sand-800">—</span>
        {hasHorizon ? (
          <>
            {" "}
            · buried horizon <span className="font-semibold text-ember-700">- -</span> with the cover shaded
          </>
        ) : (
          " · no buried horizon along this line"
        )}{" "}
        · sea level at each age (±σ band), {ageKa} ka in orange · {data.picks.length} pick{data.picks.length === 1 ? "" : "s"} · {data.cores.length} core{data.cores.length === 1 ? "" : "s"} within the corridor
      </p>
      <label className="mt-1 flex items-center gap-1 text-xs text-sediment-600">
        <input type="checkbox" checked={fitGround} onChange={(e) => setFitGround(e.target.checked)} className="accent-deep-700" />
        Fit the height to the ground (sea levels outside it are cut off)
      </label>
      <div ref={chartRef} role="img" aria-label={`Cross-section profile, ${(data.lengthM / 1000).toFixed(2)} km: seabed, ${hasHorizon ? "buried horizon, " : ""}sea levels at ${data.ages.length} ages, ${data.cores.length} cores`} data-testid="section-chart" />
      {data.cores.length ? (
        <table className="mt-2 w-full text-left text-xs">
          <caption className="text-left font-semibold text-sediment-800">Cores within {CORRIDOR_M} m of the line</caption>
          <thead className="text-sediment-600">
            <tr>
              <th className="pr-3 font-medium">core</th>
              <th className="pr-3 font-medium">along · off the line</th>
              <th className="pr-3 font-medium">seabed</th>
              <th className="pr-3 font-medium">units (depth below seabed)</th>
              <th className="font-medium">dates</th>
            </tr>
          </thead>
          <tbody>
            {data.cores.map((c) => (
              <tr key={`${c.coreId}-${c.distanceM}`} className="border-t border-sand-200 align-top">
                <td className="pr-3 font-medium">{c.coreId}</td>
                <td className="pr-3">
                  {(c.distanceM / 1000).toFixed(2)} km · {Math.round(Math.abs(c.offsetM))} m
                </td>
                <td className="pr-3">{c.seabedElevationM === null ? "—" : `${c.seabedElevationM.toFixed(1).replace("-", "−")} m`}</td>
                <td className="pr-3">{c.units.map((u) => `${u.topM}–${u.baseM} m ${u.description}`).join("; ") || `penetration ${c.penetrationM} m`}</td>
                <td>{c.dates.map((d) => `${d.labCode} ${d.c14Age} ± ${d.c14Sigma} ¹⁴C BP (${d.material}${d.sampleDepthM !== null ? `, ${d.sampleDepthM} m` : ""})`).join("; ") || "—"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
    </div>
  );
}
