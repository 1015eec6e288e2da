/**
 * Polygons onto a grid: which cells a set of (Multi)Polygons covers, by their cell centres — e.g.
 * the surveyed area that validation takes its area shares over (design §5).
 */
import { ScoringInputError } from "./errors.ts";

export interface MaskGrid {
  width: number;
  height: number;
  /** x of the west edge, y of the north edge (rows run southwards) */
  originX: number;
  originY: number;
  cellSizeX: number;
  cellSizeY: number;
}

/** One polygon: its rings (outer first, then holes), each a list of [x, y] in the grid's CRS. */
export type PolygonRings = readonly (readonly (readonly number[])[])[];

/**
 * Common practice, no source (scan-line polygon fill with the even–odd rule, as in any
 * computer-graphics text).
 *
 * Marks 1 in every cell whose centre lies inside at least one of the polygons. Inside a polygon the
 * even–odd rule applies over all its rings, so holes are left out; the polygons are OR-ed. A centre
 * exactly on an edge counts by the half-open rule (y crossing on [y₀, y₁), x to the left of the
 * crossing), so two polygons sharing an edge never both claim a cell.
 * Preconditions: a grid with positive size; rings with at least 3 finite vertices (closed or not) —
 * else {@link ScoringInputError}. Complexity O(H·E + H·E log E + cells) for H rows and E edges.
 */
export function polygonMask(grid: MaskGrid, polygons: readonly PolygonRings[]): Uint8Array {
  const { width, height, originX, originY, cellSizeX, cellSizeY } = grid;
  if (!(width > 0 && height > 0 && cellSizeX > 0 && cellSizeY > 0)) throw new ScoringInputError("A mask needs a grid of positive size.");
  const out = new Uint8Array(width * height);
  const xs: number[] = [];
  for (const [p, rings] of polygons.entries()) {
    for (const [r, ring] of rings.entries()) {
      if (ring.length < 3) throw new ScoringInputError(`Ring ${r + 1} of polygon ${p + 1} has ${ring.length} vertices; a ring needs at least 3.`);
      for (const v of ring) if (!(Number.isFinite(v[0]) && Number.isFinite(v[1]))) throw new ScoringInputError(`Polygon ${p + 1} has a vertex that is not a pair of finite numbers.`);
    }
    for (let row = 0; row < height; row++) {
      const y = originY - (row + 0.5) * cellSizeY;
      xs.length = 0;
      for (const ring of rings) {
        const n = ring.length;
        for (let i = 0; i < n; i++) {
          const a = ring[i];
          const b = ring[(i + 1) % n];
          const ya = a[1];
          const yb = b[1];
          if (ya === yb) continue;
          if ((y >= ya && y < yb) || (y >= yb && y < ya)) xs.push(a[0] + ((y - ya) / (yb - ya)) * (b[0] - a[0]));
        }
      }
      if (xs.length < 2) continue;
      xs.sort((u, v) => u - v);
      for (let k = 0; k + 1 < xs.length; k += 2) {
        // centres x_c = originX + (col + 0.5)·cellSizeX with xs[k] ≤ x_c < xs[k+1]
        const c0 = Math.max(0, Math.ceil((xs[k] - originX) / cellSizeX - 0.5));
        const c1 = Math.min(width - 1, Math.ceil((xs[k + 1] - originX) / cellSizeX - 0.5) - 1);
        const base = row * width;
        for (let c = c0; c <= c1; c++) out[base + c] = 1;
      }
    }
  }
  return out;
}

/**
 * Common practice, no source. The polygons of GeoJSON geometries (Polygon and MultiPolygon; other
 * types are skipped and counted) as rings for {@link polygonMask}. O(vertices).
 */
export function polygonsOfGeometries(geometries: readonly ({ type?: string; coordinates?: unknown } | null | undefined)[]): { polygons: PolygonRings[]; skipped: number } {
  const polygons: PolygonRings[] = [];
  let skipped = 0;
  for (const g of geometries) {
    if (g?.type === "Polygon") polygons.push(g.coordinates as PolygonRings);
    else if (g?.type === "MultiPolygon") for (const p of g.coordinates as PolygonRings[]) polygons.push(p);
    else skipped++;
  }
  return { polygons, skipped };
}
