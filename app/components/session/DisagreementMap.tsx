// Where the proposals disagree: per cell, the spread (standard deviation) of potential across the
// members' proposals at the chosen age, drawn on the warm half of the diverging scale, and how many
// of the top cells each pair of proposals has in common. Scored in the browser by the same worker
// and code as the weighing page (no round trip); the age is chosen on the sea-level strip.
import { useEffect, useMemo, useRef, useState } from "react";
import type { MapData } from "~/components/map/types";
import type { WeightSetContent } from "~/scoring/weight-set";
import type { ScoreTarget } from "~/scoring/scoring-inputs";
import { SeaLevelStrip } from "~/components/map/SeaLevelStrip";
import { divergingColour, rgbCss } from "~/components/map/colour-scales";
import { useDisagreement } from "~/components/scoring/useDisagreement";
import { evidenceFromOverlays } from "~/components/scoring/evidence";

const TOP_N = 2000;

export function DisagreementMap({ map, proposals }: { map: MapData; proposals: Array<{ name: string; content: WeightSetContent }> }) {
  const r = map.reconstruction!;
  const [ageKa, setAgeKa] = useState(r.agesKa[0]);
  const [playing, setPlaying] = useState(false);
  const contents = useMemo(() => proposals.map((p) => p.content), [proposals]);
  const target: ScoreTarget = useMemo(() => ({ kind: "age", ageKa }), [ageKa]);
  const evidence = useMemo(() => evidenceFromOverlays(map.overlays), [map.overlays]);
  const { result, error, loading } = useDisagreement({ reconstruction: r, contents, target, evidence, topN: TOP_N });
  const canvas = useRef<HTMLCanvasElement>(null);
  useEffect(() => {
    const c = canvas.current;
    if (!c || !result) return;
    c.width = result.width;
    c.height = result.height;
    c.getContext("2d")?.putImageData(new ImageData(result.rgba as Uint8ClampedArray<ArrayBuffer>, result.width, result.height), 0, 0);
  }, [result]);

  // Playing: move on once the current age has been drawn, and stop at the youngest.
  const drawnAge = result ? ageKa : null;
  useEffect(() => {
    if (!playing || drawnAge !== ageKa) return;
    const i = r.agesKa.indexOf(ageKa);
    if (i >= r.agesKa.length - 1) return setPlaying(false);
    const t = setTimeout(() => setAgeKa(r.agesKa[i + 1]), 900);
    return () => clearTimeout(t);
  }, [playing, drawnAge, ageKa, r.agesKa]);

  if (proposals.length < 2)
    return <p className="text-sm text-sediment-600">The map of disagreement appears once two members have proposals.</p>;
  const legend = `linear-gradient(to right, ${[0, 0.25, 0.5, 0.75, 1].map((t) => rgbCss(divergingColour(t))).join(", ")})`;
  return (
    <div className="space-y-2" data-testid="disagreement-map" data-checksums={result ? result.checksums.join(",") : ""} data-age={result ? ageKa : ""}>
      {error ? <p role="alert" className="text-sm text-caution-800">{error}</p> : null}
      {loading > 0 ? <p className="text-sm text-sediment-600">Loading {loading} layers…</p> : null}
      <div className="flex flex-wrap items-start gap-4">
        <figure className="min-w-0 flex-1">
          <div className="rounded-sm bg-deep-950 p-2">
            <canvas ref={canvas} className="mx-auto block max-h-[420px] w-full object-contain [image-rendering:pixelated]" aria-label={`Spread of potential across ${proposals.length} proposals at ${ageKa} ka BP`} role="img" />
          </div>
          <figcaption className="mt-1 flex items-center gap-2 text-xs text-sediment-700">
            <span className="inline-block h-2 w-28 rounded-sm" style={{ background: legend }} aria-hidden="true" />
            spread of potential across {proposals.length} proposals at {ageKa} ka: 0 … {result ? result.maxSpread.toFixed(2) : "—"} (standard deviation){result?.meanSpread != null ? ` · mean ${result.meanSpread.toFixed(3)} over ${result.cells.toLocaleString("en")} cells` : ""}. Sea, lake and unassessed cells are blank.
          </figcaption>
        </figure>
        {result ? (
          <table className="text-xs tabular-nums" aria-label={`Share of the top ${result.topN} cells in common, by pair of proposals`}>
            <caption className="mb-1 text-left text-sediment-700">Top {result.topN.toLocaleString("en")} cells in common</caption>
            <thead>
              <tr>
                <th />
                {proposals.map((p) => (
                  <th key={p.name} className="px-1 font-normal">{p.name}</th>
                ))}
              </tr>
            </thead>
            <tbody>
              {proposals.map((p, i) => (
                <tr key={p.name}>
                  <th className="pr-1 text-left font-normal">{p.name}</th>
                  {result.topShare[i].map((v, j) => (
                    <td key={j} className="px-1 text-center">{i === j ? "·" : v === null ? "—" : `${Math.round(100 * v)} %`}</td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        ) : null}
      </div>
      <SeaLevelStrip points={map.seaLevel.points} label={map.seaLevel.label} agesKa={r.agesKa} ageKa={ageKa} onAge={setAgeKa} playing={playing} onPlay={setPlaying} />
    </div>
  );
}
