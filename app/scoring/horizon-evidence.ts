/**
 * Evidence of the buried horizon from cores and interpretations (design §4, preservation): a point
 * where the horizon is seen intact or truncated stands for the cells around it, within a radius the
 * weight set gives. The nearest evidence point within the radius decides a cell. Common practice, no
 * source.
 */
import { ScoringInputError } from "./errors.ts";

export interface EvidenceGrid {
  width: number;
  height: number;
  cellSizeX: number;
  cellSizeY: number;
  /** top-left corner of the grid, projected metres (docs/layers.md manifest `grid`) */
  originX: number;
  originY: number;
}

export interface HorizonEvidencePoint {
  /** projected coordinates, metres, in the grid's CRS */
  x: number;
  y: number;
  state: "intact" | "truncated";
}

/** Codes of {@link horizonEvidenceGrid}'s output. */
export const EVIDENCE_NONE = 0;
export const EVIDENCE_INTACT = 1;
export const EVIDENCE_TRUNCATED = 2;

/**
 * Common practice, no source.
 *
 * Per cell: 1 where the nearest evidence point within `radiusM` (exact Euclidean distance between
 * the cell centre and the point) shows the horizon intact, 2 where it shows it truncated, 0 where no
 * point lies within the radius. Cell centres: x = originX + (col + 0.5)·cellSizeX,
 * y = originY − (row + 0.5)·cellSizeY (row 0 north). A tie in distance between an intact and a
 * truncated point goes to intact (the cautious reading for heritage: a site may survive), so the
 * result does not depend on the order of the points.
 *
 * Preconditions: finite coordinates, a finite radius ≥ 0, cell sizes > 0; else
 * {@link ScoringInputError}. Points off the grid still mark the cells within the radius.
 *
 * Complexity: O(n + Σ cells in each point's bounding box of the radius); a Float64 array of n for the
 * best distance so far.
 */
export function horizonEvidenceGrid(grid: EvidenceGrid, points: readonly HorizonEvidencePoint[], radiusM: number): Uint8Array {
  const { width, height, cellSizeX: dx, cellSizeY: dy, originX, originY } = grid;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1)
    throw new ScoringInputError(`The grid needs a whole number of rows and columns (got ${width} × ${height}).`);
  if (!(dx > 0) || !(dy > 0) || !Number.isFinite(dx) || !Number.isFinite(dy))
    throw new ScoringInputError(`The grid's cell sizes must be positive (got ${dx} × ${dy} m).`);
  if (!Number.isFinite(originX) || !Number.isFinite(originY))
    throw new ScoringInputError("The grid's origin must be finite coordinates.");
  if (!(radiusM >= 0) || !Number.isFinite(radiusM))
    throw new ScoringInputError(`The evidence radius must be 0 m or more (got ${radiusM}).`, "evidenceRadiusM");
  const n = width * height;
  const out = new Uint8Array(n);
  if (points.length === 0) return out;
  const best = new Float64Array(n).fill(Infinity);
  const r2 = radiusM * radiusM;
  for (let p = 0; p < points.length; p++) {
    const { x, y, state } = points[p];
    if (!Number.isFinite(x) || !Number.isFinite(y))
      throw new ScoringInputError(`Evidence point ${p + 1} has no finite coordinates (${x}, ${y}).`);
    if (state !== "intact" && state !== "truncated")
      throw new ScoringInputError(`Evidence point ${p + 1} must be "intact" or "truncated" (got "${String(state)}").`);
    const code = state === "intact" ? EVIDENCE_INTACT : EVIDENCE_TRUNCATED;
    // cells whose centre lies within [x − r, x + r] × [y − r, y + r]
    const c0 = Math.max(0, Math.ceil((x - radiusM - originX) / dx - 0.5));
    const c1 = Math.min(width - 1, Math.floor((x + radiusM - originX) / dx - 0.5));
    const r0 = Math.max(0, Math.ceil((originY - y - radiusM) / dy - 0.5));
    const r1 = Math.min(height - 1, Math.floor((originY - y + radiusM) / dy - 0.5));
    for (let r = r0; r <= r1; r++) {
      const ey = originY - (r + 0.5) * dy - y;
      const ey2 = ey * ey;
      if (ey2 > r2) continue;
      for (let c = c0; c <= c1; c++) {
        const ex = originX + (c + 0.5) * dx - x;
        const d2 = ex * ex + ey2;
        if (d2 > r2) continue;
        const i = r * width + c;
        const b = best[i];
        if (d2 < b || (d2 === b && code === EVIDENCE_INTACT)) {
          best[i] = d2;
          out[i] = code;
        }
      }
    }
  }
  return out;
}
