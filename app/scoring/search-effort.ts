/**
 * The search-effort mask the trained model's background is drawn from (design §4, issue 10): cells
 * whose centre lies within a corridor of a survey line, or within a radius of a core. After
 * Phillips, S.J. et al. (2009) "Sample selection bias and presence-only distribution models",
 * Ecological Applications 19(1), 181–197 (a target-group background from where searches happened);
 * the rasterising of buffers by cell centre is common practice, no source.
 */
import { ScoringInputError } from "./errors.ts";
import { polygonMask, type PolygonRings } from "./polygon-mask.ts";

export interface EffortGrid {
  width: number;
  height: number;
  /** x of the grid's left edge and y of its top edge, project CRS (m) */
  originX: number;
  originY: number;
  cellSizeX: number;
  cellSizeY: number;
}

export interface SearchEffort {
  /** 1 where searched, 0 elsewhere */
  mask: Uint8Array;
  /** cells marked by each source (a cell in both counts in both) */
  lineCells: number;
  coreCells: number;
  /** cells whose centre lies inside a dredging (or other searched) area */
  areaCells: number;
  /** cells marked in all */
  cells: number;
}

/**
 * Phillips et al. (2009), Ecological Applications 19(1) (target-group background); buffering by cell
 * centre is common practice, no source.
 *
 * Marks every cell whose centre lies within `corridorM` of a survey line (polylines, vertices in the
 * project CRS), within `radiusM` of a core position, or inside one of `areas` (polygons where
 * material was searched or recovered, e.g. dredging areas; by cell centre, see polygonMask). Row r, column c has its centre at
 * (originX + (c + ½)·cellSizeX, originY − (r + ½)·cellSizeY). Lines and cores wholly outside the grid
 * mark nothing; non-finite vertices are skipped (they break a line in two).
 * Preconditions: positive grid sizes; corridor and radius finite and ≥ 0 — else
 * {@link ScoringInputError}. Complexity O(Σ cells in each segment's or core's bounding box), no
 * per-cell allocation.
 */
export function searchEffortMask(
  grid: EffortGrid,
  input: { lines: readonly (readonly (readonly [number, number])[])[]; corridorM: number; cores: readonly (readonly [number, number])[]; radiusM: number; areas?: readonly PolygonRings[] },
): SearchEffort {
  const { width, height, originX, originY, cellSizeX, cellSizeY } = grid;
  if (!(width >= 1 && height >= 1 && cellSizeX > 0 && cellSizeY > 0)) throw new ScoringInputError("The grid for the search-effort mask must have a positive size and cell size.");
  if (!(Number.isFinite(input.corridorM) && input.corridorM >= 0)) throw new ScoringInputError(`The survey-line corridor must be a distance ≥ 0 m (got ${input.corridorM}).`, "surveyCorridorM");
  if (!(Number.isFinite(input.radiusM) && input.radiusM >= 0)) throw new ScoringInputError(`The cored-area radius must be a distance ≥ 0 m (got ${input.radiusM}).`, "coreRadiusM");
  const mask = new Uint8Array(width * height);
  let lineCells = 0;
  let coreCells = 0;
  // marks cells within d of segment (ax, ay)–(bx, by); a point when a = b
  const markSegment = (ax: number, ay: number, bx: number, by: number, d: number, bit: number): number => {
    const c0 = Math.max(0, Math.floor((Math.min(ax, bx) - d - originX) / cellSizeX));
    const c1 = Math.min(width - 1, Math.floor((Math.max(ax, bx) + d - originX) / cellSizeX));
    const r0 = Math.max(0, Math.floor((originY - Math.max(ay, by) - d) / cellSizeY));
    const r1 = Math.min(height - 1, Math.floor((originY - Math.min(ay, by) + d) / cellSizeY));
    const dx = bx - ax;
    const dy = by - ay;
    const len2 = dx * dx + dy * dy;
    const d2 = d * d;
    let marked = 0;
    for (let r = r0; r <= r1; r++) {
      const y = originY - (r + 0.5) * cellSizeY;
      for (let c = c0; c <= c1; c++) {
        const x = originX + (c + 0.5) * cellSizeX;
        let t = len2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / len2 : 0;
        if (t < 0) t = 0;
        else if (t > 1) t = 1;
        const ex = ax + t * dx - x;
        const ey = ay + t * dy - y;
        if (ex * ex + ey * ey <= d2) {
          const i = r * width + c;
          if ((mask[i] & bit) === 0) {
            mask[i] |= bit;
            marked++;
          }
        }
      }
    }
    return marked;
  };
  for (const line of input.lines) {
    let prev: readonly [number, number] | null = null;
    for (const v of line) {
      if (!Number.isFinite(v[0]) || !Number.isFinite(v[1])) {
        prev = null;
        continue;
      }
      lineCells += markSegment(prev ? prev[0] : v[0], prev ? prev[1] : v[1], v[0], v[1], input.corridorM, 1);
      prev = v;
    }
  }
  for (const p of input.cores) if (Number.isFinite(p[0]) && Number.isFinite(p[1])) coreCells += markSegment(p[0], p[1], p[0], p[1], input.radiusM, 2);
  let areaCells = 0;
  if (input.areas && input.areas.length > 0) {
    const inside = polygonMask(grid, input.areas);
    for (let i = 0; i < inside.length; i++)
      if (inside[i]) {
        mask[i] |= 4;
        areaCells++;
      }
  }
  let cells = 0;
  for (let i = 0; i < mask.length; i++) {
    if (mask[i] !== 0) {
      mask[i] = 1;
      cells++;
    }
  }
  return { mask, lineCells, coreCells, areaCells, cells };
}
