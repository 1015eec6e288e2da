/**
 * Evidence against a model: Kvamme's gain per class and cumulative, the site-capture curve, ROC AUC
 * of presences against background, and bootstrap intervals for gain and AUC (design §5, issue 10).
 *
 * Kvamme, K.L. (1988) "Development and testing of quantitative models", in Judge, W.J. & Sebastian,
 * L. (eds) Quantifying the Present and Predicting the Past, U.S. Bureau of Land Management, Denver,
 * 325–428 (gain G = 1 − p_area/p_sites). Hanley, J.A. & McNeil, B.J. (1982) "The meaning and use of
 * the area under a receiver operating characteristic (ROC) curve", Radiology 143(1), 29–36.
 * Efron, B. & Tibshirani, R.J. (1993) An Introduction to the Bootstrap, Chapman & Hall (percentile
 * intervals).
 *
 * Inputs are scores, not positions: the caller scores each site on the map of its own age or period
 * and passes only cells that were land at that age inside the surveyed area (design §5).
 */
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";

/**
 * Kvamme, K.L. (1988) "Development and testing of quantitative models", in Judge, W.J. & Sebastian,
 * L. (eds) Quantifying the Present and Predicting the Past: Theory, Method, and Application of
 * Archaeological Predictive Modeling, U.S. Department of the Interior, Bureau of Land Management,
 * Denver, 325–428.
 *
 * Kvamme's gain G = 1 − p_area / p_sites for one class (or a cumulative set of classes): 1 is a
 * perfect model, 0 no better than chance, negative worse than chance.
 *
 * Preconditions: shares in [0, 1]. With p_sites = 0, G is −Infinity where p_area > 0 and NaN where
 * p_area = 0 too (undefined). Throws {@link ScoringInputError} for a share outside [0, 1]. O(1).
 */
export function kvammeGain(areaShare: number, siteShare: number): number {
  if (!(areaShare >= 0 && areaShare <= 1)) throw new ScoringInputError(`An area share must lie between 0 and 1 (got ${areaShare}).`);
  if (!(siteShare >= 0 && siteShare <= 1)) throw new ScoringInputError(`A site share must lie between 0 and 1 (got ${siteShare}).`);
  if (siteShare === 0) return areaShare === 0 ? NaN : -Infinity;
  return 1 - areaShare / siteShare;
}

export interface GainTable {
  /** per class, from the highest potential class to the lowest */
  areaShare: Float64Array;
  siteShare: Float64Array;
  gain: Float64Array;
  /** the class and every class above it */
  cumulativeAreaShare: Float64Array;
  cumulativeSiteShare: Float64Array;
  cumulativeGain: Float64Array;
  /** total number of sites (always shown beside the figures) */
  sites: number;
}

/**
 * Kvamme, K.L. (1988) "Development and testing of quantitative models", in Judge, W.J. & Sebastian,
 * L. (eds) Quantifying the Present and Predicting the Past: Theory, Method, and Application of
 * Archaeological Predictive Modeling, U.S. Department of the Interior, Bureau of Land Management,
 * Denver, 325–428.
 *
 * Kvamme's gain per class and cumulative (the class with all classes above it), from each class's
 * area and number of sites, classes ordered from highest potential to lowest.
 * Preconditions: same number of entries; areas (any unit: cells, km²) and site counts finite and
 * ≥ 0; total area and total sites above 0 — else {@link ScoringInputError}. Gains as
 * {@link kvammeGain}. O(k) for k classes.
 */
export function gainByClass(classArea: ArrayLike<number>, classSites: ArrayLike<number>): GainTable {
  const k = classArea.length;
  if (k === 0 || classSites.length !== k)
    throw new ScoringInputError(`Gain needs one area and one site count per class (got ${k} areas and ${classSites.length} counts).`);
  let totalArea = 0;
  let totalSites = 0;
  for (let c = 0; c < k; c++) {
    const a = classArea[c];
    const s = classSites[c];
    if (!(a >= 0) || !Number.isFinite(a)) throw new ScoringInputError(`The area of class ${c + 1} must be a finite number ≥ 0 (got ${a}).`);
    if (!(s >= 0) || !Number.isFinite(s)) throw new ScoringInputError(`The site count of class ${c + 1} must be a finite number ≥ 0 (got ${s}).`);
    totalArea += a;
    totalSites += s;
  }
  if (totalArea === 0) throw new ScoringInputError("Gain needs some area in the classes: none of the cells has a score.");
  if (totalSites === 0) throw new ScoringInputError("Gain needs at least one site with a score; none remains.");
  const t: GainTable = {
    areaShare: new Float64Array(k),
    siteShare: new Float64Array(k),
    gain: new Float64Array(k),
    cumulativeAreaShare: new Float64Array(k),
    cumulativeSiteShare: new Float64Array(k),
    cumulativeGain: new Float64Array(k),
    sites: totalSites,
  };
  let ca = 0;
  let cs = 0;
  for (let c = 0; c < k; c++) {
    ca += classArea[c];
    cs += classSites[c];
    t.areaShare[c] = classArea[c] / totalArea;
    t.siteShare[c] = classSites[c] / totalSites;
    t.gain[c] = kvammeGain(t.areaShare[c], t.siteShare[c]);
    // the last cumulative share is 1 exactly, whatever the rounding of the running sums
    t.cumulativeAreaShare[c] = c === k - 1 ? 1 : Math.min(1, ca / totalArea);
    t.cumulativeSiteShare[c] = c === k - 1 ? 1 : Math.min(1, cs / totalSites);
    t.cumulativeGain[c] = kvammeGain(t.cumulativeAreaShare[c], t.cumulativeSiteShare[c]);
  }
  return t;
}

export interface ClassTallies {
  /** cells per class, highest class first */
  cells: Float64Array;
  /** sites per class, highest class first */
  sites: Float64Array;
  /** sites with no score (NaN), left out of `sites` */
  unscoredSites: number;
}

/**
 * Common practice, no source.
 *
 * Count cells and sites per class under fixed thresholds (the project classification): class 0 is
 * score ≥ thresholds[0], class c is thresholds[c] ≤ score < thresholds[c − 1], the last class is
 * score < thresholds[last].
 * Thresholds are rounded to Float32 like the score layers, so a cell stored as 0.7 falls in the class
 * "≥ 0.7" (in double precision Float32 0.7 is 0.69999998…).
 * Preconditions: thresholds finite and strictly decreasing; NaN cells are not counted (not land at
 * that age, outside the surveyed area, nodata); NaN site scores are counted in `unscoredSites`.
 * Complexity O((n + s)·k) for n cells, s sites and k classes (k is small).
 */
export function classTallies(cellScores: Float32Array, siteScores: ArrayLike<number>, thresholds: readonly number[]): ClassTallies {
  const k = thresholds.length + 1;
  for (let c = 0; c < thresholds.length; c++) {
    if (!Number.isFinite(thresholds[c])) throw new ScoringInputError(`Class threshold ${c + 1} must be a finite number.`);
    if (c > 0 && !(thresholds[c] < thresholds[c - 1]))
      throw new ScoringInputError(`Class thresholds must decrease from the highest class down (threshold ${c + 1}, ${thresholds[c]}, is not below ${thresholds[c - 1]}).`);
  }
  const cells = new Float64Array(k);
  const sites = new Float64Array(k);
  const m = thresholds.length;
  const t32 = Float64Array.from(thresholds, (t) => Math.fround(t));
  for (let i = 0; i < cellScores.length; i++) {
    const v = cellScores[i];
    if (v !== v) continue;
    let c = 0;
    while (c < m && v < t32[c]) c++;
    cells[c]++;
  }
  let unscoredSites = 0;
  for (let i = 0; i < siteScores.length; i++) {
    const v = siteScores[i];
    if (v !== v) { unscoredSites++; continue; }
    let c = 0;
    while (c < m && v < t32[c]) c++;
    sites[c]++;
  }
  return { cells, sites, unscoredSites };
}

function finiteSorted(values: ArrayLike<number>, what: string): Float64Array {
  const out = new Float64Array(values.length);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v))
      throw new ScoringInputError(`${what} ${i + 1} has no score (${v}): leave out sites and cells without a score before validating.`);
    out[i] = v;
  }
  return out.sort();
}

export interface CaptureCurve {
  /** score thresholds, descending: a point counts cells and sites with score ≥ threshold */
  thresholds: Float64Array;
  /** share of the scored area at or above each threshold; starts at 0 and ends at 1 */
  areaShare: Float64Array;
  /** share of the sites at or above each threshold; starts at 0 and ends at 1 */
  siteShare: Float64Array;
}

/**
 * Kvamme, K.L. (1988) "Development and testing of quantitative models", in Judge, W.J. & Sebastian,
 * L. (eds) Quantifying the Present and Predicting the Past: Theory, Method, and Application of
 * Archaeological Predictive Modeling, U.S. Department of the Interior, Bureau of Land Management,
 * Denver, 325–428.
 *
 * The site-capture curve: cells ranked by score, the share of sites captured against the share of
 * area searched, with a point at every distinct site score (the curve's steps), plus (0, 0) at
 * +Infinity and (1, 1) at the lowest score.
 * Site scores are rounded to Float32 like the cells, so a site scored 0.9 meets the cells stored as 0.9.
 * Preconditions: NaN cells are skipped (not scored); site scores finite (else
 * {@link ScoringInputError}); at least one scored cell and one site.
 * Complexity O(n log n + s log s): one sort each, then a merge.
 */
export function siteCaptureCurve(cellScores: Float32Array, siteScores: ArrayLike<number>): CaptureCurve {
  let valid = 0;
  for (let i = 0; i < cellScores.length; i++) if (cellScores[i] === cellScores[i]) valid++;
  if (valid === 0) throw new ScoringInputError("The capture curve needs scored cells; none has a score.");
  if (siteScores.length === 0) throw new ScoringInputError("The capture curve needs at least one site with a score.");
  const cells = new Float64Array(valid);
  for (let i = 0, j = 0; i < cellScores.length; i++) if (cellScores[i] === cellScores[i]) cells[j++] = cellScores[i];
  cells.sort();
  const sites = finiteSorted(siteScores, "Site");
  for (let i = 0; i < sites.length; i++) sites[i] = Math.fround(sites[i]); // compare like the Float32 cells (rounding keeps the order)
  // distinct site scores, descending
  let distinct = 0;
  for (let i = sites.length - 1; i >= 0; i--) if (i === sites.length - 1 || sites[i] !== sites[i + 1]) distinct++;
  const len = distinct + 2;
  const thresholds = new Float64Array(len);
  const areaShare = new Float64Array(len);
  const siteShare = new Float64Array(len);
  thresholds[0] = Infinity;
  let p = 1;
  let ci = cells.length; // cells[ci..] are ≥ the current threshold
  for (let i = sites.length - 1; i >= 0; i--) {
    if (i < sites.length - 1 && sites[i] === sites[i + 1]) continue;
    const t = sites[i];
    let si = i; // sites[si..] ≥ t
    while (si > 0 && sites[si - 1] === t) si--;
    while (ci > 0 && cells[ci - 1] >= t) ci--;
    thresholds[p] = t;
    areaShare[p] = (cells.length - ci) / cells.length;
    siteShare[p] = (sites.length - si) / sites.length;
    p++;
  }
  thresholds[p] = cells[0] < sites[0] ? cells[0] : sites[0];
  areaShare[p] = 1;
  siteShare[p] = 1;
  return { thresholds, areaShare, siteShare };
}

/**
 * AUC from two ascending-sorted samples with multiplicities (null = each value once):
 * Σ over presences of (background below + ½ background equal), over n_p·n_b. O(n_p + n_b).
 */
function aucSortedCounts(p: Float64Array, cp: Uint32Array | null, b: Float64Array, cb: Uint32Array | null): number {
  let np = 0;
  let nb = 0;
  for (let i = 0; i < p.length; i++) np += cp === null ? 1 : cp[i];
  for (let j = 0; j < b.length; j++) nb += cb === null ? 1 : cb[j];
  if (np === 0 || nb === 0) return NaN;
  let j = 0;
  let below = 0;
  let total = 0;
  let i = 0;
  while (i < p.length) {
    const v = p[i];
    let count = 0;
    while (i < p.length && p[i] === v) {
      count += cp === null ? 1 : cp[i];
      i++;
    }
    if (count === 0) continue;
    while (j < b.length && b[j] < v) {
      below += cb === null ? 1 : cb[j];
      j++;
    }
    let equal = 0;
    for (let q = j; q < b.length && b[q] === v; q++) equal += cb === null ? 1 : cb[q];
    total += count * (below + 0.5 * equal);
  }
  return total / (np * nb);
}

/**
 * Hanley, J.A. & McNeil, B.J. (1982) "The meaning and use of the area under a receiver operating
 * characteristic (ROC) curve", Radiology 143(1), 29–36.
 *
 * ROC AUC of presences against background: the probability that a presence scores above a
 * background cell, ties counting ½ — the Mann–Whitney statistic over n_p·n_b.
 * Preconditions: at least one of each; every score finite (NaN → {@link ScoringInputError}: leave
 * out sites and cells without a score). Complexity O(n log n): each sample sorted once, then merged.
 */
export function rocAuc(presence: ArrayLike<number>, background: ArrayLike<number>): number {
  if (presence.length === 0) throw new ScoringInputError("ROC AUC needs at least one site with a score.");
  if (background.length === 0) throw new ScoringInputError("ROC AUC needs background cells; none has a score.");
  return aucSortedCounts(finiteSorted(presence, "Site"), null, finiteSorted(background, "Background cell"), null);
}

/**
 * Hanley, J.A. & McNeil, B.J. (1982) "The meaning and use of the area under a receiver operating
 * characteristic (ROC) curve", Radiology 143(1), 29–36.
 *
 * ROC AUC from scores with frequencies: `presenceCounts[i]` presences score `presenceValues[i]`, and
 * likewise for the background — e.g. a histogram of a quantised score layer as the background.
 * Same statistic as {@link rocAuc}, ties ½.
 * Preconditions: values finite and strictly ascending in each sample; counts non-negative integers,
 * each sample with a positive total — else {@link ScoringInputError}. O(n_p + n_b) (no sorting).
 */
export function rocAucFromCounts(
  presenceValues: Float64Array,
  presenceCounts: Uint32Array,
  backgroundValues: Float64Array,
  backgroundCounts: Uint32Array,
): number {
  const check = (v: Float64Array, c: Uint32Array, what: string) => {
    if (v.length !== c.length) throw new ScoringInputError(`The ${what} values and counts differ in length (${v.length}, ${c.length}).`);
    let total = 0;
    for (let i = 0; i < v.length; i++) {
      if (!Number.isFinite(v[i])) throw new ScoringInputError(`The ${what} value ${i + 1} is not a finite number.`);
      if (i > 0 && !(v[i] > v[i - 1])) throw new ScoringInputError(`The ${what} values must be strictly ascending (value ${i + 1}).`);
      total += c[i];
    }
    if (total === 0) throw new ScoringInputError(`The ${what} counts are all zero.`);
  };
  check(presenceValues, presenceCounts, "presence");
  check(backgroundValues, backgroundCounts, "background");
  return aucSortedCounts(presenceValues, presenceCounts, backgroundValues, backgroundCounts);
}

/**
 * Hanley, J.A. & McNeil, B.J. (1982) "The meaning and use of the area under a receiver operating
 * characteristic (ROC) curve", Radiology 143(1), 29–36.
 *
 * Their standard error of an AUC A from n_p presences and n_b background:
 * SE² = [A(1 − A) + (n_p − 1)(Q₁ − A²) + (n_b − 1)(Q₂ − A²)] / (n_p·n_b), Q₁ = A/(2 − A),
 * Q₂ = 2A²/(1 + A). An approximation (it assumes exponential score
 * distributions); shown beside the bootstrap interval as a check. O(1).
 */
export function hanleyMcNeilStandardError(auc: number, presences: number, background: number): number {
  if (!(auc >= 0 && auc <= 1)) throw new ScoringInputError(`An AUC must lie between 0 and 1 (got ${auc}).`);
  if (!(presences >= 1 && background >= 1)) throw new ScoringInputError("The standard error needs at least one presence and one background cell.");
  const q1 = auc / (2 - auc);
  const q2 = (2 * auc * auc) / (1 + auc);
  const a2 = auc * auc;
  return Math.sqrt((auc * (1 - auc) + (presences - 1) * (q1 - a2) + (background - 1) * (q2 - a2)) / (presences * background));
}

export interface BootstrapOptions {
  /** resamples (default 1000) */
  replicates?: number;
  /** seed of the generator, stored with the result so it can be reproduced */
  seed: number;
  /** two-sided interval level (default 0.95) */
  level?: number;
}

export interface Interval {
  estimate: number;
  lower: number;
  upper: number;
}

function checkBootstrap(o: BootstrapOptions): { replicates: number; level: number } {
  const replicates = o.replicates ?? 1000;
  const level = o.level ?? 0.95;
  if (!Number.isInteger(replicates) || replicates < 10 || replicates > 100_000)
    throw new ScoringInputError(`A bootstrap needs from 10 to 100 000 replicates (got ${replicates}).`);
  if (!(level > 0 && level < 1)) throw new ScoringInputError(`An interval level must lie between 0 and 1 (got ${level}).`);
  if (!Number.isFinite(o.seed)) throw new ScoringInputError("A bootstrap needs a numeric seed.");
  return { replicates, level };
}

/** Percentile (type 7: linear between order statistics) of an ascending array. */
function percentile(sorted: Float64Array, q: number): number {
  const pos = q * (sorted.length - 1);
  const i = Math.floor(pos);
  const f = pos - i;
  if (i + 1 >= sorted.length) return sorted[sorted.length - 1];
  const a = sorted[i];
  const b = sorted[i + 1];
  return f === 0 || a === b ? a : a + f * (b - a);
}

/** Draw n indices from 0…n−1 with replacement, as counts. */
function resampleCounts(rng: Mulberry32, counts: Uint32Array): void {
  const n = counts.length;
  counts.fill(0);
  for (let k = 0; k < n; k++) counts[rng.nextInt(n)]++;
}

export interface AucBootstrap extends Interval {
  /** standard deviation of the replicates */
  standardError: number;
  presences: number;
  background: number;
  replicates: number;
  seed: number;
}

/**
 * Efron, B. & Tibshirani, R.J. (1993) An Introduction to the Bootstrap, Chapman & Hall, New York
 * (percentile intervals). Hanley, J.A. & McNeil, B.J. (1982) "The meaning and use of the area under
 * a receiver operating characteristic (ROC) curve", Radiology 143(1), 29–36.
 *
 * ROC AUC with a percentile bootstrap interval: presences and background resampled separately with
 * replacement (each keeps its size), the AUC recomputed per replicate.
 * Preconditions: as {@link rocAuc}; options as {@link BootstrapOptions}. Deterministic for a seed.
 * Complexity O(n log n) once (sorting), then O(R·n) for R replicates: a resample of a sorted sample
 * is the same sorted values with multiplicities, so no replicate sorts.
 */
export function bootstrapAuc(presence: ArrayLike<number>, background: ArrayLike<number>, options: BootstrapOptions): AucBootstrap {
  const { replicates, level } = checkBootstrap(options);
  if (presence.length === 0) throw new ScoringInputError("ROC AUC needs at least one site with a score.");
  if (background.length === 0) throw new ScoringInputError("ROC AUC needs background cells; none has a score.");
  const p = finiteSorted(presence, "Site");
  const b = finiteSorted(background, "Background cell");
  const estimate = aucSortedCounts(p, null, b, null);
  const rng = new Mulberry32(options.seed);
  const cp = new Uint32Array(p.length);
  const cb = new Uint32Array(b.length);
  const reps = new Float64Array(replicates);
  let mean = 0;
  for (let r = 0; r < replicates; r++) {
    resampleCounts(rng, cp);
    resampleCounts(rng, cb);
    reps[r] = aucSortedCounts(p, cp, b, cb);
    mean += reps[r];
  }
  mean /= replicates;
  let ss = 0;
  for (let r = 0; r < replicates; r++) ss += (reps[r] - mean) ** 2;
  reps.sort();
  const alpha = (1 - level) / 2;
  return {
    estimate,
    lower: percentile(reps, alpha),
    upper: percentile(reps, 1 - alpha),
    standardError: Math.sqrt(ss / (replicates - 1)),
    presences: p.length,
    background: b.length,
    replicates,
    seed: options.seed,
  };
}

export interface GainBootstrap {
  /** per class, highest first: Kvamme's gain of the class alone */
  gain: Interval[];
  /** per class: cumulative gain (the class and all above it) */
  cumulativeGain: Interval[];
  sites: number;
  replicates: number;
  seed: number;
}

/**
 * Efron, B. & Tibshirani, R.J. (1993) An Introduction to the Bootstrap, Chapman & Hall, New York
 * (percentile intervals). Kvamme, K.L. (1988) "Development and testing of quantitative models", in
 * Judge, W.J. & Sebastian, L. (eds) Quantifying the Present and Predicting the Past: Theory,
 * Method, and Application of Archaeological Predictive Modeling, U.S. Department of the Interior,
 * Bureau of Land Management, Denver, 325–428.
 *
 * Kvamme's gain per class and cumulative, with percentile bootstrap intervals from resampling the
 * sites with replacement (the areas are a census of the map, not a sample, so they stay fixed).
 * Preconditions: `siteClass[i]` is the class (0 = highest) of site i, an integer in 0…k−1 for the k
 * classes of `classArea`; areas as {@link gainByClass}. A replicate in which a class holds no site
 * gives that class a gain of −Infinity (the lower bound can be −Infinity with few sites — show the
 * number of sites). Deterministic for a seed. Complexity O(R·(s + k)) for R replicates, s sites.
 */
export function bootstrapGain(siteClass: ArrayLike<number>, classArea: ArrayLike<number>, options: BootstrapOptions): GainBootstrap {
  const { replicates, level } = checkBootstrap(options);
  const k = classArea.length;
  const s = siteClass.length;
  const counts = new Float64Array(k);
  for (let i = 0; i < s; i++) {
    const c = siteClass[i];
    if (!Number.isInteger(c) || c < 0 || c >= k)
      throw new ScoringInputError(`Site ${i + 1} is in class ${c}, but there are ${k} classes (0 to ${k - 1}).`);
    counts[c]++;
  }
  const base = gainByClass(classArea, counts);
  let totalArea = 0;
  for (let c = 0; c < k; c++) totalArea += classArea[c];
  const rng = new Mulberry32(options.seed);
  const per = Array.from({ length: k }, () => new Float64Array(replicates));
  const cum = Array.from({ length: k }, () => new Float64Array(replicates));
  const rc = new Float64Array(k);
  for (let r = 0; r < replicates; r++) {
    rc.fill(0);
    for (let i = 0; i < s; i++) rc[siteClass[rng.nextInt(s)]]++;
    let ca = 0;
    let cs = 0;
    for (let c = 0; c < k; c++) {
      ca += classArea[c];
      cs += rc[c];
      per[c][r] = kvammeGain(classArea[c] / totalArea, rc[c] / s);
      cum[c][r] = c === k - 1 ? kvammeGain(1, 1) : kvammeGain(Math.min(1, ca / totalArea), Math.min(1, cs / s));
    }
  }
  const alpha = (1 - level) / 2;
  const interval = (est: number, reps: Float64Array): Interval => {
    reps.sort();
    return { estimate: est, lower: percentile(reps, alpha), upper: percentile(reps, 1 - alpha) };
  };
  return {
    gain: per.map((reps, c) => interval(base.gain[c], reps)),
    cumulativeGain: cum.map((reps, c) => interval(base.cumulativeGain[c], reps)),
    sites: s,
    replicates,
    seed: options.seed,
  };
}
