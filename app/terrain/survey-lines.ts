/**
 * Survey lines on the grid: rasterise line navigation and measure the distance to the nearest line.
 *
 * Rasterising follows the grid traversal of Amanatides, J. & Woo, A. (1987) "A Fast Voxel Traversal
 * Algorithm for Ray Tracing", Eurographics '87, 3–10: every cell a segment passes through is marked.
 * Distances use the exact Euclidean transform of Felzenszwalb & Huttenlocher (2012), Theory of
 * Computing 8(19) (distance-transform.ts).
 */
import { euclideanDistance } from "./distance-transform.ts";
import { TerrainInputError, type GridSpec } from "./grid.ts";

/** One survey line: its fixes in order, project-CRS metres. */
export interface SurveyLine {
  id: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
}

/**
 * Marks (sets to 1) every cell that a line segment passes through. Amanatides & Woo (1987),
 * Eurographics '87: the walk steps from cell to cell along the segment, crossing one cell boundary
 * at a time.
 *
 * Preconditions: coordinates in the grid's project CRS (metres). Parts of a line outside the grid
 * are walked but not marked. A single-fix line marks its one cell. A non-finite coordinate throws
 * TerrainInputError naming the line and the fix.
 *
 * Complexity: O(total number of cells crossed + number of fixes); no allocation per segment.
 */
export function rasteriseLines(lines: readonly SurveyLine[], spec: GridSpec, out?: Uint8Array): Uint8Array {
  const { width, height } = spec;
  const mask = out ?? new Uint8Array(width * height);
  for (const line of lines) {
    const n = line.x.length;
    if (line.y.length !== n) throw new TerrainInputError(`survey line ${line.id}: ${n} x values but ${line.y.length} y values`);
    for (let k = 0; k < n; k++) {
      if (!Number.isFinite(line.x[k]) || !Number.isFinite(line.y[k])) {
        throw new TerrainInputError(`survey line ${line.id}, fix ${k + 1}: coordinates are not numbers (${line.x[k]}, ${line.y[k]})`);
      }
    }
    if (n === 1) {
      markCell(mask, spec, (line.x[0] - spec.originX) / spec.cellSizeX, (spec.originY - line.y[0]) / spec.cellSizeY);
      continue;
    }
    for (let k = 1; k < n; k++) {
      const u0 = (line.x[k - 1] - spec.originX) / spec.cellSizeX;
      const w0 = (spec.originY - line.y[k - 1]) / spec.cellSizeY;
      const u1 = (line.x[k] - spec.originX) / spec.cellSizeX;
      const w1 = (spec.originY - line.y[k]) / spec.cellSizeY;
      walkSegment(mask, spec, u0, w0, u1, w1);
    }
  }
  return mask;
}

function markCell(mask: Uint8Array, spec: GridSpec, u: number, w: number): void {
  const c = Math.floor(u);
  const r = Math.floor(w);
  if (c >= 0 && r >= 0 && c < spec.width && r < spec.height) mask[r * spec.width + c] = 1;
}

/** walks the segment (u0,w0)→(u1,w1) in fractional column/row units, marking each cell */
function walkSegment(mask: Uint8Array, spec: GridSpec, u0: number, w0: number, u1: number, w1: number): void {
  const { width, height } = spec;
  let c = Math.floor(u0);
  let r = Math.floor(w0);
  const cEnd = Math.floor(u1);
  const rEnd = Math.floor(w1);
  const du = u1 - u0;
  const dw = w1 - w0;
  const stepC = du > 0 ? 1 : -1;
  const stepR = dw > 0 ? 1 : -1;
  const tDeltaC = du !== 0 ? Math.abs(1 / du) : Infinity;
  const tDeltaR = dw !== 0 ? Math.abs(1 / dw) : Infinity;
  let tMaxC = du !== 0 ? (du > 0 ? c + 1 - u0 : u0 - c) * tDeltaC : Infinity;
  let tMaxR = dw !== 0 ? (dw > 0 ? r + 1 - w0 : w0 - r) * tDeltaR : Infinity;
  let steps = Math.abs(cEnd - c) + Math.abs(rEnd - r);
  if (c >= 0 && r >= 0 && c < width && r < height) mask[r * width + c] = 1;
  while (steps-- > 0) {
    if (tMaxC < tMaxR) {
      c += stepC;
      tMaxC += tDeltaC;
    } else {
      r += stepR;
      tMaxR += tDeltaR;
    }
    if (c >= 0 && r >= 0 && c < width && r < height) mask[r * width + c] = 1;
  }
}

/**
 * Distance (metres) from every cell centre to the nearest cell a survey line passes through.
 * Amanatides & Woo (1987) for the rasterising; Felzenszwalb & Huttenlocher (2012), Theory of
 * Computing 8(19), for the exact Euclidean transform.
 *
 * Preconditions: as rasteriseLines. The distance is measured to the centres of the crossed cells, so
 * it can differ from the distance to the line itself by up to half a cell diagonal. With no line
 * inside the grid every value is +Infinity.
 *
 * Complexity: O(width·height + cells crossed).
 */
export function distanceToNearestLine(lines: readonly SurveyLine[], spec: GridSpec): Float32Array {
  const mask = rasteriseLines(lines, spec);
  return euclideanDistance(mask, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY);
}
