/**
 * Lease-block figures (design §7, issue 12): a polygon rasterised onto the analysis grid by cell
 * centre, then the area and share of each class of the project classification, the share
 * unassessed, the mean and maximum potential and the ages at which the block was land.
 *
 * Pure: plain arrays and sizes in, numbers out. Coordinates are in the project's projected CRS
 * (metres); the grid is north-up (row 0 at the northern edge, docs/layers.md).
 */
import { ScoringInputError } from "./errors.ts";
import type { ProjectClassification } from "./classification.ts";

/** A north-up grid placed in the project CRS: (originX, originY) is the top-left corner. */
export interface PlacedGrid {
  width: number;
  height: number;
  originX: number;
  originY: number;
  cellSizeX: number;
  cellSizeY: number;
}

/** A ring is a list of [x, y] positions (closed or not: the closing edge is implied). */
export type Ring = ReadonlyArray<ReadonlyArray<number>>;
export type AreaGeometry = { type: "Polygon"; coordinates: Ring[] } | { type: "MultiPolygon"; coordinates: Ring[][] };

function polygonsOf(geometry: AreaGeometry): Ring[][] {
  if (geometry.type === "Polygon") return [geometry.coordinates];
  if (geometry.type === "MultiPolygon") return geometry.coordinates;
  throw new ScoringInputError(`An area must be a Polygon or a MultiPolygon, not a ${(geometry as { type: string }).type}.`);
}

/**
 * Common practice, no source (scan-line polygon fill, even–odd rule).
 *
 * Marks the cells whose centres fall inside a Polygon or MultiPolygon. Each polygon's rings
 * (exterior and holes alike) are filled by the even–odd rule, so a hole is left out whatever its
 * orientation; the polygons of a MultiPolygon are combined with OR. A centre exactly on a vertical
 * edge counts on the side of larger x (half-open spans [a, b)); on a horizontal edge, on the side
 * of smaller y (an edge counts from its lower end, exclusive of its upper end).
 * Preconditions: finite coordinates; `into`, when given, has width × height cells (set cells are
 * left set). Complexity O(rows spanned × edges + cells marked); no per-cell allocation.
 */
export function rasterisePolygon(geometry: AreaGeometry, grid: PlacedGrid, into?: Uint8Array): Uint8Array {
  const { width, height, originX, originY, cellSizeX, cellSizeY } = grid;
  const mask = into ?? new Uint8Array(width * height);
  if (mask.length !== width * height) throw new ScoringInputError(`The mask has ${mask.length} cells, the grid ${width * height}.`);
  for (const rings of polygonsOf(geometry)) {
    let edges = 0;
    let minY = Infinity;
    let maxY = -Infinity;
    for (const ring of rings) {
      edges += ring.length;
      for (const p of ring) {
        if (p[1] < minY) minY = p[1];
        if (p[1] > maxY) maxY = p[1];
      }
    }
    if (edges === 0) continue;
    const xs = new Float64Array(edges);
    // rows whose centre y lies within [minY, maxY]
    const rowFrom = Math.max(0, Math.ceil((originY - maxY) / cellSizeY - 0.5));
    const rowTo = Math.min(height - 1, Math.floor((originY - minY) / cellSizeY - 0.5));
    for (let r = rowFrom; r <= rowTo; r++) {
      const yc = originY - (r + 0.5) * cellSizeY;
      let n = 0;
      for (const ring of rings) {
        const m = ring.length;
        for (let k = 0; k < m; k++) {
          const a = ring[k];
          const b = ring[(k + 1) % m];
          const ay = a[1];
          const by = b[1];
          if (ay <= yc !== by <= yc) xs[n++] = a[0] + ((yc - ay) * (b[0] - a[0])) / (by - ay);
        }
      }
      if (n < 2) continue;
      const sorted = xs.subarray(0, n).sort();
      const row = r * width;
      for (let k = 0; k + 1 < n; k += 2) {
        const c0 = Math.max(0, Math.ceil((sorted[k] - originX) / cellSizeX - 0.5));
        const c1 = Math.min(width - 1, Math.ceil((sorted[k + 1] - originX) / cellSizeX - 0.5) - 1);
        for (let c = c0; c <= c1; c++) mask[row + c] = 1;
      }
    }
  }
  return mask;
}

/**
 * Common practice, no source (ray casting, even–odd rule).
 *
 * Whether a point lies inside a Polygon or MultiPolygon (holes excluded), by the same edge rule as
 * {@link rasterisePolygon}. O(vertices).
 */
export function pointInArea(geometry: AreaGeometry, x: number, y: number): boolean {
  for (const rings of polygonsOf(geometry)) {
    let inside = false;
    for (const ring of rings) {
      const m = ring.length;
      for (let k = 0; k < m; k++) {
        const a = ring[k];
        const b = ring[(k + 1) % m];
        if (a[1] <= y !== b[1] <= y) {
          const xc = a[0] + ((y - a[1]) * (b[0] - a[0])) / (b[1] - a[1]);
          if (x >= xc) inside = !inside;
        }
      }
    }
    if (inside) return true;
  }
  return false;
}

/**
 * Shoelace formula (Gauss's area formula), common practice.
 *
 * The planar area of a Polygon or MultiPolygon in m²: each exterior ring's area less its holes'
 * (absolute values, so ring orientation does not matter). Preconditions: holes lie inside their
 * exterior and polygons do not overlap (as GeoJSON requires). O(vertices).
 */
export function areaM2(geometry: AreaGeometry): number {
  let total = 0;
  for (const rings of polygonsOf(geometry)) {
    rings.forEach((ring, k) => {
      let s = 0;
      const m = ring.length;
      for (let i = 0; i < m; i++) {
        const a = ring[i];
        const b = ring[(i + 1) % m];
        s += a[0] * b[1] - b[0] * a[1];
      }
      total += (k === 0 ? 1 : -1) * Math.abs(s / 2);
    });
  }
  return total;
}

export interface ClassShare {
  label: string;
  cells: number;
  areaKm2: number;
  /** of the block's cells on the grid */
  share: number;
}

export interface AgeLand {
  ageKa: number;
  /** shares of the block's cells on the grid, by land_class; nodata = outside the analysis surface */
  land: number;
  intertidal: number;
  lake: number;
  sea: number;
  nodata: number;
}

export interface BlockFigures {
  /** cells whose centre lies in the block */
  cells: number;
  /** cells × cell area */
  gridAreaKm2: number;
  /** highest class first, as the classification lists them */
  classes: ClassShare[];
  /** occupiable at the scored age but the horizon unassessed: its own class, never low */
  unassessed: { cells: number; areaKm2: number; share: number };
  /** neither classed nor unassessed: sea or lake at the scored age, or outside the analysis surface */
  notScored: { cells: number; areaKm2: number; share: number };
  /** over the block's classed cells; null when there are none */
  meanPotential: number | null;
  maxPotential: number | null;
  /** per reconstructed age, oldest first */
  ages: AgeLand[];
  /** ages (oldest first) at which at least half of the block's cells were land */
  landAgesKa: number[];
  /** ages at which some but less than half of its cells were land */
  partlyLandAgesKa: number[];
}

export interface BlockInputs {
  grid: PlacedGrid;
  /** the scoring's potential: NaN where not occupiable or unassessed */
  potential: Float32Array;
  /** 1 where occupiable but the horizon is unassessed (the scoring's unassessed raster); null when preservation was off */
  unassessed: Uint8Array | null;
  classification: ProjectClassification;
  /** land_class of each reconstructed age (0 land, 1 sea, 2 intertidal, 3 lake, 255 nodata) */
  landClassByAge: ReadonlyArray<{ ageKa: number; landClass: Uint8Array }>;
}

/**
 * Common practice, no source (zonal statistics over a rasterised polygon).
 *
 * Figures of the cells marked in `mask`: for each cell, unassessed if `unassessed` is 1 there,
 * else in the class of its potential ({@link classOf}'s rule: thresholds compared after Float32
 * rounding) if the potential is a number, else not scored. Shares are of the marked cells, so the
 * classes, unassessed and not scored add up to 1. Mean and max are over the classed cells. Per age,
 * the shares of each land class; "land" ages are those with at least half the cells land.
 * Preconditions: every array has width × height cells, else {@link ScoringInputError}.
 * Complexity O(n · (k + ages)); no per-cell allocation.
 */
export function blockFigures(inputs: BlockInputs, mask: Uint8Array): BlockFigures {
  const { grid, potential, unassessed, classification } = inputs;
  const n = grid.width * grid.height;
  if (mask.length !== n || potential.length !== n || (unassessed && unassessed.length !== n))
    throw new ScoringInputError(`The block mask, potential and unassessed layers must all have ${n} cells (the grid's).`);
  const t32 = Float32Array.from(classification.thresholds);
  const k = t32.length;
  const classCells = new Float64Array(k + 1);
  let cells = 0;
  let unassessedCells = 0;
  let sum = 0;
  let max = -Infinity;
  let classed = 0;
  for (let i = 0; i < n; i++) {
    if (mask[i] === 0) continue;
    cells++;
    if (unassessed && unassessed[i] === 1) {
      unassessedCells++;
      continue;
    }
    const v = potential[i];
    if (v !== v) continue;
    let c = 0;
    while (c < k && v < t32[c]) c++;
    classCells[c]++;
    classed++;
    sum += v;
    if (v > max) max = v;
  }
  const cellKm2 = (grid.cellSizeX * grid.cellSizeY) / 1e6;
  const share = (x: number) => (cells > 0 ? x / cells : 0);
  const notScored = cells - classed - unassessedCells;
  const ages: AgeLand[] = [];
  for (const { ageKa, landClass } of inputs.landClassByAge) {
    if (landClass.length !== n) throw new ScoringInputError(`land_class at ${ageKa} ka has ${landClass.length} cells, the grid ${n}.`);
    let land = 0, sea = 0, inter = 0, lake = 0, nodata = 0;
    for (let i = 0; i < n; i++) {
      if (mask[i] === 0) continue;
      const c = landClass[i];
      if (c === 0) land++;
      else if (c === 1) sea++;
      else if (c === 2) inter++;
      else if (c === 3) lake++;
      else nodata++;
    }
    ages.push({ ageKa, land: share(land), intertidal: share(inter), lake: share(lake), sea: share(sea), nodata: share(nodata) });
  }
  ages.sort((a, b) => b.ageKa - a.ageKa);
  return {
    cells,
    gridAreaKm2: cells * cellKm2,
    classes: classification.labels.map((label, c) => ({ label, cells: classCells[c], areaKm2: classCells[c] * cellKm2, share: share(classCells[c]) })),
    unassessed: { cells: unassessedCells, areaKm2: unassessedCells * cellKm2, share: share(unassessedCells) },
    notScored: { cells: notScored, areaKm2: notScored * cellKm2, share: share(notScored) },
    meanPotential: classed ? sum / classed : null,
    maxPotential: classed ? max : null,
    ages,
    landAgesKa: ages.filter((a) => cells > 0 && a.land >= 0.5).map((a) => a.ageKa),
    partlyLandAgesKa: ages.filter((a) => a.land > 0 && a.land < 0.5).map((a) => a.ageKa),
  };
}

/**
 * Common practice, no source.
 *
 * Minimum, median and maximum of a Float32 layer over the marked cells (NaN cells skipped), with
 * the count of marked cells and of those with a value. Used for the cover over the preserved
 * horizon under an asset. O(n + m log m) for m values.
 */
export function maskedSummary(values: Float32Array, mask: Uint8Array): { cells: number; valued: number; min: number | null; median: number | null; max: number | null } {
  let cells = 0;
  let valued = 0;
  for (let i = 0; i < mask.length; i++) {
    if (mask[i] === 0) continue;
    cells++;
    if (values[i] === values[i]) valued++;
  }
  if (valued === 0) return { cells, valued, min: null, median: null, max: null };
  const v = new Float32Array(valued);
  let j = 0;
  for (let i = 0; i < mask.length; i++) if (mask[i] !== 0 && values[i] === values[i]) v[j++] = values[i];
  v.sort();
  const median = valued % 2 ? v[(valued - 1) / 2] : (v[valued / 2 - 1] + v[valued / 2]) / 2;
  return { cells, valued, min: v[0], median, max: v[valued - 1] };
}
