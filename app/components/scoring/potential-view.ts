// A live potential (the scoring worker's result) as the map workspace takes it: a picture drawn over
// the layers, and the words for one display cell in the cursor readout. Used by the weighing page
// and the Map page alike.
import { rasterCanvas } from "~/components/map/raster";
import type { ScoredMessage } from "./protocol";

/** The worker's picture as the workspace's overlay (browser only: null while rendering on the server). */
export function potentialOverlay(res: ScoredMessage | null, opacity: number, tag: string) {
  if (!res || typeof document === "undefined") return null;
  return { id: "potential", canvas: rasterCanvas(res.rgba, res.width, res.height), opacity, tag };
}

/** The potential in display cell (col, row): three decimals, "unassessed", "—" off the occupiable cells; null off the grid. */
export function potentialText(res: ScoredMessage | null, col: number, row: number): string | null {
  if (!res || col < 0 || row < 0 || col >= res.width || row >= res.height) return null;
  const i = row * res.width + col;
  const v = res.potential[i];
  return v === v ? v.toFixed(3) : res.unassessed[i] === 1 ? "unassessed" : "—";
}
