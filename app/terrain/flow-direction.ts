/**
 * D8 flow direction: each cell drains to the one of its 8 neighbours with the steepest downward
 * gradient, the drop divided by the distance between cell centres (dx, dy or √(dx²+dy²) — cells may
 * be non-square).
 */
import { D8_DCOL, D8_DROW, D8_NODATA, D8_OUTLET, D8_PIT, type Grid, assertLayerSize, d8Distances } from "./grid";

/**
 * D8 flow directions (Uint8: 0 E, 1 SE, 2 S, 3 SW, 4 W, 5 NW, 6 N, 7 NE; D8_OUTLET on outlets, D8_PIT
 * where no neighbour is lower, D8_NODATA on nodata).
 *
 * O'Callaghan, J.F. & Mark, D.M. (1984) "The extraction of drainage networks from digital elevation
 * data", Computer Vision, Graphics, and Image Processing 28(3): 323–344; Jenson, S.K. & Domingue, J.O.
 * (1988) "Extracting topographic structure from digital elevation data for geographic information
 * system analysis", Photogrammetric Engineering and Remote Sensing 54(11): 1593–1600.
 *
 * Preconditions: `surface` is a (filled) elevation in m, NaN/mask on nodata; gradients are drop /
 * distance with distances from the grid's cell sizes. Nodata neighbours and cells beyond the grid edge
 * are never chosen (the edge is a wall; outlets are where water leaves). Ties go to the first direction
 * in the order E, SE, S, SW, W, NW, N, NE. Complexity O(n), no extra memory beyond the output.
 */
export function flowDirectionD8(surface: Grid<Float32Array>, outlets: Uint8Array): Uint8Array {
  const { spec, data: z, nodata } = surface;
  const { width: w, height: h } = spec;
  const n = w * h;
  assertLayerSize(spec, outlets, "outlet mask");
  const dist = d8Distances(spec);
  const inv = new Float64Array(8);
  for (let k = 0; k < 8; k++) inv[k] = 1 / dist[k];
  const dir = new Uint8Array(n);
  const [i0, i1, i2, i3, i4, i5, i6, i7] = inv;
  // neighbour offsets in code order E, SE, S, SW, W, NW, N, NE
  const oSE = w + 1;
  const oSW = w - 1;
  for (let r = 0; r < h; r++) {
    const interior = r > 0 && r < h - 1;
    for (let c = 0; c < w; c++) {
      const i = r * w + c;
      if (nodata[i]) {
        dir[i] = D8_NODATA;
        continue;
      }
      if (outlets[i]) {
        dir[i] = D8_OUTLET;
        continue;
      }
      const zi = z[i];
      let best = 0;
      let bestK = D8_PIT;
      if (interior && c > 0 && c < w - 1) {
        // the same gradients, comparisons and tie order as the general loop below, unrolled
        let g: number;
        if (nodata[i + 1] === 0 && (g = (zi - z[i + 1]) * i0) > best) (best = g), (bestK = 0);
        if (nodata[i + oSE] === 0 && (g = (zi - z[i + oSE]) * i1) > best) (best = g), (bestK = 1);
        if (nodata[i + w] === 0 && (g = (zi - z[i + w]) * i2) > best) (best = g), (bestK = 2);
        if (nodata[i + oSW] === 0 && (g = (zi - z[i + oSW]) * i3) > best) (best = g), (bestK = 3);
        if (nodata[i - 1] === 0 && (g = (zi - z[i - 1]) * i4) > best) (best = g), (bestK = 4);
        if (nodata[i - oSE] === 0 && (g = (zi - z[i - oSE]) * i5) > best) (best = g), (bestK = 5);
        if (nodata[i - w] === 0 && (g = (zi - z[i - w]) * i6) > best) (best = g), (bestK = 6);
        if (nodata[i - oSW] === 0 && (g = (zi - z[i - oSW]) * i7) > best) (best = g), (bestK = 7);
        dir[i] = bestK;
        continue;
      }
      for (let k = 0; k < 8; k++) {
        const rr = r + D8_DROW[k];
        const cc = c + D8_DCOL[k];
        if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
        const m = rr * w + cc;
        if (nodata[m]) continue;
        const g = (zi - z[m]) * inv[k];
        if (g > best) {
          best = g;
          bestK = k;
        }
      }
      dir[i] = bestK;
    }
  }
  return dir;
}

/** Index of the cell a D8 code points to, or −1 for outlets, pits and nodata. */
export function downstreamIndex(width: number, i: number, code: number): number {
  if (code > 7) return -1;
  return i + D8_DROW[code] * width + D8_DCOL[code];
}
