/**
 * Monte Carlo uncertainty of a weight-set score (design §7, issue 12): seeded draws of the weights
 * (Dirichlet around the weight set, or ±x % uniform then renormalised) and of the landscape's own
 * parameters (sea level within its σ, datum offset, sediment velocity, stream threshold, erosion
 * depth), accumulated per cell without keeping the draws: the probability of the high class, the
 * mean and the spread of the potential (Welford 1962, blocks merged by Chan, Golub & LeVeque 1983),
 * the share of draws in which the cell is sea (the shoreline envelope), and the convergence of the
 * robust-high share with the number of draws. Variance-based first-order and total indices
 * (Saltelli et al. 2010; Jansen 1999) over the weights on a cell sample.
 *
 * Cite: Ligmann-Zielinska, A. & Jankowski, P. (2014) "Spatially-explicit integrated uncertainty and
 * sensitivity analysis of criteria weights in multicriteria land suitability evaluation",
 * Environmental Modelling & Software 57, 235–247 — Monte Carlo over the weights of a weighted linear
 * combination and variance-based sensitivity of the result.
 *
 * The landscape draws are an approximation of re-running the terrain engine (decision 403): see
 * {@link landscapeDraw}.
 *
 * Pure: typed arrays in and out, no per-cell allocation in the loops.
 */
import { ScoringInputError } from "./errors.ts";
import type { Mulberry32 } from "./random.ts";
import { euclideanDistance } from "../terrain/distance-transform.ts";

// ---- random variates -------------------------------------------------------------------------------

/**
 * Box, G.E.P. & Muller, M.E. (1958) "A note on the generation of random normal deviates", Annals of
 * Mathematical Statistics 29(2), 610–611. One standard normal deviate from two uniforms (the second
 * of the pair is discarded, so a draw depends only on the generator's state). O(1).
 */
export function standardNormal(rng: Mulberry32): number {
  let u = rng.next();
  while (u <= 0) u = rng.next();
  const v = rng.next();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

/**
 * Marsaglia, G. & Tsang, W.W. (2000) "A simple method for generating gamma variables", ACM
 * Transactions on Mathematical Software 26(3), 363–372. A Gamma(shape, 1) deviate: for shape ≥ 1 the
 * squeeze-and-reject method with d = shape − 1/3, c = 1/√(9d); for shape < 1 the paper's boost
 * Gamma(shape + 1)·U^(1/shape). shape = 0 gives 0. Preconditions: shape ≥ 0, finite. O(1) expected.
 */
export function gammaDraw(rng: Mulberry32, shape: number): number {
  if (!(shape >= 0) || !Number.isFinite(shape)) throw new ScoringInputError(`A gamma shape must be a finite number ≥ 0 (got ${shape}).`);
  if (shape === 0) return 0;
  if (shape < 1) {
    let u = rng.next();
    while (u <= 0) u = rng.next();
    return gammaDraw(rng, shape + 1) * Math.pow(u, 1 / shape);
  }
  const d = shape - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    let x: number;
    let v: number;
    do {
      x = standardNormal(rng);
      v = 1 + c * x;
    } while (v <= 0);
    v = v * v * v;
    const u = rng.next();
    if (u < 1 - 0.0331 * x * x * x * x) return d * v;
    if (u > 0 && Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}

// ---- weight draws ----------------------------------------------------------------------------------

/** How the weights are perturbed around the weight set's own. */
export type WeightPerturbation =
  /** Dirichlet with α = concentration × w: mean w, variance w(1 − w)/(concentration + 1) */
  | { kind: "dirichlet"; concentration: number }
  /** each weight × U(1 − spread, 1 + spread), then renormalised (spread 0.2 = ±20 %) */
  | { kind: "uniform"; spread: number };

export interface WeightDraws {
  /** factors (the columns) */
  k: number;
  draws: number;
  /** draws × k, row-major; every row sums to 1 */
  weights: Float64Array;
  /**
   * the independent inputs behind each row (the gamma deviates, or the uniform multipliers),
   * draws × k — what variance-based sensitivity attributes variance to
   */
  inputs: Float64Array;
}

/** Common practice, no source. Checks a perturbation; throws ScoringInputError naming the problem. O(1). */
export function checkPerturbation(p: WeightPerturbation): void {
  if (p.kind === "dirichlet") {
    if (!(p.concentration > 0) || !Number.isFinite(p.concentration))
      throw new ScoringInputError(`The Dirichlet concentration must be a positive number (got ${p.concentration}).`, "concentration");
  } else if (p.kind === "uniform") {
    if (!(p.spread >= 0 && p.spread < 1)) throw new ScoringInputError(`The uniform spread must be from 0 to below 1 (±0–100 %; got ${p.spread}).`, "spread");
  } else throw new ScoringInputError(`Unknown weight perturbation "${(p as { kind: string }).kind}".`, "perturbation");
}

/**
 * One weight draw into `row` (length k) and its independent inputs into `inputs`: Dirichlet by
 * normalised gamma deviates (Marsaglia & Tsang 2000), or uniform multipliers then renormalised. A
 * zero weight stays zero. Preconditions: `base` normalised (sum 1, ≥ 0). O(k).
 */
export function drawWeightRow(base: ArrayLike<number>, p: WeightPerturbation, rng: Mulberry32, row: Float64Array, inputs: Float64Array, offset = 0): void {
  const k = base.length;
  let total = 0;
  for (let f = 0; f < k; f++) {
    const w = base[f];
    let x: number;
    if (p.kind === "dirichlet") x = w > 0 ? gammaDraw(rng, p.concentration * w) : 0;
    else x = w > 0 ? 1 - p.spread + 2 * p.spread * rng.next() : 0;
    inputs[offset + f] = x;
    const v = p.kind === "dirichlet" ? x : w * x;
    row[offset + f] = v;
    total += v;
  }
  if (!(total > 0)) {
    // every gamma deviate underflowed to 0 (tiny α): fall back to the weight set itself
    for (let f = 0; f < k; f++) row[offset + f] = base[f];
    return;
  }
  for (let f = 0; f < k; f++) row[offset + f] /= total;
}

/**
 * Ligmann-Zielinska & Jankowski (2014) (Monte Carlo over WLC weights); Dirichlet deviates by
 * Marsaglia & Tsang (2000).
 *
 * `draws` weight vectors around `base` (normalised first). Every row sums to 1; the same seed gives
 * the same rows. Preconditions: 1 ≤ draws ≤ 1 000 000; base as `normaliseWeights` (≥ 0, not all 0).
 * O(draws·k).
 */
export function drawWeights(base: ArrayLike<number>, p: WeightPerturbation, draws: number, rng: Mulberry32): WeightDraws {
  checkPerturbation(p);
  if (!Number.isInteger(draws) || draws < 1 || draws > 1_000_000) throw new ScoringInputError(`The number of draws must be a whole number from 1 to 1 000 000 (got ${draws}).`, "draws");
  const k = base.length;
  let s = 0;
  for (let f = 0; f < k; f++) {
    if (!(base[f] >= 0) || !Number.isFinite(base[f])) throw new ScoringInputError(`Weight ${f + 1} must be a finite number ≥ 0 (got ${base[f]}).`);
    s += base[f];
  }
  if (!(s > 0)) throw new ScoringInputError("All weights are zero: there is nothing to perturb.");
  const w = Float64Array.from(base, (x) => x / s);
  const weights = new Float64Array(draws * k);
  const inputs = new Float64Array(draws * k);
  for (let d = 0; d < draws; d++) drawWeightRow(w, p, rng, weights, inputs, d * k);
  return { k, draws, weights, inputs };
}

// ---- per-cell accumulation -------------------------------------------------------------------------

/** Probability thresholds of the robust classes (design §7: robustly high p ≥ 0.8). */
export const ROBUST_HIGH_P = 0.8;
export const ROBUST_LOW_P = 0.2;

/**
 * Running per-cell statistics over the draws (on SharedArrayBuffers when the pool shares them).
 * `high` counts draws in which the cell is in the high class, `scored` draws in which it has a score;
 * `mean` and `m2` are Welford's running mean and sum of squared deviations of the potential over the
 * scored draws.
 */
export interface Accumulators {
  n: number;
  high: Int32Array;
  scored: Int32Array;
  mean: Float64Array;
  m2: Float64Array;
}

/** Common practice, no source. Zeroed accumulators for n cells (shared: on SharedArrayBuffers). O(n). */
export function createAccumulators(n: number, shared = false): Accumulators {
  const buf = (bytes: number) => (shared ? new SharedArrayBuffer(bytes) : new ArrayBuffer(bytes));
  return { n, high: new Int32Array(buf(n * 4)), scored: new Int32Array(buf(n * 4)), mean: new Float64Array(buf(n * 8)), m2: new Float64Array(buf(n * 8)) };
}

/** Per checkpoint: cells robustly high, contested, robustly low, and cells with a score so far. */
export const CONVERGENCE_FIELDS = 4;

/**
 * Common practice, no source. Draw counts at which the running robust shares are recorded: 10, 20,
 * 50, 100, 200, 500, … up to and including `draws`. O(log draws).
 */
export function convergenceCheckpoints(draws: number): Int32Array {
  const out: number[] = [];
  for (let m = 10; m < draws; m *= 10) for (const f of [1, 2, 5]) if (m * f < draws) out.push(m * f);
  out.push(draws);
  return Int32Array.from(out);
}

export interface DrawBlock {
  /** the active factors' scores (0–1 after their curves; NaN = no score), one array per factor */
  scores: readonly Float32Array[];
  /** preservation score per cell (NaN = unassessed or nodata), or null when preservation is off */
  preservation: Float32Array | null;
  /** land_class in this block's landscape: only land (0) and intertidal (2) cells are scored */
  landClass: Uint8Array;
  /** all weight draws, draws × k (k = scores.length) */
  weights: Float64Array;
  /** the block's draws: [from, to) */
  from: number;
  to: number;
  /** lower bound of the high class (a cell is high when potential ≥ it, compared in Float32) */
  threshold: number;
  /** sorted global draw counts at which the convergence is recorded */
  checkpoints: Int32Array;
}

/**
 * Welford, B.P. (1962) "Note on a method for calculating corrected sums of squares and products",
 * Technometrics 4(3), 419–420; blocks merged by Chan, T.F., Golub, G.H. & LeVeque, R.J. (1983)
 * "Algorithms for computing the sample variance: analysis and recommendations", The American
 * Statistician 37(3), 242–247. Weighted linear combination: Malczewski (2000).
 *
 * For cells start … end − 1 and draws from … to − 1: potential = (Σ w_d,f · s_f) × preservation on
 * occupiable cells with every score finite; counts the high class (≥ threshold, Float32 compare, as
 * classification.ts), merges the block's mean and squared deviations into the running ones (the
 * block's sums are taken about the running mean, so no cancellation), and at each checkpoint inside
 * the block adds the cell to `conv` (CONVERGENCE_FIELDS per checkpoint: robust high p ≥ 0.8,
 * contested, robust low p ≤ 0.2, scored so far; p = high draws / all draws so far).
 *
 * Cells outer, draws inner: the block's weights (draws × k) stay in cache while each cell's k scores
 * sit in locals (up to 8 factors: weights padded to 8 columns, the sum written out; more: a loop).
 * Preconditions: as DrawBlock; `scratch` of length ≥ k. O((end − start)·(to − from)·k); one
 * allocation per call (the padded weights), none per cell.
 */
export function accumulateDraws(b: DrawBlock, acc: Accumulators, start: number, end: number, conv: Float64Array, scratch: Float64Array): void {
  const k = b.scores.length;
  const W = b.weights;
  const pres = b.preservation;
  const lc = b.landClass;
  const t32 = Math.fround(b.threshold);
  const cps = b.checkpoints;
  const { high, scored, mean, m2 } = acc;
  const from = b.from;
  const to = b.to;
  // checkpoints inside this block
  let cpFirst = 0;
  while (cpFirst < cps.length && cps[cpFirst] <= from) cpFirst++;
  let cpEnd = cpFirst;
  while (cpEnd < cps.length && cps[cpEnd] <= to) cpEnd++;
  let W8: Float64Array | null = null;
  if (k <= 8 && k > 0) {
    W8 = new Float64Array((to - from) * 8);
    for (let d = from; d < to; d++) for (let f = 0; f < k; f++) W8[(d - from) * 8 + f] = W[d * k + f];
  }
  for (let i = start; i < end; i++) {
    const c = lc[i];
    let ok = c === 0 || c === 2;
    let p = 1;
    if (ok && pres !== null) {
      p = pres[i];
      if (p !== p) ok = false;
    }
    if (ok) {
      for (let f = 0; f < k; f++) {
        const s = b.scores[f][i];
        if (s !== s) {
          ok = false;
          break;
        }
        scratch[f] = s;
      }
    }
    let h = high[i];
    if (!ok) {
      // no score in any draw of this block: only the checkpoints move
      for (let q = cpFirst; q < cpEnd; q++) {
        const sc = scored[i];
        if (sc === 0) continue;
        const ph = h / cps[q];
        const o = q * CONVERGENCE_FIELDS;
        if (ph >= ROBUST_HIGH_P) conv[o]++;
        else if (ph <= ROBUST_LOW_P) conv[o + 2]++;
        else conv[o + 1]++;
        conv[o + 3]++;
      }
      continue;
    }
    const shift = scored[i] > 0 ? mean[i] : 0.5;
    let sum = 0;
    let sumSq = 0;
    let q = cpFirst;
    let row = 0;
    // up to 8 factors: the block's weights padded to 8 columns, the sum written out in full
    const s0 = scratch[0], s1 = k > 1 ? scratch[1] : 0, s2 = k > 2 ? scratch[2] : 0, s3 = k > 3 ? scratch[3] : 0;
    const s4 = k > 4 ? scratch[4] : 0, s5 = k > 5 ? scratch[5] : 0, s6 = k > 6 ? scratch[6] : 0, s7 = k > 7 ? scratch[7] : 0;
    for (let d = from; d < to; d++) {
      let occ: number;
      if (W8 !== null) {
        occ = W8[row] * s0 + W8[row + 1] * s1 + W8[row + 2] * s2 + W8[row + 3] * s3 + W8[row + 4] * s4 + W8[row + 5] * s5 + W8[row + 6] * s6 + W8[row + 7] * s7;
        row += 8;
      } else {
        occ = 0;
        const r0 = d * k;
        for (let f = 0; f < k; f++) occ += W[r0 + f] * scratch[f];
      }
      const v = Math.fround(Math.fround(occ) * p);
      if (v >= t32) h++;
      const dv = v - shift;
      sum += dv;
      sumSq += dv * dv;
      if (q < cpEnd && d + 1 === cps[q]) {
        const ph = h / cps[q];
        const o = q * CONVERGENCE_FIELDS;
        if (ph >= ROBUST_HIGH_P) conv[o]++;
        else if (ph <= ROBUST_LOW_P) conv[o + 2]++;
        else conv[o + 1]++;
        conv[o + 3]++;
        q++;
      }
    }
    high[i] = h;
    const nb = to - from;
    const na = scored[i];
    const mb = shift + sum / nb;
    const m2b = Math.max(0, sumSq - (sum * sum) / nb);
    const nTot = na + nb;
    const delta = mb - mean[i];
    mean[i] = na === 0 ? mb : mean[i] + (delta * nb) / nTot;
    m2[i] = na === 0 ? m2b : m2[i] + m2b + (delta * delta * na * nb) / nTot;
    scored[i] = nTot;
  }
}

export interface CellSummary {
  /** share of all draws in which the cell is in the high class (NaN where never scored) */
  pHigh: Float32Array;
  /** mean potential over the draws in which the cell has a score (NaN where never) */
  mean: Float32Array;
  /** standard deviation of the potential over those draws (sample, n − 1; 0 for one draw) */
  spread: Float32Array;
}

/** Welford (1962): the sample standard deviation is √(M2 / (n − 1)). Per-cell rasters from the accumulators. O(n). */
export function summariseCells(acc: Accumulators, draws: number): CellSummary {
  const n = acc.n;
  const pHigh = new Float32Array(n);
  const mean = new Float32Array(n);
  const spread = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const sc = acc.scored[i];
    if (sc === 0) {
      pHigh[i] = NaN;
      mean[i] = NaN;
      spread[i] = NaN;
      continue;
    }
    pHigh[i] = acc.high[i] / draws;
    mean[i] = acc.mean[i];
    spread[i] = sc > 1 ? Math.sqrt(acc.m2[i] / (sc - 1)) : 0;
  }
  return { pHigh, mean, spread };
}

export interface ConvergencePoint {
  draws: number;
  robustHigh: number;
  contested: number;
  robustLow: number;
  /** cells with a score in at least one draw so far */
  cells: number;
  /** robustHigh / cells */
  robustHighShare: number;
}

/** Common practice, no source. The convergence table from the summed `conv` counts. O(checkpoints). */
export function convergenceTable(checkpoints: Int32Array, conv: Float64Array): ConvergencePoint[] {
  return Array.from(checkpoints, (draws, q) => {
    const o = q * CONVERGENCE_FIELDS;
    const cells = conv[o + 3];
    return { draws, robustHigh: conv[o], contested: conv[o + 1], robustLow: conv[o + 2], cells, robustHighShare: cells > 0 ? conv[o] / cells : 0 };
  });
}

// ---- per-block shares ------------------------------------------------------------------------------

export interface BlockShares {
  /** cells of the block with a score in at least one draw */
  cells: number;
  /** cells of the block on the grid (scored or not) */
  blockCells: number;
  robustHigh: number;
  contested: number;
  robustLow: number;
  robustHighShare: number;
  contestedShare: number;
  robustLowShare: number;
  /** mean over the block's scored cells of the mean potential */
  meanPotential: number | null;
}

/**
 * Design §7 (per block, the share robustly high p ≥ 0.8, contested, and robustly low p ≤ 0.2);
 * common practice, no source. `blockId` per cell: 0 = no block, 1…B = block. Shares are of the
 * block's scored cells. O(n + B).
 */
export function blockShares(pHigh: Float32Array, mean: Float32Array, blockId: Int32Array | Uint16Array | Uint8Array, blocks: number): BlockShares[] {
  if (pHigh.length !== blockId.length) throw new ScoringInputError(`The block raster has ${blockId.length} cells; the probability raster ${pHigh.length}.`);
  const cnt = new Float64Array((blocks + 1) * 6);
  // p is stored in Float32: compare with the Float32 thresholds, as classification.ts does
  const hi = Math.fround(ROBUST_HIGH_P);
  const lo = Math.fround(ROBUST_LOW_P);
  for (let i = 0; i < pHigh.length; i++) {
    const b = blockId[i];
    if (b <= 0 || b > blocks) continue;
    const o = b * 6;
    cnt[o + 5]++;
    const p = pHigh[i];
    if (p !== p) continue;
    cnt[o]++;
    if (p >= hi) cnt[o + 1]++;
    else if (p <= lo) cnt[o + 3]++;
    else cnt[o + 2]++;
    cnt[o + 4] += mean[i];
  }
  const out: BlockShares[] = [];
  for (let b = 1; b <= blocks; b++) {
    const o = b * 6;
    const cells = cnt[o];
    const share = (x: number) => (cells > 0 ? x / cells : 0);
    out.push({
      cells,
      blockCells: cnt[o + 5],
      robustHigh: cnt[o + 1],
      contested: cnt[o + 2],
      robustLow: cnt[o + 3],
      robustHighShare: share(cnt[o + 1]),
      contestedShare: share(cnt[o + 2]),
      robustLowShare: share(cnt[o + 3]),
      meanPotential: cells > 0 ? cnt[o + 4] / cells : null,
    });
  }
  return out;
}

// ---- variance-based sensitivity -------------------------------------------------------------------

export interface VarianceIndices {
  /** base sample size N (model runs: N·(k + 2)) */
  n: number;
  cells: number;
  /** output variance of the robust-free output: the share of sampled cells in the high class */
  variance: number;
  /** per factor: first-order (Saltelli et al. 2010) and total (Jansen 1999) indices */
  firstOrder: Float64Array;
  total: Float64Array;
  output: "high_share";
}

/**
 * Saltelli, A., Annoni, P., Azzini, I., Campolongo, F., Ratto, M. & Tarantola, S. (2010)
 * "Variance based sensitivity analysis of model output. Design and estimator for the total
 * sensitivity index", Computer Physics Communications 181(2), 259–270 — first order
 * Vᵢ ≈ (1/N) Σⱼ f(B)ⱼ (f(A_B⁽ⁱ⁾)ⱼ − f(A)ⱼ), total (Jansen 1999) V_Tᵢ ≈ (1/2N) Σⱼ (f(A)ⱼ − f(A_B⁽ⁱ⁾)ⱼ)²,
 * both divided by the variance of f over A and B. Applied to WLC weights as Ligmann-Zielinska &
 * Jankowski (2014).
 *
 * The inputs are the independent quantities behind each weight draw (gamma deviates for Dirichlet
 * draws, multipliers for uniform ones); the output f is the share of the sampled cells (scores
 * `scores` × `preservation`, both already restricted to the sample) in the high class. Preconditions:
 * base weights normalised; N ≥ 2. Estimates are noisy for small N (they can fall outside 0–1);
 * they are reported as estimates with N. O(N·(k + 2)·cells·k).
 */
export function weightVarianceIndices(
  base: ArrayLike<number>,
  p: WeightPerturbation,
  scores: readonly Float32Array[],
  preservation: Float32Array | null,
  threshold: number,
  nBase: number,
  rng: Mulberry32,
): VarianceIndices {
  checkPerturbation(p);
  const k = base.length;
  if (scores.length !== k) throw new ScoringInputError(`${scores.length} score layers for ${k} weights.`);
  if (!Number.isInteger(nBase) || nBase < 2) throw new ScoringInputError(`Variance-based indices need at least 2 base samples (got ${nBase}).`);
  const m = k ? scores[0].length : 0;
  let s = 0;
  for (let f = 0; f < k; f++) s += base[f];
  const w = Float64Array.from(base, (x) => x / s);
  const t32 = Math.fround(threshold);
  const A = new Float64Array(nBase * k);
  const B = new Float64Array(nBase * k);
  const tmpW = new Float64Array(k);
  for (let j = 0; j < nBase; j++) drawWeightRow(w, p, rng, tmpW, A, j * k);
  for (let j = 0; j < nBase; j++) drawWeightRow(w, p, rng, tmpW, B, j * k);
  const row = new Float64Array(k);
  const f = (inputs: Float64Array, off: number, swap: number, from: Float64Array, fromOff: number): number => {
    let tot = 0;
    for (let q = 0; q < k; q++) {
      const x = q === swap ? from[fromOff + q] : inputs[off + q];
      row[q] = p.kind === "dirichlet" ? x : w[q] * x;
      tot += row[q];
    }
    if (!(tot > 0)) for (let q = 0; q < k; q++) row[q] = w[q];
    else for (let q = 0; q < k; q++) row[q] /= tot;
    let hi = 0;
    let cells = 0;
    for (let i = 0; i < m; i++) {
      let occ = 0;
      for (let q = 0; q < k; q++) occ += row[q] * scores[q][i];
      const pr = preservation ? preservation[i] : 1;
      const v = Math.fround(Math.fround(occ) * pr);
      if (v !== v) continue;
      cells++;
      if (v >= t32) hi++;
    }
    return cells > 0 ? hi / cells : 0;
  };
  const fA = new Float64Array(nBase);
  const fB = new Float64Array(nBase);
  for (let j = 0; j < nBase; j++) {
    fA[j] = f(A, j * k, -1, A, 0);
    fB[j] = f(B, j * k, -1, B, 0);
  }
  let mu = 0;
  for (let j = 0; j < nBase; j++) mu += fA[j] + fB[j];
  mu /= 2 * nBase;
  let variance = 0;
  for (let j = 0; j < nBase; j++) variance += (fA[j] - mu) ** 2 + (fB[j] - mu) ** 2;
  variance /= 2 * nBase - 1;
  const firstOrder = new Float64Array(k);
  const total = new Float64Array(k);
  for (let q = 0; q < k; q++) {
    let vi = 0;
    let vt = 0;
    for (let j = 0; j < nBase; j++) {
      const fAB = f(A, j * k, q, B, j * k);
      vi += fB[j] * (fAB - fA[j]);
      vt += (fA[j] - fAB) ** 2;
    }
    firstOrder[q] = variance > 0 ? vi / nBase / variance : 0;
    total[q] = variance > 0 ? vt / (2 * nBase) / variance : 0;
  }
  return { n: nBase, cells: m, variance, firstOrder, total, output: "high_share" };
}

// ---- landscape draws -------------------------------------------------------------------------------

/** The base landscape at one age, as the reconstruction published it (docs/layers.md names). */
export interface LandscapeBase {
  width: number;
  height: number;
  cellSizeX: number;
  cellSizeY: number;
  /** land_class at the age: 0 land, 1 sea, 2 intertidal, 3 lake, 255 nodata */
  landClass: Uint8Array;
  /** spill_elevation (m; +Infinity where the sea never reaches) */
  spill: Float32Array;
  /** sea level at the age, m (one number: a single curve) */
  seaLevelM: number;
  /** the curve's published σ at the age, m (0 when it gives none) */
  sigmaM: number;
  tidalRangeM: number;
  /** −1 low water, 0 mean, +1 high water: where the shoreline is drawn */
  shorelineTidalLevel: number;
  /** cover_thickness (m; NaN where the horizon is unassessed or absent), or null without a horizon */
  coverThickness: Float32Array | null;
  /** contributing_area at the age, km², or null */
  contributingArea: Float32Array | null;
  streamThresholdKm2: number;
}

/** One landscape draw's parameters. */
export interface LandscapeParams {
  /** standard-normal deviate: sea level moves by z × σ × sigmaScale */
  seaLevelZ: number;
  /** metres added to sea level besides (datum offset) */
  datumOffsetM: number;
  /** v′/v: cover thickness from TWT scales by it */
  velocityRatio: number;
  streamThresholdKm2: number;
  erosionDepthM: number;
}

/** How far the landscape parameters vary (0 = held at the base). */
export interface LandscapeSpread {
  /** sea level within ± sigmaScale × σ (normal, σ from the curve at the age); ≥ 0 */
  sigmaScale: number;
  /** datum offset uniform in ± this many metres; ≥ 0 */
  datumOffsetM: number;
  /** sediment velocity uniform in ± this share of the velocity used (0.1 = ±10 %); 0 – <1 */
  velocityRel: number;
  /** stream threshold log-uniform between threshold ÷ f and threshold × f; f ≥ 1 */
  streamThresholdFactor: number;
  /** erosion depth uniform in ± this share of the weight set's (0.3 = ±30 %); 0 – <1 */
  erosionDepthRel: number;
}

export const NO_LANDSCAPE_SPREAD: LandscapeSpread = { sigmaScale: 0, datumOffsetM: 0, velocityRel: 0, streamThresholdFactor: 1, erosionDepthRel: 0 };

/** True when no landscape parameter varies. O(1). */
export function landscapeFixed(s: LandscapeSpread): boolean {
  return s.sigmaScale === 0 && s.datumOffsetM === 0 && s.velocityRel === 0 && s.streamThresholdFactor === 1 && s.erosionDepthRel === 0;
}

/**
 * Common practice, no source (the distributions are our choice, decision 403). One landscape draw:
 * z ~ N(0, 1) (used as z × sigmaScale × σ), datum offset ~ U(±d), velocity ratio ~ U(1 ± r), stream
 * threshold log-uniform in [T/f, T·f], erosion depth ~ U(e·(1 ± q)). Every deviate is drawn even
 * when its spread is 0, so a run's sequence does not depend on which parameters vary. O(1).
 */
export function drawLandscapeParams(spread: LandscapeSpread, baseThresholdKm2: number, baseErosionDepthM: number, rng: Mulberry32): LandscapeParams {
  const z = standardNormal(rng);
  const u1 = rng.next();
  const u2 = rng.next();
  const u3 = rng.next();
  const u4 = rng.next();
  const lf = Math.log(spread.streamThresholdFactor);
  return {
    seaLevelZ: spread.sigmaScale > 0 ? z : 0,
    datumOffsetM: spread.datumOffsetM * (2 * u1 - 1),
    velocityRatio: 1 + spread.velocityRel * (2 * u2 - 1),
    streamThresholdKm2: lf > 0 ? baseThresholdKm2 * Math.exp(lf * (2 * u3 - 1)) : baseThresholdKm2,
    erosionDepthM: baseErosionDepthM * (1 + spread.erosionDepthRel * (2 * u4 - 1)),
  };
}

/** Common practice, no source. Checks a landscape spread; throws ScoringInputError naming the problem. O(1). */
export function checkLandscapeSpread(s: LandscapeSpread): void {
  if (!(s.sigmaScale >= 0) || !Number.isFinite(s.sigmaScale)) throw new ScoringInputError(`The σ scale of the sea-level curve must be a number ≥ 0 (got ${s.sigmaScale}).`, "sigmaScale");
  if (!(s.datumOffsetM >= 0) || !Number.isFinite(s.datumOffsetM)) throw new ScoringInputError(`The datum offset range must be a number of metres ≥ 0 (got ${s.datumOffsetM}).`, "datumOffsetM");
  if (!(s.velocityRel >= 0 && s.velocityRel < 1)) throw new ScoringInputError(`The sediment velocity spread must be from 0 to below 1 (got ${s.velocityRel}).`, "velocityRel");
  if (!(s.streamThresholdFactor >= 1) || !Number.isFinite(s.streamThresholdFactor)) throw new ScoringInputError(`The stream threshold factor must be a number ≥ 1 (got ${s.streamThresholdFactor}).`, "streamThresholdFactor");
  if (!(s.erosionDepthRel >= 0 && s.erosionDepthRel < 1)) throw new ScoringInputError(`The erosion depth spread must be from 0 to below 1 (got ${s.erosionDepthRel}).`, "erosionDepthRel");
}

/** What one landscape draw changes (arrays owned by the caller, reused between draws). */
export interface LandscapeOut {
  landClass: Uint8Array;
  /** metres the draw adds to height_above_sea per cell (−δ − Δᵢ) */
  heightShift: Float32Array;
  /** dist_shoreline in this draw (m; NaN on nodata), or null when not asked for */
  distShoreline: Float32Array | null;
  /** dist_stream in this draw, or null when not asked for (or no contributing area) */
  distStream: Float32Array | null;
  /** scratch masks */
  mask: Uint8Array;
}

/**
 * Decision 403 (our own approximation of re-running the terrain engine; the rules it reuses are
 * docs/layers.md's). With δ = z·sigmaScale·σ + datum offset and, on cells with a cover thickness
 * c, Δᵢ = (v′/v − 1)·c (the horizon deepens when the velocity rises: thickness = v·TWT/2):
 * - the cell's spill elevation moves with its own surface (sᵢ − Δᵢ — exact on open slopes to the
 *   sea, approximate behind sills) and sea level moves by δ; the land_class rule of
 *   `classifyAtAge` is applied again (sea if s ≤ L − R/2, intertidal if ≤ L + R/2); a base lake cell
 *   that is not reached stays lake, every other cell land; a cell with no shift keeps its base
 *   class;
 * - height_above_sea shifts by −δ − Δᵢ;
 * - the shoreline (land-side cells 4-adjacent to sea at the shoreline's tidal level, as
 *   `seaAtTidalLevel`/`shorelineMask`) and its distance (Felzenszwalb & Huttenlocher 2012,
 *   `euclideanDistance`) are recomputed when asked for;
 * - streams are cells with contributing area ≥ the drawn threshold, not sea or lake in this draw,
 *   and their distance is recomputed when asked for (the routing itself is not re-run).
 * Preconditions: arrays on the base grid. O(n) plus O(n) per distance.
 */
export function landscapeDraw(base: LandscapeBase, params: LandscapeParams, spreadScale: number, out: LandscapeOut, want: { shoreline: boolean; streams: boolean }): void {
  const { width, height, cellSizeX, cellSizeY } = base;
  const n = width * height;
  const lc0 = base.landClass;
  const spill = base.spill;
  const cover = base.coverThickness;
  const delta = params.seaLevelZ * spreadScale * base.sigmaM + params.datumOffsetM;
  const dv = params.velocityRatio - 1;
  const L = Math.fround(base.seaLevelM + delta);
  const half = base.tidalRangeM / 2;
  const lc = out.landClass;
  const hs = out.heightShift;
  for (let i = 0; i < n; i++) {
    const c0 = lc0[i];
    if (c0 === 255) {
      lc[i] = 255;
      hs[i] = NaN;
      continue;
    }
    let di = 0;
    if (cover !== null && dv !== 0) {
      const t = cover[i];
      if (t === t) di = dv * t;
    }
    hs[i] = 0 - delta - di;
    if (delta === 0 && di === 0) {
      lc[i] = c0;
      continue;
    }
    const s = spill[i] - di;
    if (s <= L - half) lc[i] = 1;
    else if (s <= L + half) lc[i] = 2;
    else lc[i] = c0 === 3 ? 3 : 0;
  }
  const mask = out.mask;
  if (want.shoreline && out.distShoreline) {
    // sea at the shoreline's tidal level in this draw, then its land-side edge
    const level = L + (base.shorelineTidalLevel * base.tidalRangeM) / 2;
    const sea = mask;
    for (let i = 0; i < n; i++) {
      if (lc0[i] === 255) {
        sea[i] = 0;
        continue;
      }
      let di = 0;
      if (cover !== null && dv !== 0) {
        const t = cover[i];
        if (t === t) di = dv * t;
      }
      sea[i] = spill[i] - di <= level ? 1 : 0;
    }
    const shore = out.distShoreline; // use as the feature mask first (0/1), then overwrite by the distances
    const feat = new Uint8Array(n);
    for (let r = 0; r < height; r++) {
      for (let c = 0; c < width; c++) {
        const i = r * width + c;
        if (lc0[i] === 255 || sea[i]) continue;
        if ((c + 1 < width && sea[i + 1] && lc0[i + 1] !== 255) || (c > 0 && sea[i - 1] && lc0[i - 1] !== 255) || (r + 1 < height && sea[i + width] && lc0[i + width] !== 255) || (r > 0 && sea[i - width] && lc0[i - width] !== 255))
          feat[i] = 1;
      }
    }
    euclideanDistance(feat, width, height, cellSizeX, cellSizeY, shore);
    for (let i = 0; i < n; i++) if (lc0[i] === 255 || shore[i] === Infinity) shore[i] = NaN;
  }
  if (want.streams && out.distStream && base.contributingArea) {
    const area = base.contributingArea;
    const T = params.streamThresholdKm2;
    const cellKm2 = (cellSizeX * cellSizeY) / 1e6;
    let any = 0;
    for (let i = 0; i < n; i++) {
      const a = area[i];
      const c = lc[i];
      // streamMask's rule: (cells upstream + 1) ≥ T / cell area, area = that count × cell area
      mask[i] = a === a && a / cellKm2 >= T / cellKm2 - 1e-9 && c !== 1 && c !== 3 && c !== 255 ? 1 : 0;
      any |= mask[i];
    }
    const d = out.distStream;
    euclideanDistance(mask, width, height, cellSizeX, cellSizeY, d);
    for (let i = 0; i < n; i++) if (lc0[i] === 255 || !any) d[i] = NaN;
  }
}

/**
 * Common practice, no source. Fresh output arrays for {@link landscapeDraw} on n cells. O(n).
 */
export function createLandscapeOut(n: number, want: { shoreline: boolean; streams: boolean }): LandscapeOut {
  return {
    landClass: new Uint8Array(n),
    heightShift: new Float32Array(n),
    distShoreline: want.shoreline ? new Float32Array(n) : null,
    distStream: want.streams ? new Float32Array(n) : null,
    mask: new Uint8Array(n),
  };
}
