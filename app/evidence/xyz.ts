/**
 * XYZ point files (one `x y z` per line; spaces, tabs, commas or semicolons) and their gridding on
 * import: the mean z of the points in each cell of a grid at the analysis cell size; cells without a
 * point are nodata (never interpolated — a gap in the survey stays a gap).
 */
import type { Crs } from "../terrain/crs";
import type { GridSpec } from "../terrain/grid";
import { Problems } from "./csv";
import { checkPositions, makeTransformer, type SourceCrs } from "./crs-transform";
import { EvidenceError } from "./types";

export interface XyzPoints {
  x: Float64Array;
  y: Float64Array;
  z: Float64Array;
  n: number;
  headerSkipped: boolean;
  /** points whose z was NaN/nodata text, left out */
  skippedNoValue: number;
  extraColumns: boolean;
}

function isSep(c: number): boolean {
  return c === 32 || c === 9 || c === 44 || c === 59;
}

const POW10 = Float64Array.from({ length: 23 }, (_, k) => 10 ** k); // exact doubles up to 1e22
const latin1 = new TextDecoder("latin1");

/**
 * A decimal number from bytes [a, b): sign, digits, optional fraction. With at most 15 significant
 * digits, integer ÷ power of ten is one correctly rounded division of two exact doubles, so the result
 * equals Number(text); other forms (exponents, long mantissas, inf/nan) go through Number(). NaN if
 * not a number.
 */
function parseDecimal(bytes: Uint8Array, a: number, b: number): number {
  let i = a;
  let neg = false;
  if (bytes[i] === 45 || bytes[i] === 43) {
    neg = bytes[i] === 45;
    i++;
  }
  let m = 0;
  let digitChars = 0;
  let significant = 0;
  let frac = 0;
  let seenDot = false;
  for (; i < b; i++) {
    const c = bytes[i];
    if (c >= 48 && c <= 57) {
      digitChars++;
      m = m * 10 + (c - 48);
      if (m > 0 || seenDot) significant++;
      if (seenDot) frac++;
    } else if (c === 46 && !seenDot) seenDot = true;
    else break;
  }
  if (i === b && digitChars > 0 && significant <= 15 && frac <= 22) {
    const v = m / POW10[frac];
    return neg ? -v : v;
  }
  const t = latin1.decode(bytes.subarray(a, b));
  return /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(t) ? Number(t) : NaN;
}

/**
 * Parses XYZ bytes: blank lines and `#` comments skipped; a first line that is not numbers is taken
 * as a header; a z of `nan` leaves the point out (counted); bad numbers and short lines are problems
 * reported by line (up to 20 at once). Works on the bytes, not a decoded string (a file of tens of
 * millions of points is longer than a JavaScript string may be). Throws EvidenceError over
 * `maxPoints`. O(bytes), typed arrays only.
 */
export function parseXyz(bytes: Uint8Array, maxPoints: number): XyzPoints {
  const len = bytes.length;
  let cap = Math.max(1024, Math.min(maxPoints, Math.ceil(len / 16)));
  let x = new Float64Array(cap);
  let y = new Float64Array(cap);
  let z = new Float64Array(cap);
  let n = 0;
  let pos = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? 3 : 0;
  let line = 0;
  let headerSkipped = false;
  let seenData = false;
  let skippedNoValue = 0;
  let extraColumns = false;
  const problems = new Problems("XYZ file");
  const v = [0, 0, 0];
  while (pos < len) {
    line++;
    let end = bytes.indexOf(10, pos);
    if (end < 0) end = len;
    let p = pos;
    while (p < end && (bytes[p] === 32 || bytes[p] === 9)) p++;
    const lineStart = pos;
    pos = end + 1;
    if (p >= end || bytes[p] === 13 || bytes[p] === 35) continue; // blank or comment
    let k = 0;
    let bad = "";
    let noValue = false;
    while (p < end) {
      const c = bytes[p];
      if (isSep(c) || c === 13) {
        p++;
        continue;
      }
      let e = p;
      while (e < end && !isSep(bytes[e]) && bytes[e] !== 13) e++;
      if (k < 3) {
        const num = parseDecimal(bytes, p, e);
        if (Number.isFinite(num)) v[k] = num;
        else {
          const tok = latin1.decode(bytes.subarray(p, e));
          if (k === 2 && /^[+-]?nan$/i.test(tok)) noValue = true;
          else if (bad === "") bad = tok;
        }
      } else extraColumns = true;
      k++;
      p = e;
    }
    if (!seenData && bad !== "" && !headerSkipped) {
      headerSkipped = true;
      continue;
    }
    seenData = true;
    if (bad !== "") {
      problems.add(`line ${line}: '${bad}' is not a number`, { row: line });
      continue;
    }
    if (k < 3) {
      const text = latin1.decode(bytes.subarray(lineStart, Math.min(end, lineStart + 40))).trim();
      problems.add(`line ${line}: ${k} value${k === 1 ? "" : "s"} ("${text}"), need x y z`, { row: line });
      continue;
    }
    if (noValue) {
      skippedNoValue++;
      continue;
    }
    if (n >= maxPoints) throw new EvidenceError(`the XYZ file has more than ${maxPoints} points, over the limit: thin it or grid it first`, { row: line });
    if (n === cap) {
      cap *= 2;
      const nx = new Float64Array(cap);
      nx.set(x);
      x = nx;
      const ny = new Float64Array(cap);
      ny.set(y);
      y = ny;
      const nz = new Float64Array(cap);
      nz.set(z);
      z = nz;
    }
    x[n] = v[0];
    y[n] = v[1];
    z[n] = v[2];
    n++;
  }
  problems.throwIfAny();
  if (n === 0) throw new EvidenceError("the XYZ file holds no points");
  return { x: x.subarray(0, n), y: y.subarray(0, n), z: z.subarray(0, n), n, headerSkipped, skippedNoValue, extraColumns };
}

export interface GriddedPoints {
  spec: GridSpec;
  /** mean z per cell, NaN where no point */
  values: Float32Array;
  /** points per cell */
  counts: Uint32Array;
  cellsWithPoints: number;
  maxPerCell: number;
}

/**
 * Grids points (already in the project CRS) at cell size `cellSizeM`: the grid's corner is snapped to
 * a multiple of the cell size; each cell gets the mean z of its points; empty cells NaN. Throws
 * EvidenceError when the grid would exceed `maxCells` (before allocating) or be under 3×3. O(n + cells).
 */
export function gridPoints(p: XyzPoints, cellSizeM: number, crs: Crs, maxCells: number): GriddedPoints {
  if (!(cellSizeM > 0) || !Number.isFinite(cellSizeM)) {
    throw new EvidenceError("XYZ points are gridded on import: declare the analysis cell size in metres (e.g. 10)");
  }
  let minX = Infinity;
  let minY = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  const { x, y, z, n } = p;
  for (let i = 0; i < n; i++) {
    if (x[i] < minX) minX = x[i];
    if (x[i] > maxX) maxX = x[i];
    if (y[i] < minY) minY = y[i];
    if (y[i] > maxY) maxY = y[i];
  }
  const cs = cellSizeM;
  const originX = Math.floor(minX / cs) * cs;
  const originY = (Math.floor(maxY / cs) + 1) * cs;
  const width = Math.floor((maxX - originX) / cs) + 1;
  const height = Math.floor((originY - minY) / cs) + 1;
  const cells = width * height;
  if (cells > maxCells) {
    throw new EvidenceError(
      `gridding the points at ${cs} m makes ${width} × ${height} cells (${cells.toExponential(1).replace("e+", "e")}), over the limit of ${maxCells.toExponential(1).replace("e+", "e")}: choose a coarser cell size`,
    );
  }
  if (width < 3 || height < 3) {
    throw new EvidenceError(`the points span only ${width} × ${height} cells of ${cs} m; a grid needs at least 3 × 3: choose a smaller cell size`);
  }
  const sum = new Float64Array(cells);
  const counts = new Uint32Array(cells);
  for (let i = 0; i < n; i++) {
    const c = Math.floor((x[i] - originX) / cs);
    const r = Math.floor((originY - y[i]) / cs);
    const k = r * width + c;
    sum[k] += z[i];
    counts[k]++;
  }
  const values = new Float32Array(cells);
  let cellsWithPoints = 0;
  let maxPerCell = 0;
  for (let k = 0; k < cells; k++) {
    const c = counts[k];
    if (c === 0) values[k] = NaN;
    else {
      values[k] = sum[k] / c;
      cellsWithPoints++;
      if (c > maxPerCell) maxPerCell = c;
    }
  }
  return { spec: { width, height, originX, originY, cellSizeX: cs, cellSizeY: cs, crs }, values, counts, cellsWithPoints, maxPerCell };
}

/** Points per occupied cell as a histogram over bins 1, 2, 3–4, 5–8, 9–16, … (powers of two). */
export function pointsPerCellHistogram(counts: Uint32Array): { bins: string[]; cells: number[] } {
  const cells: number[] = [];
  for (let k = 0; k < counts.length; k++) {
    const c = counts[k];
    if (c === 0) continue;
    const b = c === 1 ? 0 : Math.ceil(Math.log2(c));
    while (cells.length <= b) cells.push(0);
    cells[b]++;
  }
  const bins = cells.map((_, b) => (b === 0 ? "1" : b === 1 ? "2" : `${2 ** (b - 1) + 1}–${2 ** b}`));
  return { bins, cells };
}

/** Reprojects XYZ points into the project CRS when they came in another, and checks they are plausible there. */
export function pointsToProject(p: XyzPoints, src: SourceCrs, dst: Crs): string {
  const t = makeTransformer(src, dst);
  t.run(p.x, p.y);
  const problems = new Problems("XYZ file");
  checkPositions(p.x, p.y, dst, undefined, (i, why) => problems.add(`point ${i + 1}: ${why}`));
  problems.throwIfAny();
  return t.description;
}
