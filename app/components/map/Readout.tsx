// The cursor readout under the map: where the cursor is (project CRS metres, WGS 84 in decimal
// degrees and in degrees and decimal minutes) and each shown layer's value there, with units.
import { useMemo } from "react";
import { decimalDegrees, degreesDecimalMinutes, wgs84Converter } from "./coords";
import type { Origin } from "./geometry";

export interface ReadoutValue {
  label: string;
  text: string;
}

const metres = (v: number) => `${Math.round(v).toLocaleString("en").replace(/,/g, " ")} m`;

export function Readout({ hover, origin, proj4, values }: { hover: [number, number] | null; origin: Origin; proj4: string | null; values: ReadoutValue[] }) {
  const toWgs84 = useMemo(() => wgs84Converter(proj4), [proj4]);
  const x = hover ? hover[0] + origin.originX : null;
  const y = hover ? hover[1] + origin.originY : null;
  const ll = x !== null && y !== null && toWgs84 ? toWgs84(x, y) : null;
  return (
    <div data-testid="readout" className="flex min-h-7 flex-wrap items-center gap-x-4 gap-y-0.5 border-t border-deep-800 bg-deep-900 px-3 py-1 text-xs text-sand-100 tabular-nums">
      {x === null || y === null ? (
        <span className="text-sea-200">Point at the map to read coordinates and values.</span>
      ) : (
        <>
          <span>
            <span className="text-sea-200">x</span> {metres(x)} <span className="text-sea-200">y</span> {metres(y)}
          </span>
          {ll ? (
            <>
              <span data-testid="readout-ddm">
                {degreesDecimalMinutes(ll[1], "lat")}, {degreesDecimalMinutes(ll[0], "lon")}
              </span>
              <span className="text-sea-200" data-testid="readout-dd">
                {decimalDegrees(ll[1], "lat")}, {decimalDegrees(ll[0], "lon")}
              </span>
            </>
          ) : (
            <span className="text-sea-200">WGS 84 unavailable (no projection definition)</span>
          )}
          {values.map((v) => (
            <span key={v.label}>
              <span className="text-sea-200">{v.label}</span> {v.text}
            </span>
          ))}
        </>
      )}
    </div>
  );
}
