// The sea-level strip (look.md's signature element): the project's relative sea-level curve as a
// filled profile along the bottom of the map, oldest age on the left, the ±σ band, a stop at each
// reconstructed age and the current age in the warm accent. Click or drag along it, use the arrow
// keys, the step buttons or play to move the map through the ages.
import { useLayoutEffect, useMemo, useRef, useState, type KeyboardEvent, type PointerEvent } from "react";
import type { SeaLevelPoint } from "./types";

export interface SeaLevelStripProps {
  points: SeaLevelPoint[];
  label: string;
  /** reconstructed ages, oldest first */
  agesKa: number[];
  ageKa: number;
  onAge: (ageKa: number) => void;
  playing: boolean;
  onPlay: (playing: boolean) => void;
}

/** Sea level at an age, linear between the curve's points (null outside the curve). */
export function seaLevelAt(points: SeaLevelPoint[], ageKa: number): { rslM: number; sigmaM: number | null } | null {
  const pts = [...points].sort((a, b) => a.ageKa - b.ageKa);
  for (let i = 0; i < pts.length; i++) {
    if (pts[i].ageKa === ageKa) return { rslM: pts[i].rslM, sigmaM: pts[i].sigmaM };
    if (i > 0 && pts[i - 1].ageKa < ageKa && pts[i].ageKa > ageKa) {
      const a = pts[i - 1];
      const b = pts[i];
      const f = (ageKa - a.ageKa) / (b.ageKa - a.ageKa);
      const s = a.sigmaM !== null && b.sigmaM !== null ? a.sigmaM + (b.sigmaM - a.sigmaM) * f : null;
      return { rslM: a.rslM + (b.rslM - a.rslM) * f, sigmaM: s };
    }
  }
  return null;
}

const H = 92;
const M = { left: 44, right: 16, top: 10, bottom: 22 };

export function fmtM(v: number) {
  return `${v.toFixed(1).replace("-", "−")} m`;
}

export function SeaLevelStrip({ points, label, agesKa, ageKa, onAge, playing, onPlay }: SeaLevelStripProps) {
  const boxRef = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(900);
  useLayoutEffect(() => {
    const el = boxRef.current;
    if (!el) return;
    const measure = () => setWidth(Math.max(240, el.clientWidth));
    measure();
    const ro = new ResizeObserver(measure);
    ro.observe(el);
    return () => ro.disconnect();
  }, []);

  const index = Math.max(0, agesKa.indexOf(ageKa));
  const oldest = Math.max(...agesKa);
  const youngest = Math.min(...agesKa);
  const span = Math.max(1, oldest - youngest);
  const x0 = oldest + span * 0.08; // left edge (oldest)
  const x1 = Math.max(0, youngest - span * 0.08); // right edge
  const geo = useMemo(() => {
    const pts = [...points].sort((a, b) => b.ageKa - a.ageKa); // oldest first
    const inside = pts.filter((p, i) => (p.ageKa <= x0 && p.ageKa >= x1) || (pts[i + 1] && pts[i + 1].ageKa <= x0 && p.ageKa > x0) || (pts[i - 1] && pts[i - 1].ageKa >= x1 && p.ageKa < x1));
    const lows = inside.map((p) => p.rslM - (p.sigmaM ?? 0));
    const highs = inside.map((p) => p.rslM + (p.sigmaM ?? 0));
    const yMin = lows.length ? Math.min(...lows) : -120;
    const yMax = highs.length ? Math.max(...highs) : 0;
    const pad = Math.max(2, (yMax - yMin) * 0.08);
    return { inside, yLo: yMin - pad, yHi: yMax + pad };
  }, [points, x0, x1]);

  const innerW = width - M.left - M.right;
  const innerH = H - M.top - M.bottom;
  const sx = (a: number) => M.left + ((x0 - a) / (x0 - x1)) * innerW;
  const sy = (m: number) => M.top + ((geo.yHi - m) / (geo.yHi - geo.yLo)) * innerH;
  const bottom = M.top + innerH;
  const clampX = (a: number) => Math.min(M.left + innerW, Math.max(M.left, sx(a)));

  const curve = geo.inside.map((p) => `${clampX(p.ageKa).toFixed(1)},${sy(p.rslM).toFixed(1)}`);
  const fillPath = curve.length ? `M${clampX(geo.inside[0].ageKa).toFixed(1)},${bottom} L${curve.join(" L")} L${clampX(geo.inside[geo.inside.length - 1].ageKa).toFixed(1)},${bottom} Z` : "";
  const withSigma = geo.inside.filter((p) => p.sigmaM !== null);
  const bandPath = withSigma.length
    ? `M${withSigma.map((p) => `${clampX(p.ageKa).toFixed(1)},${sy(p.rslM + (p.sigmaM ?? 0)).toFixed(1)}`).join(" L")} L${[...withSigma]
        .reverse()
        .map((p) => `${clampX(p.ageKa).toFixed(1)},${sy(p.rslM - (p.sigmaM ?? 0)).toFixed(1)}`)
        .join(" L")} Z`
    : "";
  const current = seaLevelAt(points, ageKa);
  const yTicks = niceTicks(geo.yLo, geo.yHi, 3);
  const ageText = (a: number) => {
    const s = seaLevelAt(points, a);
    return `${a} ka BP${s ? `, sea level ${fmtM(s.rslM)}${s.sigmaM !== null ? ` ± ${s.sigmaM.toFixed(1)} m` : ""}` : ""}`;
  };

  const nearestAge = (clientX: number, rect: DOMRect) => {
    const px = ((clientX - rect.left) / rect.width) * width;
    let best = agesKa[0];
    for (const a of agesKa) if (Math.abs(sx(a) - px) < Math.abs(sx(best) - px)) best = a;
    return best;
  };
  const onPointer = (e: PointerEvent<SVGSVGElement>) => {
    if (e.type === "pointerdown") e.currentTarget.setPointerCapture(e.pointerId);
    else if (!e.currentTarget.hasPointerCapture(e.pointerId)) return;
    const a = nearestAge(e.clientX, e.currentTarget.getBoundingClientRect());
    if (a !== ageKa) onAge(a);
  };
  const step = (d: number) => {
    const i = Math.min(agesKa.length - 1, Math.max(0, index + d));
    if (agesKa[i] !== ageKa) onAge(agesKa[i]);
  };
  const onKey = (e: KeyboardEvent) => {
    const to = e.key === "ArrowLeft" || e.key === "ArrowDown" ? index - 1 : e.key === "ArrowRight" || e.key === "ArrowUp" ? index + 1 : e.key === "Home" ? 0 : e.key === "End" ? agesKa.length - 1 : null;
    if (to === null) return;
    e.preventDefault();
    step(to - index);
  };

  const button = "grid h-8 w-8 place-items-center rounded-sm border border-deep-700 bg-deep-800 text-sand-50 hover:bg-deep-700 disabled:opacity-40";
  return (
    <section aria-label="Sea-level strip" className="flex items-stretch gap-2 border-t border-deep-800 bg-deep-950 px-2 py-1 text-sand-100" data-testid="sea-level-strip">
      <div className="flex w-36 shrink-0 flex-col justify-center gap-1">
        <div className="flex gap-1">
          <button type="button" className={button} onClick={() => step(-1)} disabled={index === 0} aria-label="Older age" title="Older age (←)">
            ←
          </button>
          <button type="button" className={button} onClick={() => onPlay(!playing)} aria-label={playing ? "Pause" : "Play the transgression"} aria-pressed={playing} title={playing ? "Pause" : "Play the transgression"}>
            {playing ? "❚❚" : "▶"}
          </button>
          <button type="button" className={button} onClick={() => step(1)} disabled={index === agesKa.length - 1} aria-label="Younger age" title="Younger age (→)">
            →
          </button>
        </div>
        <p className="text-xs leading-tight tabular-nums" aria-live="polite">
          <span className="font-semibold text-ember-300">{ageKa} ka BP</span>
          <br />
          {current ? `sea ${fmtM(current.rslM)}${current.sigmaM !== null ? ` ± ${current.sigmaM.toFixed(1)}` : ""}` : "sea level —"}
        </p>
      </div>
      <div ref={boxRef} className="min-w-0 flex-1">
        <svg
          role="slider"
          tabIndex={0}
          aria-label={`Age on the sea-level curve (${label})`}
          aria-valuemin={youngest}
          aria-valuemax={oldest}
          aria-valuenow={ageKa}
          aria-valuetext={ageText(ageKa)}
          width={width}
          height={H}
          className="block cursor-pointer touch-none select-none rounded-sm focus-visible:outline-2 focus-visible:outline-ember-500"
          onPointerDown={onPointer}
          onPointerMove={onPointer}
          onKeyDown={onKey}
        >
          <title>{`Relative sea level: ${label}`}</title>
          {yTicks.map((t) => (
            <g key={t}>
              <line x1={M.left} x2={M.left + innerW} y1={sy(t)} y2={sy(t)} stroke="#23425e" strokeWidth={1} />
              <text x={M.left - 6} y={sy(t)} dy="0.32em" textAnchor="end" fontSize={10} fill="#bfd0dc" className="tabular-nums">
                {t.toFixed(0).replace("-", "−")}
              </text>
            </g>
          ))}
          <text x={4} y={M.top + 2} dy="0.7em" fontSize={9} fill="#7f9db4">
            m
          </text>
          <path d={fillPath} fill="#3f6a8c" fillOpacity={0.55} />
          <path d={bandPath} fill="#bfd0dc" fillOpacity={0.35} />
          <polyline points={curve.join(" ")} fill="none" stroke="#bfd0dc" strokeWidth={1.5} />
          {agesKa.map((a) => {
            const s = seaLevelAt(points, a);
            const on = a === ageKa;
            const x = sx(a);
            return (
              <g key={a}>
                <line x1={x} x2={x} y1={bottom} y2={s ? sy(s.rslM) : M.top} stroke={on ? "#d97a26" : "#7f9db4"} strokeWidth={on ? 2 : 1} strokeDasharray={on ? undefined : "2 2"} />
                {s ? <circle cx={x} cy={sy(s.rslM)} r={on ? 5.5 : 3.5} fill={on ? "#d97a26" : "#0a1826"} stroke={on ? "#f2b774" : "#bfd0dc"} strokeWidth={1.5} /> : null}
                <text x={x} y={bottom + 14} textAnchor="middle" fontSize={11} fontWeight={on ? 600 : 400} fill={on ? "#f2b774" : "#bfd0dc"} className="tabular-nums">
                  {a} ka
                </text>
              </g>
            );
          })}
        </svg>
      </div>
    </section>
  );
}

function niceTicks(lo: number, hi: number, n: number): number[] {
  const raw = (hi - lo) / n;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((k) => k * mag).find((s) => s >= raw) ?? raw;
  const out: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi; t += step) out.push(Math.round(t * 1e6) / 1e6);
  return out;
}
