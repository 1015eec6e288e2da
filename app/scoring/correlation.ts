/**
 * Correlations between factor layers (design §4: "factor correlations are shown so a team does not
 * weight one thing twice"): Pearson's product-moment correlation and Spearman's rank correlation of
 * every pair of factors over the occupiable cells where every factor has a value, on a seeded random
 * sample of cells.
 * Pearson, K. (1895) "Notes on regression and inheritance in the case of two parents", Proceedings
 * of the Royal Society of London 58, 240–242; Spearman, C. (1904) "The proof and measurement of
 * association between two things", American Journal of Psychology 15(1), 72–101 (ties by mid-ranks:
 * Kendall, M.G. (1948) Rank Correlation Methods, Griffin, London).
 */
import { ScoringInputError } from "./errors.ts";
import type { FactorId } from "./factors.ts";
import type { LayerData } from "./potential.ts";
import { midRanks } from "./rank-compare.ts";
import { Mulberry32 } from "./random.ts";

export interface FactorCorrelations {
  /** the factors, in the order given: row and column order of the matrices */
  factors: FactorId[];
  /** Pearson's r per pair; 1 on the diagonal; NaN where a factor is constant over the sample */
  pearson: number[][];
  /** Spearman's ρ per pair (Pearson's r of the mid-ranks); as above */
  spearman: number[][];
  /** cells in the sample (NaN throughout when below 2) */
  samples: number;
}

/** Pearson's r of two equal-length samples; NaN when either is constant. O(m). */
function pearsonR(x: ArrayLike<number>, y: ArrayLike<number>): number {
  const m = x.length;
  let mx = 0;
  let my = 0;
  for (let j = 0; j < m; j++) {
    mx += x[j];
    my += y[j];
  }
  mx /= m;
  my /= m;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let j = 0; j < m; j++) {
    const dx = x[j] - mx;
    const dy = y[j] - my;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  if (sxx === 0 || syy === 0) return NaN;
  const r = sxy / Math.sqrt(sxx * syy);
  return r > 1 ? 1 : r < -1 ? -1 : r;
}

/**
 * Pearson, K. (1895) Proceedings of the Royal Society of London 58, 240–242 (r); Spearman, C. (1904)
 * American Journal of Psychology 15(1), 72–101 (ρ, with mid-ranks for ties after Kendall 1948). The
 * sampling is common practice, no source.
 *
 * Pearson's r and Spearman's ρ between every pair of factor layers over the cells where `mask` is
 * set (the occupiable cells) and every layer has a value (values: finite; codes: below the nodata
 * code, decoded as code × scale + offset). When there are more such cells than `maxSamples`
 * (default 20 000), that many are drawn without replacement by a partial Fisher–Yates shuffle driven
 * by Mulberry32(`seed`, default 1), so the same inputs and seed give the same table. The diagonal is
 * 1 (NaN for a constant factor); a pair with a constant factor is NaN; with fewer than 2 cells every
 * entry is NaN.
 *
 * Preconditions: every layer and the mask the same length; maxSamples a whole number ≥ 2. Throws
 * {@link ScoringInputError}. Complexity: O(n·k) to find the cells, O(s·k²) for the pairs and
 * O(k·(s + 2¹⁶)) for the ranks, with s samples and k factors.
 */
export function factorCorrelations(
  layers: readonly { factor: FactorId; data: LayerData }[],
  mask: Uint8Array,
  opts: { maxSamples?: number; seed?: number } = {},
): FactorCorrelations {
  const maxSamples = opts.maxSamples ?? 20000;
  const seed = opts.seed ?? 1;
  if (!Number.isInteger(maxSamples) || maxSamples < 2)
    throw new ScoringInputError(`The number of cells to sample must be a whole number of at least 2 (got ${maxSamples}).`);
  const n = mask.length;
  const k = layers.length;
  const ok = new Uint8Array(n);
  for (let i = 0; i < n; i++) ok[i] = mask[i] !== 0 ? 1 : 0;
  for (const { factor, data } of layers) {
    if (data.kind === "values") {
      if (data.values.length !== n) throw new ScoringInputError(`The layer of ${factor} has ${data.values.length} cells; the mask has ${n}.`, factor);
      const v = data.values;
      for (let i = 0; i < n; i++) if (!Number.isFinite(v[i])) ok[i] = 0;
    } else {
      if (data.codes.length !== n) throw new ScoringInputError(`The layer of ${factor} has ${data.codes.length} cells; the mask has ${n}.`, factor);
      if (!(data.scale > 0) || !Number.isFinite(data.scale) || !Number.isFinite(data.offset))
        throw new ScoringInputError(`The layer of ${factor} needs a positive scale and a finite offset.`, factor);
      const c = data.codes;
      const nd = data.nodataCode;
      for (let i = 0; i < n; i++) if (c[i] >= nd) ok[i] = 0;
    }
  }
  let m = 0;
  for (let i = 0; i < n; i++) m += ok[i];
  const eligible = new Uint32Array(m);
  for (let i = 0, j = 0; i < n; i++) if (ok[i] === 1) eligible[j++] = i;
  let cells = eligible;
  if (m > maxSamples) {
    const rng = new Mulberry32(seed);
    for (let j = 0; j < maxSamples; j++) {
      const r = j + rng.nextInt(m - j);
      const t = eligible[j];
      eligible[j] = eligible[r];
      eligible[r] = t;
    }
    cells = eligible.slice(0, maxSamples).sort();
  }
  const s = cells.length;
  const factors = layers.map((l) => l.factor);
  const pearson = Array.from({ length: k }, () => new Array<number>(k).fill(NaN));
  const spearman = Array.from({ length: k }, () => new Array<number>(k).fill(NaN));
  if (s < 2) return { factors, pearson, spearman, samples: s };

  const sampled: Float32Array[] = layers.map(({ data }) => {
    const out = new Float32Array(s);
    if (data.kind === "values") for (let j = 0; j < s; j++) out[j] = data.values[cells[j]];
    else for (let j = 0; j < s; j++) out[j] = data.codes[cells[j]] * data.scale + data.offset;
    return out;
  });
  const identity = new Uint32Array(s);
  const position = new Int32Array(s);
  for (let j = 0; j < s; j++) {
    identity[j] = j;
    position[j] = j;
  }
  const ranks = sampled.map((v) => midRanks(v, identity, position));
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      const p = pearsonR(sampled[a], sampled[b]);
      const r = pearsonR(ranks[a], ranks[b]);
      pearson[a][b] = pearson[b][a] = a === b && p === p ? 1 : p;
      spearman[a][b] = spearman[b][a] = a === b && r === r ? 1 : r;
    }
  }
  return { factors, pearson, spearman, samples: s };
}
