/**
 * Shoreline at a chosen tidal level, river mouths and lake margins at one age.
 */
import { D8_DCOL, D8_DROW, type Grid, TerrainInputError, assertLayerSize } from "./grid";
import { CLASS_LAKE, CLASS_NODATA, CLASS_SEA, type TidalRange } from "./flooding";

/**
 * Cells reached by the sea when the water stands at `tidalLevel` within the tidal range: the water
 * level is L + tidalLevel·R/2 (−1 = low water, 0 = mean sea level, +1 = high water); a cell is sea at
 * that level when its spill elevation is at or below it (connected flooding, 4-connected by the spill
 * computation). Uint8 mask. O(n).
 */
export function seaAtTidalLevel(
  spillM: Float32Array,
  seaLevel: Float32Array,
  tidalRange: TidalRange,
  tidalLevel: number,
): Uint8Array {
  if (!(tidalLevel >= -1 && tidalLevel <= 1)) {
    throw new TerrainInputError(`tidal level must be between −1 (low water) and +1 (high water), got ${tidalLevel}`);
  }
  const n = spillM.length;
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const R = typeof tidalRange === "number" ? tidalRange : tidalRange[i];
    if (spillM[i] <= seaLevel[i] + (tidalLevel * R) / 2) out[i] = 1;
  }
  return out;
}

/**
 * Shoreline cells: valid cells not in `sea` with at least one 4-neighbour in `sea` (the land side of
 * the water line). Uint8 mask. Preconditions: `sea` from seaAtTidalLevel (or class = sea). O(n).
 */
export function shorelineMask(elev: Grid<Float32Array>, sea: Uint8Array): Uint8Array {
  const { spec, nodata } = elev;
  assertLayerSize(spec, sea, "sea mask");
  return edgeOf(spec.width, spec.height, nodata, sea);
}

function edgeOf(w: number, h: number, nodata: Uint8Array, water: Uint8Array): Uint8Array {
  const out = new Uint8Array(w * h);
  for (let r = 0; r < h; r++) {
    for (let c = 0; c < w; c++) {
      const i = r * w + c;
      if (nodata[i] || water[i]) continue;
      if (r > 0 && r < h - 1 && c > 0 && c < w - 1) {
        // interior: the four edge neighbours without bounds checks
        if (
          (water[i + 1] && !nodata[i + 1]) ||
          (water[i + w] && !nodata[i + w]) ||
          (water[i - 1] && !nodata[i - 1]) ||
          (water[i - w] && !nodata[i - w])
        ) {
          out[i] = 1;
        }
        continue;
      }
      for (let k = 0; k < 8; k += 2) {
        const rr = r + D8_DROW[k];
        const cc = c + D8_DCOL[k];
        if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
        const m = rr * w + cc;
        if (water[m] && !nodata[m]) {
          out[i] = 1;
          break;
        }
      }
    }
  }
  return out;
}

/**
 * River mouths (estuary candidates): stream cells not in `sea` whose D8 downstream cell is in `sea` —
 * where a river reaches the shoreline at the chosen tidal level. Uint8 mask. O(n).
 */
export function riverMouths(elev: Grid<Float32Array>, directions: Uint8Array, streams: Uint8Array, sea: Uint8Array): Uint8Array {
  const { spec } = elev;
  const { width: w, height: h } = spec;
  const out = new Uint8Array(w * h);
  for (let i = 0; i < out.length; i++) {
    if (!streams[i] || sea[i]) continue;
    const d = directions[i];
    if (d > 7) continue;
    const r = ((i / w) | 0) + D8_DROW[d];
    const c = (i % w) + D8_DCOL[d];
    if (r < 0 || r >= h || c < 0 || c >= w) continue;
    if (sea[r * w + c]) out[i] = 1;
  }
  return out;
}

/**
 * Lake margins: valid non-lake, non-sea cells with a 4-neighbour that is a lake cell (the land side of
 * each lake shore). `classes` from classifyAtAge. Uint8 mask. O(n).
 */
export function lakeMargins(elev: Grid<Float32Array>, classes: Uint8Array): Uint8Array {
  const { spec, nodata } = elev;
  assertLayerSize(spec, classes, "class layer");
  const n = classes.length;
  const lake = new Uint8Array(n);
  for (let i = 0; i < n; i++) if (classes[i] === CLASS_LAKE) lake[i] = 1;
  const out = edgeOf(spec.width, spec.height, nodata, lake);
  for (let i = 0; i < n; i++) if (classes[i] === CLASS_SEA || classes[i] === CLASS_NODATA) out[i] = 0;
  return out;
}

/** Water cells for stream extraction: sea and lake classes. O(n). */
export function waterMask(classes: Uint8Array): Uint8Array {
  const out = new Uint8Array(classes.length);
  for (let i = 0; i < out.length; i++) if (classes[i] === CLASS_SEA || classes[i] === CLASS_LAKE) out[i] = 1;
  return out;
}
