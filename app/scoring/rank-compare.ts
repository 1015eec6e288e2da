/**
 * Comparing two score maps of the same grid (two weight sets, two versions, a weight set and a
 * model): Spearman's rank correlation over the cells both score, and the share of the top-N cells
 * they have in common (issue 9, "compare two sets or versions").
 * Spearman, C. (1904) "The proof and measurement of association between two things", American
 * Journal of Psychology 15(1), 72–101 (ties by mid-ranks: Kendall, M.G. (1948) Rank Correlation
 * Methods, Griffin, London). The top-N overlap is common practice, no source.
 *
 * Cells are ordered by an LSD radix sort of the Float32 scores (O(n), stable, no comparator), so
 * full-resolution grids of any size sort in linear time.
 */
import { ScoringInputError } from "./errors.ts";

/**
 * Indices of `values` at the positions `cells` (a list of cell indices with finite values), sorted
 * ascending by value (descending if `descending`); ties keep the order of `cells`. Radix sort on the
 * order-preserving 32-bit key of each Float32 (two 16-bit passes). O(n + 2¹⁶).
 */
function sortCells(values: Float32Array, cells: Uint32Array, descending: boolean): Uint32Array {
  const n = cells.length;
  const bits = new Uint32Array(values.buffer, values.byteOffset, values.length);
  let keys = new Uint32Array(n);
  for (let k = 0; k < n; k++) {
    const b = bits[cells[k]];
    let key = b & 0x80000000 ? ~b >>> 0 : (b | 0x80000000) >>> 0;
    if (descending) key = ~key >>> 0;
    keys[k] = key;
  }
  let idx = Uint32Array.from(cells);
  let keys2 = new Uint32Array(n);
  let idx2 = new Uint32Array(n);
  const count = new Uint32Array(65536);
  for (let shift = 0; shift < 32; shift += 16) {
    count.fill(0);
    for (let k = 0; k < n; k++) count[(keys[k] >>> shift) & 0xffff]++;
    let sum = 0;
    for (let d = 0; d < 65536; d++) {
      const c = count[d];
      count[d] = sum;
      sum += c;
    }
    for (let k = 0; k < n; k++) {
      const pos = count[(keys[k] >>> shift) & 0xffff]++;
      keys2[pos] = keys[k];
      idx2[pos] = idx[k];
    }
    let t = keys; keys = keys2; keys2 = t;
    const u = idx; idx = idx2; idx2 = u;
  }
  return idx;
}

/** Cells where both maps have a finite score. */
function commonCells(a: Float32Array, b: Float32Array): Uint32Array {
  if (a.length !== b.length)
    throw new ScoringInputError(`The two score maps cover different grids (${a.length} and ${b.length} cells).`);
  let m = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i]) && Number.isFinite(b[i])) m++;
  const out = new Uint32Array(m);
  for (let i = 0, j = 0; i < a.length; i++) if (Number.isFinite(a[i]) && Number.isFinite(b[i])) out[j++] = i;
  return out;
}

/**
 * Kendall, M.G. (1948) Rank Correlation Methods, Griffin, London (mid-ranks for ties).
 *
 * Mid-ranks (1-based) of `values` over `cells`, written at the cells' positions in `cells` order
 * (`positionOf[cell]` = its position in `cells`); tied values share the mean of their ranks.
 * Preconditions: `values` finite at every cell listed. O(m + 2¹⁶) time for m cells (radix sort).
 */
export function midRanks(values: Float32Array, cells: Uint32Array, positionOf: Int32Array): Float64Array {
  const order = sortCells(values, cells, false);
  const m = order.length;
  const ranks = new Float64Array(m);
  let k = 0;
  while (k < m) {
    let e = k + 1;
    while (e < m && values[order[e]] === values[order[k]]) e++;
    const r = (k + 1 + e) / 2; // mean of ranks k+1 … e
    for (let q = k; q < e; q++) ranks[positionOf[order[q]]] = r;
    k = e;
  }
  return ranks;
}

export interface RankCorrelation {
  /** Spearman's ρ; NaN when either map is constant over the common cells */
  rho: number;
  /** number of cells both maps score */
  cells: number;
}

/**
 * Spearman, C. (1904) "The proof and measurement of association between two things", American
 * Journal of Psychology 15(1), 72–101; ties by mid-ranks after Kendall, M.G. (1948) Rank
 * Correlation Methods, Griffin, London.
 *
 * Spearman's rank correlation ρ of two score maps over the cells where both are finite: Pearson's
 * correlation of their mid-ranks (ties share the mean of their ranks).
 * Without ties it equals 1 − 6Σd²/(n(n² − 1)).
 * Preconditions: same length; at least 2 common cells (else {@link ScoringInputError}); NaN and
 * ±Infinity cells are left out. ρ is NaN if either map is constant there.
 * Complexity O(n) (radix sort) time, O(n) memory.
 */
export function spearmanRankCorrelation(a: Float32Array, b: Float32Array): RankCorrelation {
  const cells = commonCells(a, b);
  const m = cells.length;
  if (m < 2) throw new ScoringInputError(`A rank correlation needs at least 2 cells both maps score (there are ${m}).`);
  const positionOf = new Int32Array(a.length).fill(-1);
  for (let k = 0; k < m; k++) positionOf[cells[k]] = k;
  const ra = midRanks(a, cells, positionOf);
  const rb = midRanks(b, cells, positionOf);
  const mean = (m + 1) / 2; // mid-ranks always average (m + 1)/2
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let k = 0; k < m; k++) {
    const da = ra[k] - mean;
    const db = rb[k] - mean;
    sab += da * db;
    saa += da * da;
    sbb += db * db;
  }
  return { rho: saa === 0 || sbb === 0 ? NaN : sab / Math.sqrt(saa * sbb), cells: m };
}

export interface TopOverlap {
  /** |top-N of a ∩ top-N of b| / N */
  share: number;
  /** N */
  topN: number;
  /** number of cells both maps score */
  cells: number;
}

/**
 * Common practice, no source.
 *
 * The share of the N highest-scoring cells the two maps have in common, over the cells both score.
 * Ties at the cut are broken by cell index (lower index first), the same for both maps.
 * Preconditions: same length; 1 ≤ N ≤ the number of common cells (else {@link ScoringInputError}).
 * Complexity O(n) time and memory.
 */
export function topCellsInCommon(a: Float32Array, b: Float32Array, topN: number): TopOverlap {
  const cells = commonCells(a, b);
  if (!Number.isInteger(topN) || topN < 1 || topN > cells.length)
    throw new ScoringInputError(`The number of top cells must be a whole number from 1 to ${cells.length}, the cells both maps score (got ${topN}).`);
  const ta = sortCells(a, cells, true);
  const tb = sortCells(b, cells, true);
  const inA = new Uint8Array(a.length);
  for (let k = 0; k < topN; k++) inA[ta[k]] = 1;
  let both = 0;
  for (let k = 0; k < topN; k++) if (inA[tb[k]] === 1) both++;
  return { share: both / topN, topN, cells: cells.length };
}
