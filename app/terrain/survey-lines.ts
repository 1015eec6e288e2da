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
 * Marks (sets to 1) every cell that a line segment passes through, by the grid traversal of
 * Amanatides, J. & Woo, A. (1987) "A Fast Voxel Traversal Algorithm for Ray Tracing", Eurographics '87, 3–10: the walk steps from cell to cell along the segment, crossing one
 * cell boundary at a time.
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
 * Distance (metres) from every cell centre to the nearest cell a survey line passes through:
 * Amanatides, J. & Woo, A. (1987) "A Fast Voxel Traversal Algorithm for Ray Tracing", Eurographics '87, 3–10, for the rasterising;
 * Felzenszwalb, P.F. & Huttenlocher, D.P. (2012) "Distance Transforms of Sampled Functions", Theory of
 * Computing 8(19), 415–428, doi:10.4086/toc.2012.v008a019, for the exact Euclidean transform.
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

/**
 * Parses line navigation from CSV with a header: `line`, `x`, `y` (project-CRS metres) and optionally
 * `fix`; other columns are ignored. Fixes keep the file's order within a line, or are sorted by `fix`
 * (numerically) when that column is given. Throws TerrainInputError naming the row (1-based, header =
 * row 1) and column of the first bad value. O(k log k) for k fixes.
 */
export function parseSurveyLinesCsv(text: string): SurveyLine[] {
  const rows = text.split(/\r?\n/).filter((l) => l.trim() !== "");
  if (rows.length < 2) throw new TerrainInputError("survey lines CSV: needs a header row and at least one fix");
  const header = rows[0].split(",").map((h) => h.trim().toLowerCase());
  const iLine = header.indexOf("line"), iX = header.indexOf("x"), iY = header.indexOf("y"), iFix = header.indexOf("fix");
  for (const [name, i] of [["line", iLine], ["x", iX], ["y", iY]] as const) {
    if (i < 0) throw new TerrainInputError(`survey lines CSV: no "${name}" column in the header (found: ${header.join(", ")})`);
  }
  const byLine = new Map<string, { fix: number; x: number; y: number }[]>();
  for (let r = 1; r < rows.length; r++) {
    const cells = rows[r].split(",");
    const id = (cells[iLine] ?? "").trim();
    if (id === "") throw new TerrainInputError(`survey lines CSV row ${r + 1}, column "line": empty line id`);
    const val = (i: number, name: string) => {
      const s = (cells[i] ?? "").trim();
      const v = Number(s);
      if (s === "" || !Number.isFinite(v)) throw new TerrainInputError(`survey lines CSV row ${r + 1}, column "${name}": "${s}" is not a number`);
      return v;
    };
    const fix = iFix >= 0 ? val(iFix, "fix") : r;
    let list = byLine.get(id);
    if (!list) byLine.set(id, (list = []));
    list.push({ fix, x: val(iX, "x"), y: val(iY, "y") });
  }
  const out: SurveyLine[] = [];
  for (const [id, fixes] of byLine) {
    if (iFix >= 0) fixes.sort((a, b) => a.fix - b.fix);
    out.push({ id, x: fixes.map((f) => f.x), y: fixes.map((f) => f.y) });
  }
  return out;
}

/**
 * Lines from GeoJSON text (RFC 7946 structure, coordinates already in the project CRS): LineString or
 * MultiLineString features; the line id is the feature's `line` or `id` property, else its position.
 * Used for survey lines and for mapped palaeochannel centre-lines (`what` names them in errors).
 * Throws TerrainInputError for other geometry types or malformed JSON. O(fixes).
 */
export function parseSurveyLinesGeoJson(text: string, what = "survey lines"): SurveyLine[] {
  let gj: { type?: string; features?: { id?: string | number; properties?: Record<string, unknown> | null; geometry?: { type: string; coordinates: unknown } | null }[] };
  try {
    gj = JSON.parse(text);
  } catch (e) {
    throw new TerrainInputError(`${what}: not valid JSON (${(e as Error).message})`);
  }
  const features = gj.type === "FeatureCollection" ? (gj.features ?? []) : [{ geometry: gj as { type: string; coordinates: unknown } }];
  const out: SurveyLine[] = [];
  features.forEach((f, k) => {
    const g = f.geometry;
    if (!g) return;
    const id = String(f.properties?.line ?? f.properties?.id ?? f.id ?? k + 1);
    const parts = g.type === "LineString" ? [g.coordinates as number[][]] : g.type === "MultiLineString" ? (g.coordinates as number[][][]) : null;
    if (!parts) throw new TerrainInputError(`${what}: feature ${k + 1} (${id}) is a ${g.type}; give LineStrings`);
    parts.forEach((c, j) => out.push({ id: parts.length > 1 ? `${id}#${j + 1}` : id, x: c.map((p) => p[0]), y: c.map((p) => p[1]) }));
  });
  return out;
}
