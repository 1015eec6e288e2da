/**
 * The grid model shared by every terrain module.
 *
 * North-up grids only: row 0 is the northern edge, rows increase southwards, columns increase
 * eastwards; index = row * width + col. Cells may be non-square (cellSizeX ≠ cellSizeY). Heights
 * inside the engine are elevations in metres relative to present mean sea level (see
 * vertical-datum.ts). Float32 elevation layers carry NaN on nodata cells in addition to the mask.
 *
 * Pure TypeScript: no I/O, no React, no database, no network (conventions.md).
 */

export interface GridSpec {
  // north-up grids only; row 0 is the northern edge, rows increase southwards
  width: number;
  height: number;
  originX: number; // project-CRS coordinates of the top-left corner of cell (0,0), metres
  originY: number;
  cellSizeX: number; // positive metres; may differ (non-square cells)
  cellSizeY: number;
  crs: { epsg: number; proj4: string } | null;
}

export type Layer = Float32Array | Int32Array | Uint8Array; // length width*height, index = row*width + col

export interface Grid<T extends Layer = Float32Array> {
  spec: GridSpec;
  data: T;
  nodata: Uint8Array; // 1 = nodata
}

/** A problem the user caused (bad input). The message names the problem, and the row/column where known. */
export class TerrainInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "TerrainInputError";
  }
}

/** Thrown by long-running functions when their `shouldCancel` callback returns true. */
export class TerrainCancelled extends Error {
  constructor(message = "terrain computation cancelled") {
    super(message);
    this.name = "TerrainCancelled";
  }
}

/** Optional progress and cancellation hooks taken by every long-running function. They never print. */
export interface RunControl {
  onProgress?: (fraction: number, step?: string) => void;
  shouldCancel?: () => boolean;
}

/**
 * Calls the progress and cancellation hooks at most every `every` units of work; cheap enough to
 * call inside a hot loop (one integer comparison per call).
 */
export class Ticker {
  private next: number;
  constructor(
    private readonly control: RunControl | undefined,
    private readonly total: number,
    private readonly step: string,
    private readonly from = 0,
    private readonly to = 1,
    private readonly every = 1 << 16,
  ) {
    this.next = every;
  }
  tick(done: number): void {
    if (done < this.next) return;
    this.next = done + this.every;
    const c = this.control;
    if (!c) return;
    if (c.shouldCancel?.()) throw new TerrainCancelled(`cancelled during ${this.step}`);
    c.onProgress?.(this.from + (this.to - this.from) * Math.min(1, done / Math.max(1, this.total)), this.step);
  }
  start(): void {
    const c = this.control;
    if (c?.shouldCancel?.()) throw new TerrainCancelled(`cancelled before ${this.step}`);
    c?.onProgress?.(this.from, this.step);
  }
  finish(): void {
    this.control?.onProgress?.(this.to, this.step);
  }
}

/** Smallest grid the engine accepts on either axis (a 3×3 window must fit). */
export const MIN_GRID_SIDE = 3;

/**
 * Checks a GridSpec: integer sizes of at least 3×3, finite origin, positive finite cell sizes.
 * Throws TerrainInputError naming the problem.
 */
export function validateSpec(spec: GridSpec): void {
  const { width, height, originX, originY, cellSizeX, cellSizeY } = spec;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width <= 0 || height <= 0) {
    throw new TerrainInputError(`grid size must be positive whole numbers of cells, got ${width}×${height}`);
  }
  if (width < MIN_GRID_SIDE || height < MIN_GRID_SIDE) {
    throw new TerrainInputError(
      `grid is ${width}×${height} cells; it must be at least ${MIN_GRID_SIDE}×${MIN_GRID_SIDE} cells`,
    );
  }
  if (!Number.isFinite(originX) || !Number.isFinite(originY)) {
    throw new TerrainInputError(`grid origin must be finite coordinates, got (${originX}, ${originY})`);
  }
  if (!(cellSizeX > 0) || !(cellSizeY > 0) || !Number.isFinite(cellSizeX) || !Number.isFinite(cellSizeY)) {
    throw new TerrainInputError(`cell sizes must be positive metres, got ${cellSizeX} × ${cellSizeY}`);
  }
}

/** Area of one cell in km². */
export function cellAreaKm2(spec: GridSpec): number {
  return (spec.cellSizeX * spec.cellSizeY) / 1e6;
}

/** Project-CRS coordinates of the centre of a cell. */
export function cellCentre(spec: GridSpec, row: number, col: number): [number, number] {
  return [spec.originX + (col + 0.5) * spec.cellSizeX, spec.originY - (row + 0.5) * spec.cellSizeY];
}

/** Row and column (fractional) of a project-CRS point; floor them to get the cell. */
export function pointToCell(spec: GridSpec, x: number, y: number): [number, number] {
  return [(spec.originY - y) / spec.cellSizeY, (x - spec.originX) / spec.cellSizeX];
}

export function sameSpec(a: GridSpec, b: GridSpec): boolean {
  return (
    a.width === b.width &&
    a.height === b.height &&
    a.originX === b.originX &&
    a.originY === b.originY &&
    a.cellSizeX === b.cellSizeX &&
    a.cellSizeY === b.cellSizeY
  );
}

/** Throws unless `layer` has exactly width*height elements. */
export function assertLayerSize(spec: GridSpec, layer: { length: number }, what: string): void {
  const n = spec.width * spec.height;
  if (layer.length !== n) {
    throw new TerrainInputError(`${what} has ${layer.length} cells but the grid has ${spec.width}×${spec.height} = ${n}`);
  }
}

/**
 * Makes a Float32 grid from values and an optional nodata mask. Non-finite values (NaN, ±Inf) become
 * nodata; the returned `nonFiniteCount` says how many there were (reported to the user, not an error).
 * Throws TerrainInputError if every cell is nodata.
 */
export function makeElevationGrid(
  spec: GridSpec,
  values: ArrayLike<number>,
  nodataMask?: Uint8Array,
): { grid: Grid<Float32Array>; nonFiniteCount: number; nodataCount: number } {
  validateSpec(spec);
  assertLayerSize(spec, values, "elevation layer");
  const n = spec.width * spec.height;
  const data = new Float32Array(n);
  const nodata = new Uint8Array(n);
  let nonFinite = 0;
  let nodataCount = 0;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (nodataMask && nodataMask[i]) {
      nodata[i] = 1;
      data[i] = NaN;
      nodataCount++;
    } else if (!Number.isFinite(v)) {
      nodata[i] = 1;
      data[i] = NaN;
      nonFinite++;
      nodataCount++;
    } else {
      data[i] = v;
      // a value finite in float64 may overflow float32
      if (!Number.isFinite(data[i])) {
        nodata[i] = 1;
        data[i] = NaN;
        nonFinite++;
        nodataCount++;
      }
    }
  }
  if (nodataCount === n) {
    throw new TerrainInputError(`every one of the ${n} cells is nodata: the grid holds no values`);
  }
  return { grid: { spec, data, nodata }, nonFiniteCount: nonFinite, nodataCount };
}

// ---- D8 neighbourhood -------------------------------------------------------------------------

/** D8 direction codes: 0 E, 1 SE, 2 S, 3 SW, 4 W, 5 NW, 6 N, 7 NE (clockwise from east). */
export const D8_DROW = Int8Array.of(0, 1, 1, 1, 0, -1, -1, -1);
export const D8_DCOL = Int8Array.of(1, 1, 0, -1, -1, -1, 0, 1);
/** Flow-direction value for an outlet: the water leaves here (sea, lake, open-ocean boundary, edge outlet). */
export const D8_OUTLET = 8;
/** Flow-direction value for a cell with no lower neighbour that is not an outlet (an unresolved pit or flat). */
export const D8_PIT = 9;
/** Flow-direction value on nodata cells. */
export const D8_NODATA = 255;

/** Linear-index offsets of the 8 neighbours for a given width, in D8 code order. */
export function d8Offsets(width: number): Int32Array {
  const o = new Int32Array(8);
  for (let k = 0; k < 8; k++) o[k] = D8_DROW[k] * width + D8_DCOL[k];
  return o;
}

/** Distances in metres to the 8 neighbours (dx, dy or √(dx²+dy²)), in D8 code order. */
export function d8Distances(spec: GridSpec): Float64Array {
  const dx = spec.cellSizeX;
  const dy = spec.cellSizeY;
  const dd = Math.sqrt(dx * dx + dy * dy);
  return Float64Array.of(dx, dd, dy, dd, dx, dd, dy, dd);
}

/** 4-neighbour subset of the D8 codes (E, S, W, N). */
export const N4_CODES = Int8Array.of(0, 2, 4, 6);

// ---- typed-array binary min-heap -----------------------------------------------------------------

/**
 * A binary min-heap of cell indices keyed by float64 priority, in typed arrays (no per-item objects).
 * Ties are broken by insertion order (a sequence number), which makes Priority-Flood deterministic.
 */
export class CellHeap {
  private keys: Float64Array;
  private seqs: Float64Array;
  private cells: Int32Array;
  private n = 0;
  private seq = 0;
  constructor(capacity = 1024) {
    const c = Math.max(16, capacity);
    this.keys = new Float64Array(c);
    this.seqs = new Float64Array(c);
    this.cells = new Int32Array(c);
  }
  get size(): number {
    return this.n;
  }
  private grow(): void {
    const c = this.keys.length * 2;
    const k = new Float64Array(c);
    k.set(this.keys);
    const s = new Float64Array(c);
    s.set(this.seqs);
    const e = new Int32Array(c);
    e.set(this.cells);
    this.keys = k;
    this.seqs = s;
    this.cells = e;
  }
  push(cell: number, key: number): void {
    if (this.n === this.keys.length) this.grow();
    const keys = this.keys;
    const seqs = this.seqs;
    const cells = this.cells;
    const sq = this.seq++;
    let i = this.n++;
    while (i > 0) {
      const p = (i - 1) >> 1;
      const pk = keys[p];
      if (pk < key || (pk === key && seqs[p] < sq)) break;
      keys[i] = pk;
      seqs[i] = seqs[p];
      cells[i] = cells[p];
      i = p;
    }
    keys[i] = key;
    seqs[i] = sq;
    cells[i] = cell;
  }
  /** Key of the top item (undefined behaviour when empty). */
  topKey(): number {
    return this.keys[0];
  }
  /** Removes and returns the cell with the smallest key. */
  pop(): number {
    const keys = this.keys;
    const seqs = this.seqs;
    const cells = this.cells;
    const top = cells[0];
    const n = --this.n;
    if (n > 0) {
      const k = keys[n];
      const s = seqs[n];
      const c = cells[n];
      let i = 0;
      for (;;) {
        let m = 2 * i + 1;
        if (m >= n) break;
        const r = m + 1;
        if (r < n && (keys[r] < keys[m] || (keys[r] === keys[m] && seqs[r] < seqs[m]))) m = r;
        if (keys[m] > k || (keys[m] === k && seqs[m] > s)) break;
        keys[i] = keys[m];
        seqs[i] = seqs[m];
        cells[i] = cells[m];
        i = m;
      }
      keys[i] = k;
      seqs[i] = s;
      cells[i] = c;
    }
    return top;
  }
}

/** A FIFO queue of cell indices in a growable ring buffer. */
export class CellQueue {
  private buf: Int32Array;
  private head = 0;
  private tail = 0;
  private n = 0;
  constructor(capacity = 1024) {
    this.buf = new Int32Array(Math.max(16, capacity));
  }
  get size(): number {
    return this.n;
  }
  push(cell: number): void {
    if (this.n === this.buf.length) {
      const b = new Int32Array(this.buf.length * 2);
      for (let i = 0; i < this.n; i++) b[i] = this.buf[(this.head + i) % this.buf.length];
      this.buf = b;
      this.head = 0;
      this.tail = this.n;
    }
    this.buf[this.tail] = cell;
    this.tail = (this.tail + 1) % this.buf.length;
    this.n++;
  }
  shift(): number {
    const c = this.buf[this.head];
    this.head = (this.head + 1) % this.buf.length;
    this.n--;
    return c;
  }
  clear(): void {
    this.head = this.tail = this.n = 0;
  }
}
