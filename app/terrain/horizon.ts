/**
 * The buried horizon: sub-bottom picks → a gridded horizon ELEVATION, an unassessed mask, the cover
 * thickness and a flag where the cover is thinner than the profiler can resolve.
 *
 * Gridding is linear interpolation on the Delaunay triangulation of the picks (a TIN):
 * Delaunay, B. (1934) "Sur la sphère vide", Izv. Akad. Nauk SSSR 7, 793–800; built incrementally with
 * Lawson's edge flips: Lawson, C.L. (1977) "Software for C¹ surface interpolation", in Rice, J.R.
 * (ed.) Mathematical Software III, Academic Press, 161–194; point location by walking, Guibas, L. &
 * Stolfi, J. (1985) ACM Transactions on Graphics 4(2), 74–123.
 *
 * Why a TIN: sub-bottom picks are dense along each line (a pick every metre or so) and sparse between
 * lines (tens to hundreds of metres). Triangles then join each pick to its neighbours on the same
 * line and to the nearest picks on the next line, so between lines the horizon is a straight
 * interpolation from line to line, and along a line it keeps the picked detail — no bull's-eyes and
 * no smoothing of the sharp seabed, as distance-weighted or spline gridding of thickness would give.
 * Picks are first merged to one point per grid cell (mean position and mean elevation), which keeps
 * the triangulation to the size of the survey's footprint on the grid.
 *
 * Thickness from two-way travel time: thickness = v · TWT / 2.
 */
import { distanceToNearestLine, type SurveyLine } from "./survey-lines.ts";
import { TerrainInputError, Ticker, assertLayerSize, type GridSpec, type RunControl } from "./grid.ts";

/** (memory) a common default velocity for unconsolidated shelf sediment, m/s */
export const DEFAULT_SEDIMENT_VELOCITY_MPS = 1600;

/**
 * Thickness (m) of a unit from its two-way travel time (ms) and interval velocity (m/s):
 * thickness = v · TWT / 2 (the wave goes down and back; the standard time–depth relation of
 * reflection seismology, no single source). 2.5 ms at 1600 m/s → 2.0 m. Preconditions: finite
 * values (callers check signs). O(1).
 */
export function twtToThicknessM(twtMs: number, velocityMps = DEFAULT_SEDIMENT_VELOCITY_MPS): number {
  return (velocityMps * twtMs) / 2000;
}

/** Sub-bottom picks of one horizon. Exactly one of depthBelowSeabedM and twtMs is given. */
export interface HorizonPicks {
  lineId: ArrayLike<string>;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** depth of the horizon below the seabed, metres, positive down */
  depthBelowSeabedM?: ArrayLike<number>;
  /** two-way travel time from the seabed reflector down to the horizon, milliseconds */
  twtMs?: ArrayLike<number>;
  /** interval velocity per pick (m/s) for twtMs; NaN or absent → options.defaultVelocityMps */
  velocityMps?: ArrayLike<number>;
}

export interface HorizonOptions {
  /** cells farther than this (metres) from any line with picks are unassessed */
  unassessedBeyondM: number;
  /** vertical resolution of the sub-bottom system (metres): thinner cover is flagged */
  verticalResolutionM: number;
  /** velocity for picks in TWT without their own; default 1600 m/s */
  defaultVelocityMps?: number;
  /** consecutive picks on a line farther apart than this (metres) break the line (a gap in the
   * picks: no penetration, gas blanking); default 2 × unassessedBeyondM */
  maxPickGapM?: number;
}

export interface HorizonResult {
  /** horizon elevation, metres relative to present mean sea level; NaN where unassessed */
  elevationM: Float32Array;
  /** 1 = unassessed: beyond the distance limit, outside the picks' triangulation, or no seabed */
  unassessed: Uint8Array;
  /** seabed elevation minus horizon elevation (m, ≥ 0); NaN where unassessed */
  thicknessM: Float32Array;
  /** 1 where assessed and the cover is thinner than the vertical resolution */
  belowResolution: Uint8Array;
  /** distance (m) from each cell centre to the nearest line with picks; null for a horizon given as a grid */
  distanceToLineM: Float32Array | null;
  pickCount: number;
  /** points triangulated after merging picks per cell */
  pointCount: number;
  /** picks dropped because the seabed grid has no value under them */
  picksOnNodata: number;
  /** assessed cells where the interpolated horizon rose above the seabed and was set to the seabed */
  clampedCells: number;
  assessedCells: number;
}

/**
 * Grids a buried horizon's elevation from sub-bottom picks by linear interpolation on their Delaunay
 * triangulation — Delaunay, B. (1934) "Sur la sphère vide", Izv. Akad. Nauk SSSR 7, 793–800, built with
 * the edge flips of Lawson, C.L. (1977) "Software for C¹ surface interpolation", in Mathematical
 * Software III, Academic Press, 161–194 — after converting each pick to an elevation:
 * horizon = seabed(x, y) − thickness, with thickness given in metres or as TWT below the seabed
 * reflector (thickness = v·TWT/2, v per pick or the default 1600 m/s).
 *
 * Preconditions: `seabed` is the analysis grid's seabed elevation (m, up positive, NaN = nodata),
 * sampled bilinearly at each pick (nearest cell where a bilinear neighbour is nodata). Picks in the
 * grid's CRS; picks off the grid or over nodata seabed are dropped and counted. Cells are unassessed
 * (NaN, own class) when farther than `unassessedBeyondM` from a line with picks, outside the
 * triangulation (except cells holding picks, which keep their picks' mean: a lone line is assessed
 * along itself only), or over nodata seabed — never zero cover. Where the interpolated horizon rises above
 * the seabed it is set to the seabed (cover 0) and counted. A negative or non-numeric depth, TWT,
 * velocity or coordinate throws TerrainInputError naming the pick (1-based).
 *
 * Complexity: O(p) to convert p picks; Delaunay of m merged points O(m log m) expected with the
 * spatially sorted insertion used here (O(m²) worst case); O(width·height) for the distance mask and
 * rasterising the triangles. Memory: a few grid-sized arrays (Float32/Uint8/Int32).
 */
export function gridHorizon(
  seabed: Float32Array,
  spec: GridSpec,
  picks: HorizonPicks,
  options: HorizonOptions,
  control?: RunControl,
): HorizonResult {
  assertLayerSize(spec, seabed, "seabed grid");
  const { width, height, originX, originY, cellSizeX: dx, cellSizeY: dy } = spec;
  const n = width * height;
  const p = picks.x.length;
  if (picks.y.length !== p || picks.lineId.length !== p) {
    throw new TerrainInputError(`picks: ${p} x values, ${picks.y.length} y values and ${picks.lineId.length} line ids — they must match`);
  }
  const haveDepth = picks.depthBelowSeabedM !== undefined;
  const haveTwt = picks.twtMs !== undefined;
  if (haveDepth === haveTwt) {
    throw new TerrainInputError("picks must give either the depth below the seabed (m) or the two-way travel time below the seabed reflector (ms), not both or neither");
  }
  if (!(options.unassessedBeyondM > 0)) throw new TerrainInputError(`the unassessed distance must be a positive number of metres, got ${options.unassessedBeyondM}`);
  if (!(options.verticalResolutionM >= 0)) throw new TerrainInputError(`the vertical resolution must be zero or more metres, got ${options.verticalResolutionM}`);
  const vDefault = options.defaultVelocityMps ?? DEFAULT_SEDIMENT_VELOCITY_MPS;
  if (!(vDefault > 0)) throw new TerrainInputError(`the default velocity must be positive m/s, got ${vDefault}`);
  const maxGap = options.maxPickGapM ?? 2 * options.unassessedBeyondM;
  const ticker = new Ticker(control, 4, "horizon", 0, 1, 1); // four stages, reported and checked for cancellation each
  ticker.start();

  // 1. each pick → horizon elevation; merge per cell
  const slot = new Int32Array(n).fill(-1);
  let m = 0;
  const sx: number[] = [];
  const sy: number[] = [];
  const sz: number[] = [];
  const sc: number[] = [];
  let picksOnNodata = 0;
  for (let k = 0; k < p; k++) {
    const x = picks.x[k];
    const y = picks.y[k];
    if (!Number.isFinite(x) || !Number.isFinite(y)) throw new TerrainInputError(`pick ${k + 1} (line ${picks.lineId[k]}): coordinates are not numbers (${x}, ${y})`);
    let thickness: number;
    if (haveDepth) {
      thickness = picks.depthBelowSeabedM![k];
      if (!Number.isFinite(thickness) || thickness < 0) throw new TerrainInputError(`pick ${k + 1} (line ${picks.lineId[k]}): depth below seabed must be a number of metres ≥ 0, got ${thickness}`);
    } else {
      const t = picks.twtMs![k];
      if (!Number.isFinite(t) || t < 0) throw new TerrainInputError(`pick ${k + 1} (line ${picks.lineId[k]}): two-way travel time must be a number of ms ≥ 0, got ${t}`);
      const vk = picks.velocityMps ? picks.velocityMps[k] : NaN;
      if (!Number.isNaN(vk) && !(vk > 0 && Number.isFinite(vk))) throw new TerrainInputError(`pick ${k + 1} (line ${picks.lineId[k]}): velocity must be positive m/s, got ${vk}`);
      thickness = twtToThicknessM(t, Number.isNaN(vk) ? vDefault : vk);
    }
    const fc = (x - originX) / dx - 0.5; // fractional column of cell centres
    const fr = (originY - y) / dy - 0.5;
    const zSeabed = sampleBilinear(seabed, width, height, fc, fr);
    if (Number.isNaN(zSeabed)) {
      picksOnNodata++;
      continue;
    }
    const cell = Math.floor(fr + 0.5) * width + Math.floor(fc + 0.5);
    let s = slot[cell];
    if (s < 0) {
      s = slot[cell] = m++;
      sx.push(0);
      sy.push(0);
      sz.push(0);
      sc.push(0);
    }
    sx[s] += x;
    sy[s] += y;
    sz[s] += zSeabed - thickness;
    sc[s]++;
  }
  ticker.tick(1);
  const px = new Float64Array(m);
  const py = new Float64Array(m);
  const pz = new Float64Array(m);
  for (let s = 0; s < m; s++) {
    px[s] = sx[s] / sc[s];
    py[s] = sy[s] / sc[s];
    pz[s] = sz[s] / sc[s];
  }

  // 2. distance to the nearest line with picks (lines broken at gaps)
  const lines = picksToLines(picks, maxGap);
  const distanceToLineM = distanceToNearestLine(lines, spec);
  ticker.tick(2);

  // 3. triangulate and rasterise the triangles onto the cells within reach
  const elevationM = new Float32Array(n).fill(NaN);
  const tri = m >= 3 ? delaunayTriangles(px, py) : new Int32Array(0);
  const limit = options.unassessedBeyondM;
  for (let t = 0; t < tri.length; t += 3) {
    rasteriseTriangle(tri[t], tri[t + 1], tri[t + 2], px, py, pz, spec, distanceToLineM, limit, seabed, elevationM);
  }
  // cells holding picks but not covered by a triangle (a single line, hull slivers) take their picks' mean
  for (let i = 0; i < n; i++) {
    const sl = slot[i];
    if (sl >= 0 && elevationM[i] !== elevationM[i]) elevationM[i] = pz[sl];
  }
  ticker.tick(3);

  // 4. masks, thickness, clamping
  const unassessed = new Uint8Array(n);
  const thicknessM = new Float32Array(n);
  const belowResolution = new Uint8Array(n);
  let clampedCells = 0;
  let assessedCells = 0;
  const res = options.verticalResolutionM;
  for (let i = 0; i < n; i++) {
    const h = elevationM[i];
    const sb = seabed[i];
    if (h !== h || sb !== sb) {
      unassessed[i] = 1;
      elevationM[i] = NaN;
      thicknessM[i] = NaN;
      continue;
    }
    assessedCells++;
    let th = sb - h;
    if (th < 0) {
      elevationM[i] = sb;
      th = 0;
      clampedCells++;
    }
    thicknessM[i] = th;
    if (th < res) belowResolution[i] = 1;
  }
  ticker.finish();
  return { elevationM, unassessed, thicknessM, belowResolution, distanceToLineM, pickCount: p, pointCount: m, picksOnNodata, clampedCells, assessedCells };
}

/**
 * A horizon supplied as a grid (elevation, m, same grid and datum as the seabed, NaN = unassessed)
 * made into the same result as gridHorizon gives from picks: unassessed where either grid has no
 * value, set to the seabed where it rises above it (counted), cover thickness and the thin-cover flag
 * against `verticalResolutionM`. O(n).
 */
export function horizonFromGrid(seabed: Float32Array, horizonElevationM: Float32Array, verticalResolutionM: number): HorizonResult {
  if (horizonElevationM.length !== seabed.length) {
    throw new TerrainInputError(`the horizon grid has ${horizonElevationM.length} cells but the seabed grid ${seabed.length}: they must be on the same grid`);
  }
  if (!(verticalResolutionM >= 0)) throw new TerrainInputError(`the vertical resolution must be zero or more metres, got ${verticalResolutionM}`);
  const n = seabed.length;
  const elevationM = new Float32Array(n);
  const unassessed = new Uint8Array(n);
  const thicknessM = new Float32Array(n);
  const belowResolution = new Uint8Array(n);
  let assessedCells = 0;
  let clampedCells = 0;
  for (let i = 0; i < n; i++) {
    const h = horizonElevationM[i];
    const sb = seabed[i];
    if (h !== h || sb !== sb) {
      elevationM[i] = NaN;
      thicknessM[i] = NaN;
      unassessed[i] = 1;
      continue;
    }
    assessedCells++;
    let e = h;
    if (e > sb) {
      e = sb;
      clampedCells++;
    }
    elevationM[i] = e;
    thicknessM[i] = sb - e;
    if (sb - e < verticalResolutionM) belowResolution[i] = 1;
  }
  return { elevationM, unassessed, thicknessM, belowResolution, distanceToLineM: null, pickCount: 0, pointCount: 0, picksOnNodata: 0, clampedCells, assessedCells };
}

/** bilinear sample at fractional cell-centre coordinates; nearest cell if a neighbour is nodata; NaN off grid */
function sampleBilinear(z: Float32Array, width: number, height: number, fc: number, fr: number): number {
  const rc = Math.floor(fr + 0.5);
  const cc = Math.floor(fc + 0.5);
  if (rc < 0 || cc < 0 || rc >= height || cc >= width) return NaN;
  const nearest = z[rc * width + cc];
  const c0 = Math.max(0, Math.min(width - 2, Math.floor(fc)));
  const r0 = Math.max(0, Math.min(height - 2, Math.floor(fr)));
  if (width < 2 || height < 2) return nearest;
  const tx = fc - c0; // in [−0.5, 1.5] at the grid edge: linear extrapolation over the outer half-cell
  const ty = fr - r0;
  const a = z[r0 * width + c0];
  const b = z[r0 * width + c0 + 1];
  const c = z[(r0 + 1) * width + c0];
  const d = z[(r0 + 1) * width + c0 + 1];
  if (a !== a || b !== b || c !== c || d !== d) return nearest;
  return (a * (1 - tx) + b * tx) * (1 - ty) + (c * (1 - tx) + d * tx) * ty;
}

/** groups picks into lines in their given order, breaking a line where two picks are farther apart than maxGap */
function picksToLines(picks: HorizonPicks, maxGap: number): SurveyLine[] {
  const byLine = new Map<string, number[]>();
  for (let k = 0; k < picks.x.length; k++) {
    const id = picks.lineId[k];
    let list = byLine.get(id);
    if (!list) byLine.set(id, (list = []));
    list.push(k);
  }
  const out: SurveyLine[] = [];
  const gap2 = maxGap * maxGap;
  for (const [id, idx] of byLine) {
    let xs: number[] = [];
    let ys: number[] = [];
    let part = 0;
    for (const k of idx) {
      const x = picks.x[k];
      const y = picks.y[k];
      if (xs.length > 0) {
        const ex = x - xs[xs.length - 1];
        const ey = y - ys[ys.length - 1];
        if (ex * ex + ey * ey > gap2) {
          out.push({ id: `${id}#${part++}`, x: xs, y: ys });
          xs = [];
          ys = [];
        }
      }
      xs.push(x);
      ys.push(y);
    }
    if (xs.length > 0) out.push({ id: `${id}#${part}`, x: xs, y: ys });
  }
  return out;
}

function rasteriseTriangle(
  a: number, b: number, c: number,
  px: Float64Array, py: Float64Array, pz: Float64Array,
  spec: GridSpec, dist: Float32Array, limit: number, seabed: Float32Array, out: Float32Array,
): void {
  const { width, height, originX, originY, cellSizeX: dx, cellSizeY: dy } = spec;
  const ax = px[a], ay = py[a], bx = px[b], by = py[b], cx = px[c], cy = py[c];
  const det = (by - cy) * (ax - cx) + (cx - bx) * (ay - cy);
  if (det === 0) return;
  const minX = Math.min(ax, bx, cx), maxX = Math.max(ax, bx, cx);
  const minY = Math.min(ay, by, cy), maxY = Math.max(ay, by, cy);
  const c0 = Math.max(0, Math.ceil((minX - originX) / dx - 0.5));
  const c1 = Math.min(width - 1, Math.floor((maxX - originX) / dx - 0.5));
  const r0 = Math.max(0, Math.ceil((originY - maxY) / dy - 0.5));
  const r1 = Math.min(height - 1, Math.floor((originY - minY) / dy - 0.5));
  const eps = -1e-9;
  for (let r = r0; r <= r1; r++) {
    const y = originY - (r + 0.5) * dy;
    for (let col = c0; col <= c1; col++) {
      const i = r * width + col;
      if (!(dist[i] <= limit) || seabed[i] !== seabed[i]) continue;
      const x = originX + (col + 0.5) * dx;
      const l1 = ((by - cy) * (x - cx) + (cx - bx) * (y - cy)) / det;
      const l2 = ((cy - ay) * (x - cx) + (ax - cx) * (y - cy)) / det;
      const l3 = 1 - l1 - l2;
      if (l1 < eps || l2 < eps || l3 < eps) continue;
      out[i] = l1 * pz[a] + l2 * pz[b] + l3 * pz[c];
    }
  }
}

// ---- Delaunay triangulation (incremental, Lawson flips) ------------------------------------------

/**
 * Delaunay triangulation of points — Delaunay, B. (1934) "Sur la sphère vide", Izv. Akad. Nauk SSSR 7,
 * 793–800 — by incremental insertion with the edge flips of Lawson, C.L. (1977) "Software for C¹
 * surface interpolation", Mathematical Software III, 161–194, and point location by a walk (Guibas, L.
 * & Stolfi, J. (1985) ACM Transactions on Graphics 4(2), 74–123), inside a large enclosing triangle
 * whose triangles are dropped at the end. Returns the triangles as counter-clockwise triplets of
 * point indices.
 *
 * Preconditions: finite coordinates; exact duplicate points are skipped (the first is kept). Points
 * are inserted in a spatially sorted (serpentine bin) order so that walks stay short. Arithmetic is in
 * double precision on coordinates scaled to the unit square; flips are made only where both new
 * triangles have positive area, so near-degenerate (e.g. cocircular) input cannot corrupt the mesh. A
 * few slivers along the convex hull may be missing because the enclosing triangle is finite.
 *
 * Complexity: O(m log m) expected for spatially spread points, O(m²) worst case; memory O(m).
 */
export function delaunayTriangles(xs: ArrayLike<number>, ys: ArrayLike<number>): Int32Array {
  const m = xs.length;
  if (m < 3) return new Int32Array(0);
  let minX = Infinity, maxX = -Infinity, minY = Infinity, maxY = -Infinity;
  for (let i = 0; i < m; i++) {
    if (xs[i] < minX) minX = xs[i];
    if (xs[i] > maxX) maxX = xs[i];
    if (ys[i] < minY) minY = ys[i];
    if (ys[i] > maxY) maxY = ys[i];
  }
  const scale = Math.max(maxX - minX, maxY - minY) || 1;
  const cxm = (minX + maxX) / 2;
  const cym = (minY + maxY) / 2;
  const X = new Float64Array(m + 3);
  const Y = new Float64Array(m + 3);
  for (let i = 0; i < m; i++) {
    X[i] = (xs[i] - cxm) / scale;
    Y[i] = (ys[i] - cym) / scale;
  }
  const S = 50; // enclosing triangle, counter-clockwise, far outside the unit square
  X[m] = -S; Y[m] = -S;
  X[m + 1] = S; Y[m + 1] = -S;
  X[m + 2] = 0; Y[m + 2] = S;

  // serpentine bin order keeps consecutive points close, so walks stay short
  const nb = Math.max(1, Math.round(Math.sqrt(m / 8)));
  const key = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const bx = Math.min(nb - 1, Math.floor((X[i] + 0.5) * nb));
    const by = Math.min(nb - 1, Math.floor((Y[i] + 0.5) * nb));
    const col = by % 2 === 0 ? bx : nb - 1 - bx;
    key[i] = (by * nb + col) * 4 + (by % 2 === 0 ? X[i] : -X[i]) + 0.5; // ties broken along the serpentine
  }
  const order = Array.from({ length: m }, (_, i) => i).sort((a, b) => key[a] - key[b]);

  const mesh = new Mesh(X, Y, m);
  for (const p of order) mesh.insert(p);
  return mesh.realTriangles();
}

/** orientation of (a, b, c): > 0 counter-clockwise */
function orient(X: Float64Array, Y: Float64Array, a: number, b: number, c: number): number {
  return (X[b] - X[a]) * (Y[c] - Y[a]) - (Y[b] - Y[a]) * (X[c] - X[a]);
}

/** > 0 when d lies inside the circumcircle of the counter-clockwise triangle (a, b, c) */
function inCircle(X: Float64Array, Y: Float64Array, a: number, b: number, c: number, d: number): number {
  const adx = X[a] - X[d], ady = Y[a] - Y[d];
  const bdx = X[b] - X[d], bdy = Y[b] - Y[d];
  const cdx = X[c] - X[d], cdy = Y[c] - Y[d];
  return (adx * adx + ady * ady) * (bdx * cdy - cdx * bdy) - (bdx * bdx + bdy * bdy) * (adx * cdy - cdx * ady) + (cdx * cdx + cdy * cdy) * (adx * bdy - bdx * ady);
}

const ORIENT_EPS = 1e-13;

/**
 * A triangle mesh in typed arrays: triangle t has vertices tv[3t..3t+2] counter-clockwise and, across
 * its edge k (from vertex k to vertex k+1), the neighbour tn[3t+k] (−1 for none).
 */
class Mesh {
  private readonly tv: Int32Array;
  private readonly tn: Int32Array;
  private nt = 1;
  private last = 0;
  private readonly stack: Int32Array;
  private sp = 0;

  constructor(
    private readonly X: Float64Array,
    private readonly Y: Float64Array,
    private readonly m: number,
  ) {
    const cap = 2 * (m + 3) + 1;
    this.tv = new Int32Array(3 * cap);
    this.tn = new Int32Array(3 * cap).fill(-1);
    this.tv[0] = m;
    this.tv[1] = m + 1;
    this.tv[2] = m + 2;
    this.stack = new Int32Array(2 * cap + 16);
  }

  private setTri(t: number, a: number, b: number, c: number, na: number, nb: number, nc: number): void {
    const tv = this.tv, tn = this.tn;
    tv[3 * t] = a; tv[3 * t + 1] = b; tv[3 * t + 2] = c;
    tn[3 * t] = na; tn[3 * t + 1] = nb; tn[3 * t + 2] = nc;
  }

  private replaceNeighbour(t: number, from: number, to: number): void {
    if (t < 0) return;
    for (let k = 0; k < 3; k++) {
      if (this.tn[3 * t + k] === from) {
        this.tn[3 * t + k] = to;
        return;
      }
    }
  }

  private push(t: number, e: number): void {
    this.stack[this.sp++] = t;
    this.stack[this.sp++] = e;
  }

  /** the triangle holding point p: a walk from the last insertion, else a scan (near-degenerate input) */
  private locate(p: number): number {
    const { X, Y, tv, tn } = this;
    let t = this.last;
    let rot = 0;
    for (let steps = 0; steps <= this.nt + 8; steps++) {
      let moved = false;
      for (let j = 0; j < 3; j++) {
        const k = (j + rot) % 3;
        if (orient(X, Y, tv[3 * t + k], tv[3 * t + ((k + 1) % 3)], p) < -ORIENT_EPS) {
          const u = tn[3 * t + k];
          if (u < 0) break;
          t = u;
          moved = true;
          break;
        }
      }
      if (!moved) return t;
      rot = (rot + 1) % 3;
    }
    let best = 0;
    let bestScore = -Infinity;
    for (let t2 = 0; t2 < this.nt; t2++) {
      const a = tv[3 * t2], b = tv[3 * t2 + 1], c = tv[3 * t2 + 2];
      const sc = Math.min(orient(X, Y, a, b, p), orient(X, Y, b, c, p), orient(X, Y, c, a, p));
      if (sc > bestScore) {
        bestScore = sc;
        best = t2;
      }
    }
    return best;
  }

  /** inserts point p (skipped if it duplicates a vertex), then restores the Delaunay property */
  insert(p: number): void {
    const { X, Y, tv, tn } = this;
    const t = this.locate(p);
    const a0 = tv[3 * t], a1 = tv[3 * t + 1], a2 = tv[3 * t + 2];
    const z0 = Math.abs(orient(X, Y, a0, a1, p)) <= ORIENT_EPS;
    const z1 = Math.abs(orient(X, Y, a1, a2, p)) <= ORIENT_EPS;
    const z2 = Math.abs(orient(X, Y, a2, a0, p)) <= ORIENT_EPS;
    if ((z0 && z1) || (z1 && z2) || (z0 && z2)) return; // duplicate of a vertex
    const onEdge = z0 ? 0 : z1 ? 1 : z2 ? 2 : -1;
    if (onEdge >= 0 && tn[3 * t + onEdge] >= 0) {
      // p on edge a→b of t: split t and its neighbour u across that edge into four
      const k = onEdge;
      const a = tv[3 * t + k], b = tv[3 * t + ((k + 1) % 3)], c = tv[3 * t + ((k + 2) % 3)];
      const nBC = tn[3 * t + ((k + 1) % 3)], nCA = tn[3 * t + ((k + 2) % 3)];
      const u = tn[3 * t + k];
      let f = 0;
      while (f < 3 && !(tv[3 * u + f] === b && tv[3 * u + ((f + 1) % 3)] === a)) f++;
      if (f === 3) return; // inconsistent mesh (not expected): skip the point
      const d = tv[3 * u + ((f + 2) % 3)];
      const nAD = tn[3 * u + ((f + 1) % 3)], nDB = tn[3 * u + ((f + 2) % 3)];
      const T1 = t, T2 = this.nt++, U1 = u, U2 = this.nt++;
      this.setTri(T1, c, a, p, nCA, U1, T2);
      this.setTri(T2, b, c, p, nBC, T1, U2);
      this.setTri(U1, a, d, p, nAD, U2, T1);
      this.setTri(U2, d, b, p, nDB, T2, U1);
      this.replaceNeighbour(nBC, t, T2);
      this.replaceNeighbour(nDB, u, U2);
      this.push(T1, 0); this.push(T2, 0); this.push(U1, 0); this.push(U2, 0);
    } else {
      // p inside t: split it into three
      const n0 = tn[3 * t], n1 = tn[3 * t + 1], n2 = tn[3 * t + 2];
      const T1 = this.nt++, T2 = this.nt++;
      this.setTri(t, a0, a1, p, n0, T1, T2);
      this.setTri(T1, a1, a2, p, n1, T2, t);
      this.setTri(T2, a2, a0, p, n2, t, T1);
      this.replaceNeighbour(n1, t, T1);
      this.replaceNeighbour(n2, t, T2);
      this.push(t, 0); this.push(T1, 0); this.push(T2, 0);
    }
    this.legalise(p);
    this.last = t;
  }

  /** Lawson: flips every queued edge opposite p whose far vertex lies inside p's circumcircle */
  private legalise(p: number): void {
    const { X, Y, tv, tn, stack } = this;
    while (this.sp > 0) {
      let e = stack[--this.sp];
      const t = stack[--this.sp];
      if (tv[3 * t + ((e + 2) % 3)] !== p) {
        e = tv[3 * t] === p ? 1 : tv[3 * t + 1] === p ? 2 : tv[3 * t + 2] === p ? 0 : -1;
        if (e < 0) continue;
      }
      const u = tn[3 * t + e];
      if (u < 0) continue;
      const a = tv[3 * t + e], b = tv[3 * t + ((e + 1) % 3)];
      let f = 0;
      while (f < 3 && !(tv[3 * u + f] === b && tv[3 * u + ((f + 1) % 3)] === a)) f++;
      if (f === 3) continue;
      const q = tv[3 * u + ((f + 2) % 3)];
      if (inCircle(X, Y, a, b, p, q) <= 0) continue;
      // flip only when both new triangles have positive area: near-degenerate input cannot fold the mesh
      if (orient(X, Y, p, a, q) <= 0 || orient(X, Y, p, q, b) <= 0) continue;
      const nBP = tn[3 * t + ((e + 1) % 3)], nPA = tn[3 * t + ((e + 2) % 3)];
      const nAQ = tn[3 * u + ((f + 1) % 3)], nQB = tn[3 * u + ((f + 2) % 3)];
      this.setTri(t, p, a, q, nPA, nAQ, u);
      this.setTri(u, p, q, b, t, nQB, nBP);
      this.replaceNeighbour(nAQ, u, t);
      this.replaceNeighbour(nBP, t, u);
      this.push(t, 1);
      this.push(u, 1);
    }
  }

  /** triangles with no vertex of the enclosing triangle, as triplets of point indices */
  realTriangles(): Int32Array {
    const { tv, m } = this;
    let real = 0;
    for (let t = 0; t < this.nt; t++) if (tv[3 * t] < m && tv[3 * t + 1] < m && tv[3 * t + 2] < m) real++;
    const out = new Int32Array(3 * real);
    let o = 0;
    for (let t = 0; t < this.nt; t++) {
      if (tv[3 * t] < m && tv[3 * t + 1] < m && tv[3 * t + 2] < m) {
        out[o++] = tv[3 * t];
        out[o++] = tv[3 * t + 1];
        out[o++] = tv[3 * t + 2];
      }
    }
    return out;
  }
}

// ---- picks CSV -------------------------------------------------------------------------------------

/**
 * Parses a picks CSV with a header row. Columns (names case-insensitive, any order): `line`, `x`, `y`
 * and either `depth_m` (horizon depth below seabed, metres) or `twt_ms` (two-way time below the
 * seabed reflector, ms) with an optional `velocity_mps`; other columns are ignored. Throws
 * TerrainInputError naming the row (1-based, header = row 1) and column of the first bad value. Signs
 * and ranges are checked by gridHorizon. O(k) for k rows.
 */
export function parsePicksCsv(text: string): HorizonPicks {
  const rows = text.split(/\r?\n/).filter((l) => l.trim() !== "");
  if (rows.length < 2) throw new TerrainInputError("picks CSV: needs a header row and at least one pick");
  const header = rows[0].split(",").map((h) => h.trim().toLowerCase());
  const col = (name: string) => header.indexOf(name);
  const iLine = col("line"), iX = col("x"), iY = col("y"), iDepth = col("depth_m"), iTwt = col("twt_ms"), iV = col("velocity_mps");
  for (const [name, i] of [["line", iLine], ["x", iX], ["y", iY]] as const) {
    if (i < 0) throw new TerrainInputError(`picks CSV: no "${name}" column in the header (found: ${header.join(", ")})`);
  }
  if ((iDepth < 0) === (iTwt < 0)) throw new TerrainInputError('picks CSV: give exactly one of the columns "depth_m" and "twt_ms"');
  const k = rows.length - 1;
  const lineId: string[] = new Array(k);
  const x = new Float64Array(k), y = new Float64Array(k), val = new Float64Array(k);
  const vel = iV >= 0 ? new Float64Array(k) : undefined;
  const num = (cells: string[], i: number, row: number, name: string, optional = false): number => {
    const s = (cells[i] ?? "").trim();
    if (s === "" && optional) return NaN;
    const v = Number(s);
    if (s === "" || !Number.isFinite(v)) throw new TerrainInputError(`picks CSV row ${row}, column "${name}": "${s}" is not a number`);
    return v;
  };
  for (let r = 1; r < rows.length; r++) {
    const cells = rows[r].split(",");
    const id = (cells[iLine] ?? "").trim();
    if (id === "") throw new TerrainInputError(`picks CSV row ${r + 1}, column "line": empty line id`);
    lineId[r - 1] = id;
    x[r - 1] = num(cells, iX, r + 1, "x");
    y[r - 1] = num(cells, iY, r + 1, "y");
    val[r - 1] = num(cells, iDepth >= 0 ? iDepth : iTwt, r + 1, iDepth >= 0 ? "depth_m" : "twt_ms");
    if (vel) vel[r - 1] = num(cells, iV, r + 1, "velocity_mps", true);
  }
  return iDepth >= 0 ? { lineId, x, y, depthBelowSeabedM: val } : { lineId, x, y, twtMs: val, velocityMps: vel };
}
