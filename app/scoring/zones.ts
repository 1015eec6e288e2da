/**
 * Exclusion and mitigation zones (design §7, issue 12; check-values.md "Facts of the trade"):
 *   - exclusion zones around discrete features — wrecks, anomalies judged archaeological, find
 *     spots — from their mapped extent plus position uncertainty plus the buffer the reviewer sets;
 *   - graded mitigation (targeted survey, coring, watching brief, finds-reporting protocol) from the
 *     classes of modelled potential — never exclusion: modelled prehistoric potential leads to graded
 *     mitigation, not exclusion (check-values.md, practice);
 *   - the rule that grades the mitigation of a development asset by its potential class and by
 *     whether its impact depth reaches the preserved horizon (the conflict table).
 *
 * Pure: coordinates in the project's projected CRS (metres) in and out; the server turns them into
 * WGS 84 for GeoJSON.
 *
 * Buffers: turf (@turf/turf `buffer`) works on longitude/latitude and buffers in an azimuthal
 * equidistant plane centred on the feature. We hand it the feature in a *local frame*: projected
 * metres offset from the feature's centre and divided by turf's earth radius, read as degrees near
 * (0°, 0°). Turf's equidistant plane at the origin then coincides with our projected plane up to
 * relative terms of order (d / R)² — below 1e-5 for features tens of kilometres across — and we map
 * the result back the same way. So a buffer of r metres is r metres in the project CRS (the plane
 * every layer is analysed in), without the ellipsoid-versus-sphere error a round trip through WGS 84
 * would bring. Arcs use 16 segments per quarter circle (64 per circle): the area of a buffered point
 * is 99.84 % of π r².
 */
import { buffer as turfBuffer } from "@turf/turf";
import { ScoringInputError } from "./errors.ts";
import type { ProjectClassification } from "./classification.ts";
import type { PlacedGrid, Ring } from "./block-figures.ts";

// ---------------------------------------------------------------------------------------------
// Geometry types (project CRS)

export type Position = number[];
export type Geometry =
  | { type: "Point"; coordinates: Position }
  | { type: "MultiPoint"; coordinates: Position[] }
  | { type: "LineString"; coordinates: Position[] }
  | { type: "MultiLineString"; coordinates: Position[][] }
  | { type: "Polygon"; coordinates: Position[][] }
  | { type: "MultiPolygon"; coordinates: Position[][][] };
export type AreaOut = { type: "Polygon"; coordinates: Position[][] } | { type: "MultiPolygon"; coordinates: Position[][][] };

/** turf's earth radius (m), which its equidistant projection uses */
const TURF_EARTH_RADIUS_M = 6371008.8;
/** segments per quarter circle */
export const BUFFER_QUADRANT_SEGMENTS = 16;

function mapPositions(coords: unknown, f: (p: Position) => Position): unknown {
  if (Array.isArray(coords) && typeof coords[0] === "number") return f(coords as Position);
  return (coords as unknown[]).map((c) => mapPositions(c, f));
}

function eachPosition(coords: unknown, f: (p: Position) => void): void {
  if (Array.isArray(coords) && typeof coords[0] === "number") f(coords as Position);
  else for (const c of coords as unknown[]) eachPosition(c, f);
}

/**
 * Planar buffer in the project CRS, by turf in a local frame (module comment: why and how exact).
 *
 * Source: the buffer operation of JSTS, as wrapped by @turf/turf `buffer`; common practice.
 * Returns the (Multi)Polygon of points within `distanceM` of the geometry (round caps and joins;
 * overlapping parts merged). Distance 0 returns a polygon unchanged, and refuses points and lines
 * (they have no area). Preconditions: finite coordinates; distanceM ≥ 0 and finite, else
 * {@link ScoringInputError}. O(v log v) for v vertices.
 */
export function planarBuffer(geometry: Geometry, distanceM: number): AreaOut {
  if (!(distanceM >= 0) || !Number.isFinite(distanceM)) throw new ScoringInputError(`A buffer must be a finite number of metres ≥ 0 (got ${distanceM}).`);
  if (distanceM === 0) {
    if (geometry.type === "Polygon" || geometry.type === "MultiPolygon") return geometry;
    throw new ScoringInputError(`A ${geometry.type} buffered by 0 m has no area: give it a buffer.`);
  }
  let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
  eachPosition(geometry.coordinates, (p) => {
    if (!Number.isFinite(p[0]) || !Number.isFinite(p[1])) throw new ScoringInputError("A feature has a position that is not a pair of finite numbers.");
    if (p[0] < minX) minX = p[0];
    if (p[0] > maxX) maxX = p[0];
    if (p[1] < minY) minY = p[1];
    if (p[1] > maxY) maxY = p[1];
  });
  if (minX === Infinity) throw new ScoringInputError(`A ${geometry.type} with no positions cannot be buffered.`);
  const cx = (minX + maxX) / 2;
  const cy = (minY + maxY) / 2;
  const toDeg = 180 / Math.PI / TURF_EARTH_RADIUS_M;
  const local = { type: geometry.type, coordinates: mapPositions(geometry.coordinates, (p) => [(p[0] - cx) * toDeg, (p[1] - cy) * toDeg]) };
  const out = turfBuffer(local as Parameters<typeof turfBuffer>[0], distanceM, { units: "meters", steps: BUFFER_QUADRANT_SEGMENTS }) as unknown as { geometry: AreaOut } | undefined;
  if (!out || !out.geometry) throw new ScoringInputError(`The ${geometry.type} could not be buffered (is it empty?).`);
  const g = out.geometry;
  return { type: g.type, coordinates: mapPositions(g.coordinates, (p) => [cx + p[0] / toDeg, cy + p[1] / toDeg]) } as AreaOut;
}

// ---------------------------------------------------------------------------------------------
// Exclusion zones

/** The kinds of discrete feature an exclusion zone is drawn around, with the reviewer's buffer for each. */
export const EXCLUSION_FEATURE_KINDS = ["wreck", "anomaly", "find_spot"] as const;
export type ExclusionFeatureKind = (typeof EXCLUSION_FEATURE_KINDS)[number];
export type ExclusionBuffers = Record<ExclusionFeatureKind, number>;

/**
 * The buffers before a reviewer sets any (check-values.md, practice: "commonly with a 50 m buffer,
 * often 100 m or more around wrecks; the regulator sets the figure").
 */
export const DEFAULT_EXCLUSION_BUFFERS_M: ExclusionBuffers = { wreck: 100, anomaly: 50, find_spot: 50 };
export const MAX_EXCLUSION_BUFFER_M = 5000;

export const EXCLUSION_KIND_LABELS: Record<ExclusionFeatureKind, string> = {
  wreck: "Wreck",
  anomaly: "Anomaly judged archaeological",
  find_spot: "Find spot (known site)",
};

export interface DiscreteFeature {
  kind: ExclusionFeatureKind;
  /** where it came from, in words (dataset name, "known sites") */
  source: string;
  /** a label for people (a wreck's name, a site id, "anomaly 3") */
  label: string;
  /** mapped extent: a point, line or polygon in the project CRS */
  geometry: Geometry;
  /** position uncertainty (m): a site's precision, a feature's stated uncertainty, else 0 */
  positionUncertaintyM: number;
  /** the buffer the data came with (m), if any: the zone is never narrower than it */
  dataBufferM?: number | null;
}

export interface ExclusionZone {
  feature: Omit<DiscreteFeature, "geometry">;
  /** the reviewer's buffer for the kind */
  reviewerBufferM: number;
  /** the buffer used: the reviewer's, or the data's own when wider */
  bufferM: number;
  /** total distance from the mapped extent: position uncertainty + buffer */
  distanceM: number;
  geometry: AreaOut;
}

/**
 * Practice (check-values.md "Facts of the trade"): the zone is the feature's mapped extent grown by
 * its position uncertainty plus the buffer — the reviewer's for its kind, or the buffer the data
 * came with when that is wider (a reviewer's default never shrinks a buffer already required).
 * Preconditions: buffers ≥ 0; uncertainty ≥ 0 (negative or NaN is taken as 0); a point or line
 * needs a total distance > 0. O(v log v).
 */
export function exclusionZone(feature: DiscreteFeature, buffers: ExclusionBuffers): ExclusionZone {
  const reviewerBufferM = buffers[feature.kind];
  const dataBuffer = feature.dataBufferM != null && feature.dataBufferM > 0 ? feature.dataBufferM : 0;
  const bufferM = Math.max(reviewerBufferM, dataBuffer);
  const uncertainty = feature.positionUncertaintyM > 0 ? feature.positionUncertaintyM : 0;
  const distanceM = uncertainty + bufferM;
  const { geometry, ...rest } = feature;
  return { feature: { ...rest, positionUncertaintyM: uncertainty }, reviewerBufferM, bufferM, distanceM, geometry: planarBuffer(geometry, distanceM) };
}

// ---------------------------------------------------------------------------------------------
// Mitigation

/** Graded mitigation, strongest first. Each grade includes the ones below it. */
export const MITIGATION_MEASURES = [
  { id: "targeted_survey", label: "Targeted survey", text: "Targeted high-resolution survey (sub-bottom and seabed) of the area before works, to find surviving land surfaces; its results decide coring and design changes." },
  { id: "coring", label: "Coring", text: "Geoarchaeological cores through the cover into the preserved horizon before works, assessed and dated." },
  { id: "watching_brief", label: "Watching brief", text: "An archaeologist watches the works and the sediment they bring up, with the power to pause them." },
  { id: "finds_protocol", label: "Finds-reporting protocol", text: "The contractor reports chance finds under a finds-reporting protocol; work stops around a find until it is assessed." },
] as const;
export type MitigationId = (typeof MITIGATION_MEASURES)[number]["id"];
const LEVEL_OF: Record<MitigationId, number> = { targeted_survey: 0, coring: 1, watching_brief: 2, finds_protocol: 3 };

/**
 * Practice (check-values.md: modelled potential leads to graded mitigation, not exclusion); the
 * spreading of classes over grades is ours, no source.
 *
 * The grade for potential class `c` (0 = highest) of `k` classes: the highest class gets targeted
 * survey, the lowest the finds-reporting protocol, the classes between spread evenly over the four
 * grades (grade = round(3c / (k − 1))). With 4 classes: survey, coring, watching brief, protocol.
 * Preconditions: k ≥ 2, 0 ≤ c < k. O(1).
 */
export function mitigationForClass(c: number, k: number): MitigationId {
  if (!(k >= 2) || !(c >= 0 && c < k)) throw new ScoringInputError(`Class ${c} is not one of ${k} classes.`);
  return MITIGATION_MEASURES[Math.round((3 * c) / (k - 1))].id;
}

/** Whether an asset's works reach the preserved horizon. */
export type Reach = "reaches" | "may_reach" | "stays_above" | "unassessed";
export const REACH_LABELS: Record<Reach, string> = { reaches: "reaches", may_reach: "may reach", stays_above: "stays above", unassessed: "unassessed" };

/** Vertical margin (m) within which works "may reach" the horizon: the horizon's depth is known to about a metre (picks, velocity). Common practice, no source. */
export const DEFAULT_REACH_MARGIN_M = 1;

/**
 * Common practice, no source — the regulator's question (design §7): do the works reach the surviving land surface?
 *
 * From the impact depth below seabed and the cover (depth to the preserved horizon) under the asset
 * and its buffer: "unassessed" if no cell there has an assessed horizon; "reaches" if the impact
 * depth is at least the shallowest assessed cover (the works cut into the horizon somewhere);
 * "may reach" if it comes within `marginM` of it, or if part of the footprint is unassessed (the
 * horizon may be shallower there); else "stays above".
 * Preconditions: impactDepthM ≥ 0; minCoverM null exactly when no cell is assessed. O(1).
 */
export function impactReach(impactDepthM: number, minCoverM: number | null, unassessedShare: number, marginM = DEFAULT_REACH_MARGIN_M): Reach {
  if (minCoverM === null) return "unassessed";
  if (impactDepthM >= minCoverM) return "reaches";
  if (impactDepthM >= minCoverM - marginM || unassessedShare > 0) return "may_reach";
  return "stays_above";
}

/**
 * Our rule (no source), stated on the page beside the table:
 *   - horizon unassessed under the asset → targeted survey (to assess it before works);
 *   - works stay above the horizon → finds-reporting protocol;
 *   - works reach it → the grade of the highest potential class under the asset and its buffer
 *     ({@link mitigationForClass}); with no scored cell there (sea or lake at the scored age), a
 *     watching brief;
 *   - works may reach it → one grade milder than if they reached it (never below the protocol).
 * O(1).
 */
export function assetMitigation(reach: Reach, highestClass: number | null, k: number): MitigationId {
  if (reach === "unassessed") return "targeted_survey";
  if (reach === "stays_above") return "finds_protocol";
  const full = highestClass === null ? LEVEL_OF.watching_brief : LEVEL_OF[mitigationForClass(highestClass, k)];
  const level = reach === "reaches" ? full : Math.min(3, full + 1);
  return MITIGATION_MEASURES[level].id;
}

// ---------------------------------------------------------------------------------------------
// Vectorising class regions

export interface CellPolygon {
  /** exterior ring, counter-clockwise (x east, y north), as flat [col, row, col, row, …] cell-corner coordinates, not closed */
  outer: number[];
  /** holes, clockwise */
  holes: number[][];
  /** cells inside */
  areaCells: number;
}

function ringArea(flat: number[]): number {
  // shoelace in map orientation (x = col, y = −row)
  let s = 0;
  const m = flat.length / 2;
  for (let i = 0; i < m; i++) {
    const j = (i + 1) % m;
    s += flat[2 * i] * -flat[2 * j + 1] - flat[2 * j] * -flat[2 * i + 1];
  }
  return s / 2;
}

function inRing(flat: number[], x: number, y: number): boolean {
  let inside = false;
  const m = flat.length / 2;
  for (let i = 0, j = m - 1; i < m; j = i++) {
    const xi = flat[2 * i], yi = flat[2 * i + 1], xj = flat[2 * j], yj = flat[2 * j + 1];
    if (yi > y !== yj > y && x < xi + ((y - yi) * (xj - xi)) / (yj - yi)) inside = !inside;
  }
  return inside;
}

/**
 * Common practice, no source (boundary tracing along cell edges).
 *
 * The polygons of the cells marked 1 in `inside`, traced along cell edges (exact: the union of the
 * cells, no smoothing), exteriors counter-clockwise and holes clockwise (RFC 7946's right-hand
 * rule once y points north). Cells touching only at a corner are separate polygons (regions are
 * 4-connected). Collinear vertices are dropped. Each hole goes to the smallest exterior around it.
 * Preconditions: `inside` has width × height cells, row 0 north. Complexity O(n) to trace plus
 * O(holes × exteriors) bounding-box checks to place holes.
 */
export function traceCellPolygons(inside: Uint8Array, width: number, height: number): CellPolygon[] {
  if (inside.length !== width * height) throw new ScoringInputError(`The mask has ${inside.length} cells, the grid ${width * height}.`);
  const W = width + 1;
  const nv = W * (height + 1);
  const out1 = new Int32Array(nv).fill(-1);
  const out2 = new Int32Array(nv).fill(-1);
  const at = (c: number, r: number) => (c >= 0 && r >= 0 && c < width && r < height ? inside[r * width + c] : 0);
  const add = (c0: number, r0: number, c1: number, r1: number) => {
    const a = r0 * W + c0;
    const b = r1 * W + c1;
    if (out1[a] < 0) out1[a] = b;
    else out2[a] = b;
  };
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      if (!inside[r * width + c]) continue;
      if (!at(c, r + 1)) add(c, r + 1, c + 1, r + 1); // bottom, eastward
      if (!at(c + 1, r)) add(c + 1, r + 1, c + 1, r); // right, northward
      if (!at(c, r - 1)) add(c + 1, r, c, r); // top, westward
      if (!at(c - 1, r)) add(c, r, c, r + 1); // left, southward
    }
  }
  const rings: number[][] = [];
  for (let start = 0; start < nv; start++) {
    if (out1[start] < 0 || out2[start] >= 0) continue; // start only at a vertex with one way out (every ring has one)
    let v = start;
    const ring: number[] = [];
    let dcPrev = 0, drPrev = 0;
    for (let guard = 0; guard <= 4 * nv; guard++) {
      let next: number;
      if (out2[v] >= 0 && out1[v] >= 0) {
        // a saddle: take the left turn (map orientation), which keeps to the cell we are walking round
        const c = v % W, r = (v - c) / W;
        const n1 = out1[v], n2 = out2[v];
        const d1c = (n1 % W) - c, d1r = Math.floor(n1 / W) - r;
        // cross product in map coordinates (y = −row): in × out
        const cross = dcPrev * -d1r - -drPrev * d1c;
        if (cross > 0) {
          next = n1;
          out1[v] = n2;
          out2[v] = -1;
        } else {
          next = n2;
          out2[v] = -1;
        }
      } else if (out1[v] >= 0) {
        next = out1[v];
        out1[v] = -1;
      } else break;
      const c = v % W, r = (v - c) / W;
      const nc = next % W, nr = (next - nc) / W;
      const dc = nc - c, dr = nr - r;
      if (dc !== dcPrev || dr !== drPrev || ring.length === 0) ring.push(c, r);
      dcPrev = dc;
      drPrev = dr;
      v = next;
      if (v === start) break;
    }
    // the start vertex may be collinear with its neighbours: drop it then
    if (ring.length >= 6) {
      const m = ring.length / 2;
      const [x0, y0, x1, y1, xl, yl] = [ring[0], ring[1], ring[2], ring[3], ring[2 * m - 2], ring[2 * m - 1]];
      if ((x1 - x0) * (y0 - yl) - (y1 - y0) * (x0 - xl) === 0) ring.splice(0, 2);
    }
    rings.push(ring);
  }
  const outers: { ring: number[]; area: number; box: [number, number, number, number]; holes: number[][] }[] = [];
  const holes: number[][] = [];
  const box = (flat: number[]): [number, number, number, number] => {
    let a = Infinity, b = Infinity, c = -Infinity, d = -Infinity;
    for (let i = 0; i < flat.length; i += 2) {
      a = Math.min(a, flat[i]);
      b = Math.min(b, flat[i + 1]);
      c = Math.max(c, flat[i]);
      d = Math.max(d, flat[i + 1]);
    }
    return [a, b, c, d];
  };
  for (const ring of rings) {
    const area = ringArea(ring);
    if (area > 0) outers.push({ ring, area, box: box(ring), holes: [] });
    else holes.push(ring);
  }
  outers.sort((a, b) => a.area - b.area);
  for (const h of holes) {
    // a point a quarter cell to the left of the hole's first edge lies in a cell of the region around it
    const dc = Math.sign(h[2] - h[0]);
    const dr = Math.sign(h[3] - h[1]);
    // left of travel in map orientation is (−dy, dx) with dy = −dr → (dr, dc) in map = (dr, −dc) in grid
    const px = (h[0] + h[2]) / 2 + 0.25 * dr;
    const py = (h[1] + h[3]) / 2 - 0.25 * dc;
    const owner = outers.find((o) => px > o.box[0] && px < o.box[2] && py > o.box[1] && py < o.box[3] && inRing(o.ring, px, py));
    if (owner) owner.holes.push(h);
  }
  return outers.map((o) => ({ outer: o.ring, holes: o.holes, areaCells: o.area + o.holes.reduce((s, h) => s + ringArea(h), 0) }));
}

/** Cell-corner polygons placed in the project CRS as GeoJSON-style rings (closed). O(vertices). */
export function placeCellPolygons(polys: CellPolygon[], grid: PlacedGrid): Position[][][] {
  const place = (flat: number[]): Position[] => {
    const ring: Position[] = [];
    for (let i = 0; i < flat.length; i += 2) ring.push([grid.originX + flat[i] * grid.cellSizeX, grid.originY - flat[i + 1] * grid.cellSizeY]);
    ring.push(ring[0]);
    return ring;
  };
  return polys.map((p) => [place(p.outer), ...p.holes.map(place)]);
}

export interface MitigationZone {
  measure: MitigationId;
  label: string;
  text: string;
  /** why: the potential classes it covers, or "horizon unassessed" */
  basis: string;
  classes: string[];
  cells: number;
  areaKm2: number;
  /** MultiPolygon coordinates in the project CRS */
  coordinates: Position[][][];
}

/**
 * Mitigation zones from potential classes ({@link mitigationForClass}) plus a targeted-survey zone
 * where the horizon is unassessed (to assess it before works). Classes that share a grade are one
 * zone. Never "exclusion": modelled potential leads to graded mitigation (check-values.md, practice).
 * Cells with no class and not unassessed (sea or lake at the scored age, outside the surface) get
 * no zone.
 * Preconditions: `classes` from classifyRaster (255 = no class), `unassessed` 1/0 or null, both of
 * the grid's size. O(n) per zone plus tracing.
 */
export function mitigationZones(classes: Uint8Array, unassessed: Uint8Array | null, classification: ProjectClassification, grid: PlacedGrid): MitigationZone[] {
  const n = grid.width * grid.height;
  if (classes.length !== n || (unassessed && unassessed.length !== n)) throw new ScoringInputError(`The class and unassessed rasters must have ${n} cells (the grid's).`);
  const k = classification.labels.length;
  const cellKm2 = (grid.cellSizeX * grid.cellSizeY) / 1e6;
  const zones: MitigationZone[] = [];
  const mask = new Uint8Array(n);
  const emit = (measure: MitigationId, basis: string, classLabels: string[]) => {
    let cells = 0;
    for (let i = 0; i < n; i++) cells += mask[i];
    if (cells === 0) return;
    const m = MITIGATION_MEASURES[LEVEL_OF[measure]];
    zones.push({ measure, label: m.label, text: m.text, basis, classes: classLabels, cells, areaKm2: cells * cellKm2, coordinates: placeCellPolygons(traceCellPolygons(mask, grid.width, grid.height), grid) });
  };
  for (const m of MITIGATION_MEASURES) {
    const cs: number[] = [];
    for (let c = 0; c < k; c++) if (mitigationForClass(c, k) === m.id) cs.push(c);
    if (!cs.length) continue;
    const want = new Uint8Array(256);
    for (const c of cs) want[c] = 1;
    for (let i = 0; i < n; i++) mask[i] = want[classes[i]] && !(unassessed && unassessed[i] === 1) ? 1 : 0;
    const labels = cs.map((c) => classification.labels[c]);
    emit(m.id, `potential ${labels.join(", ")}`, labels);
  }
  if (unassessed) {
    for (let i = 0; i < n; i++) mask[i] = unassessed[i] === 1 ? 1 : 0;
    emit("targeted_survey", "horizon unassessed: survey to assess it before works", []);
  }
  return zones;
}

export type { Ring };
