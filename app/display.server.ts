// The display resolution this installation serves (LOWSTAND_DISPLAY_MAX_SIDE, default 1024 cells on
// the longer side): the layer API's display copies, the map's readouts and the live scoring all
// follow the grid it gives (app/raster-display.ts, displayGridOf).
import { DEFAULT_DISPLAY_MAX_SIDE, displayGridOf, type DisplayGrid } from "./raster-display";
import type { MaskGrid } from "./scoring/polygon-mask";

export function displayMaxSide(): number {
  const v = Number(process.env.LOWSTAND_DISPLAY_MAX_SIDE ?? DEFAULT_DISPLAY_MAX_SIDE);
  return Number.isFinite(v) && v >= 16 ? Math.floor(v) : DEFAULT_DISPLAY_MAX_SIDE;
}

export function displayGridFor(grid: MaskGrid): DisplayGrid {
  return displayGridOf(grid, displayMaxSide());
}
