/**
 * Coastal shelter (design §4, "coastal shelter (fetch or embayment)"): the share of the ground around
 * a cell that is not open sea. A cell in a bay or inlet is ringed by land and scores high; a cell on
 * a headland or open coast faces sea on most sides and scores low. An embayment measure of our own
 * (common practice, no source); the window sums come from summed-area tables: Crow, F.C. (1984)
 * "Summed-area tables for texture mapping", Computer Graphics (SIGGRAPH '84) 18(3), 207–212.
 */
import { ScoringInputError } from "./errors.ts";

export interface ShelterGrid {
  width: number;
  height: number;
  /** cell sizes in metres (cells may be non-square) */
  cellSizeX: number;
  cellSizeY: number;
}

/**
 * Embayment share, our own measure (common practice, no source); window sums by summed-area tables
 * after Crow, F.C. (1984) "Summed-area tables for texture mapping", Computer Graphics 18(3), 207–212.
 *
 * For every cell: the share of land, intertidal and lake cells (land_class 0, 2, 3) among the valid
 * cells (land_class ≠ 255) of the rectangular window reaching `radiusM` each way — half-widths
 * round(radiusM / cellSizeX) columns and round(radiusM / cellSizeY) rows, at least 1, as for TPI
 * (`app/terrain/tpi.ts`) — the cell itself included, the window clipped at the grid edge. 0 = open
 * sea all round, 1 = no sea in sight.
 *
 * Preconditions: `landClass` as docs/layers.md (0 land, 1 sea, 2 intertidal, 3 lake, 255 nodata) of
 * width·height cells, row 0 north; finite cell sizes > 0; finite radiusM > 0. Nodata cells give NaN
 * and are left out of their neighbours' shares. Throws {@link ScoringInputError} otherwise.
 *
 * Complexity: O(width·height) time whatever the radius; two Int32 summed-area tables of
 * (width+1)·(height+1) entries.
 */
export function shelterIndex(landClass: Uint8Array, grid: ShelterGrid, radiusM: number): Float32Array {
  const { width, height, cellSizeX, cellSizeY } = grid;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1)
    throw new ScoringInputError(`The grid needs a whole number of rows and columns (got ${width} × ${height}).`);
  if (landClass.length !== width * height)
    throw new ScoringInputError(`The land and sea layer has ${landClass.length} cells; the grid has ${width * height}.`);
  if (!(cellSizeX > 0) || !(cellSizeY > 0) || !Number.isFinite(cellSizeX) || !Number.isFinite(cellSizeY))
    throw new ScoringInputError(`The grid's cell sizes must be positive (got ${cellSizeX} × ${cellSizeY} m).`);
  if (!(radiusM > 0) || !Number.isFinite(radiusM))
    throw new ScoringInputError(`The shelter radius must be a positive number of metres (got ${radiusM}).`, "shelterRadiusM");
  const hx = Math.max(1, Math.round(radiusM / cellSizeX));
  const hy = Math.max(1, Math.round(radiusM / cellSizeY));
  const w1 = width + 1;
  const valid = new Int32Array(w1 * (height + 1));
  const landish = new Int32Array(w1 * (height + 1));
  for (let r = 0; r < height; r++) {
    let rowValid = 0;
    let rowLand = 0;
    const o = (r + 1) * w1;
    const op = r * w1;
    for (let c = 0; c < width; c++) {
      const k = landClass[r * width + c];
      if (k !== 255) {
        rowValid++;
        if (k === 0 || k === 2 || k === 3) rowLand++;
      }
      valid[o + c + 1] = valid[op + c + 1] + rowValid;
      landish[o + c + 1] = landish[op + c + 1] + rowLand;
    }
  }
  const out = new Float32Array(width * height);
  // the window's first and one-past-last column per column, clipped at the edges
  const colLo = new Int32Array(width);
  const colHi = new Int32Array(width);
  for (let c = 0; c < width; c++) {
    colLo[c] = c - hx < 0 ? 0 : c - hx;
    colHi[c] = c + hx + 1 > width ? width : c + hx + 1;
  }
  for (let r = 0; r < height; r++) {
    const top = (r - hy < 0 ? 0 : r - hy) * w1;
    const bottom = (r + hy + 1 > height ? height : r + hy + 1) * w1;
    const row = r * width;
    for (let c = 0; c < width; c++) {
      const i = row + c;
      if (landClass[i] === 255) {
        out[i] = NaN;
        continue;
      }
      const lo = colLo[c];
      const hi = colHi[c];
      // the cell itself is valid, so the count is at least 1
      out[i] =
        (landish[bottom + hi] - landish[top + hi] - landish[bottom + lo] + landish[top + lo]) /
        (valid[bottom + hi] - valid[top + hi] - valid[bottom + lo] + valid[top + lo]);
    }
  }
  return out;
}
