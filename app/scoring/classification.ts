/**
 * The one project classification (issue 10): the classes that Kvamme's gain, the block figures, the
 * sensitivity charts and the core targets all use, so every figure speaks of the same "high" class.
 * Either fixed thresholds, or thresholds frozen once from quantiles of a histogram of a reference
 * raster (after which they are plain thresholds too: a new scoring never moves them).
 *
 * Class rule (the same as `classTallies` in validation.ts): thresholds t₀ > t₁ > … > t_{k−2}; class 0
 * (the highest) is score ≥ t₀, class c is t_c ≤ score < t_{c−1}, the last class is score < t_{k−2}.
 * Thresholds are compared after rounding to Float32, like the score layers, so a cell stored as 0.7
 * falls in the class "≥ 0.7".
 */
import { ScoringInputError } from "./errors.ts";

export interface ProjectClassification {
  /** how the thresholds were set */
  kind: "fixed" | "quantile";
  /** strictly decreasing; k − 1 thresholds for k classes */
  thresholds: number[];
  /** class names, highest first (k of them) */
  labels: string[];
  /** for "quantile": what was asked for and where it was frozen from */
  quantile?: {
    /** requested area share of each class, highest first (sum 1) */
    requestedShares: number[];
    /** the share each class really holds on the reference raster (ties and bins move it) */
    achievedShares: number[];
    bins: number;
    /** finite range of the reference raster */
    min: number;
    max: number;
    /** cells with a finite value in the reference raster */
    cells: number;
    /** free text: which raster (scoring id, age or period) the quantiles were taken from */
    reference: string;
  };
}

const DEFAULT_LABELS: Record<number, string[]> = {
  2: ["high", "low"],
  3: ["high", "medium", "low"],
  4: ["high", "medium", "low", "very low"],
  5: ["very high", "high", "medium", "low", "very low"],
};

function defaultLabels(k: number): string[] {
  return DEFAULT_LABELS[k] ?? Array.from({ length: k }, (_, c) => `class ${c + 1}`);
}

function checkThresholds(thresholds: readonly number[]): void {
  if (thresholds.length < 1 || thresholds.length > 9)
    throw new ScoringInputError(`A classification needs from 2 to 10 classes, that is 1 to 9 thresholds (got ${thresholds.length}).`, "thresholds");
  for (let c = 0; c < thresholds.length; c++) {
    if (!Number.isFinite(thresholds[c])) throw new ScoringInputError(`Class threshold ${c + 1} must be a finite number.`, "thresholds");
    if (c > 0 && !(Math.fround(thresholds[c]) < Math.fround(thresholds[c - 1])))
      throw new ScoringInputError(
        `Class thresholds must decrease from the highest class down (threshold ${c + 1}, ${thresholds[c]}, is not below ${thresholds[c - 1]}).`,
        "thresholds",
      );
  }
}

function checkLabels(labels: readonly string[] | undefined, k: number): string[] {
  if (labels === undefined) return defaultLabels(k);
  if (labels.length !== k) throw new ScoringInputError(`A classification with ${k} classes needs ${k} class names (got ${labels.length}).`, "labels");
  return labels.map((l) => l.trim() || "unnamed");
}

/**
 * Common practice, no source.
 *
 * A classification by fixed thresholds (e.g. [0.7, 0.4] → high ≥ 0.7, medium 0.4–0.7, low < 0.4).
 * Preconditions: 1–9 finite thresholds, strictly decreasing (also after rounding to Float32); labels,
 * when given, one per class — else {@link ScoringInputError}. O(k).
 */
export function fixedClassification(thresholds: readonly number[], labels?: readonly string[]): ProjectClassification {
  checkThresholds(thresholds);
  return { kind: "fixed", thresholds: [...thresholds], labels: checkLabels(labels, thresholds.length + 1) };
}

/**
 * Common practice, no source (equal-area or chosen-share classes from a histogram).
 *
 * Thresholds frozen from quantiles of a reference raster: `shares[c]` is the share of the scored area
 * class c should hold, highest class first (e.g. [0.1, 0.2, 0.3, 0.4]). The raster is binned into
 * `bins` equal bins between its finite minimum and maximum; walking down from the top, each threshold
 * is the lower edge of the bin at which the running share first reaches the wanted cumulative share.
 * Ties and bin width make the achieved shares differ from the requested ones; both are recorded, the
 * achieved ones counted exactly with {@link classOf} on the raster.
 * Preconditions: 2–10 shares, each > 0, summing to 1 (± 1e-6); at least one finite cell; the raster
 * must have enough distinct values to separate the classes — else {@link ScoringInputError} naming
 * the class that collapsed. NaN cells are skipped. Complexity O(n + bins + n·k) (two passes: histogram,
 * then the exact count).
 */
export function quantileClassification(
  reference: Float32Array,
  shares: readonly number[],
  options: { bins?: number; labels?: readonly string[]; reference?: string } = {},
): ProjectClassification {
  const k = shares.length;
  if (k < 2 || k > 10) throw new ScoringInputError(`Quantile classes need from 2 to 10 shares (got ${k}).`, "shares");
  let sum = 0;
  for (let c = 0; c < k; c++) {
    if (!(shares[c] > 0 && shares[c] < 1)) throw new ScoringInputError(`The share of class ${c + 1} must lie between 0 and 1 (got ${shares[c]}).`, "shares");
    sum += shares[c];
  }
  if (Math.abs(sum - 1) > 1e-6) throw new ScoringInputError(`The class shares must add up to 1 (they add up to ${+sum.toFixed(6)}).`, "shares");
  const bins = options.bins ?? 10_000;
  if (!Number.isInteger(bins) || bins < 10 || bins > 1_000_000) throw new ScoringInputError(`A histogram needs from 10 to 1 000 000 bins (got ${bins}).`, "bins");
  const labels = checkLabels(options.labels, k);
  let min = Infinity;
  let max = -Infinity;
  let cells = 0;
  for (let i = 0; i < reference.length; i++) {
    const v = reference[i];
    if (!Number.isFinite(v)) continue;
    if (v < min) min = v;
    if (v > max) max = v;
    cells++;
  }
  if (cells === 0) throw new ScoringInputError("Quantile classes need a reference raster with scored cells; it has none.", "reference");
  if (!(max > min)) throw new ScoringInputError(`Every scored cell of the reference raster has the same value (${min}): quantile classes cannot be formed, use fixed thresholds.`, "reference");
  const width = (max - min) / bins;
  const hist = new Float64Array(bins);
  for (let i = 0; i < reference.length; i++) {
    const v = reference[i];
    if (!Number.isFinite(v)) continue;
    let b = Math.floor((v - min) / width);
    if (b >= bins) b = bins - 1;
    hist[b]++;
  }
  const thresholds: number[] = [];
  let wanted = 0;
  let running = 0;
  let b = bins; // bins b… counted so far
  for (let c = 0; c < k - 1; c++) {
    wanted += shares[c] * cells;
    while (b > 0 && running < wanted - 1e-9) running += hist[--b];
    const t = min + b * width;
    if (thresholds.length > 0 && !(Math.fround(t) < Math.fround(thresholds[thresholds.length - 1])))
      throw new ScoringInputError(
        `Class ${c + 1} ("${labels[c]}") and the class above it fall on the same value of the reference raster (${+t.toPrecision(6)}): too few distinct values for these shares; use fewer classes or fixed thresholds.`,
        "shares",
      );
    if (b === 0)
      throw new ScoringInputError(`Class ${c + 2} ("${labels[c + 1]}") would be empty: the reference raster's values are too concentrated for these shares.`, "shares");
    thresholds.push(t);
  }
  const cls: ProjectClassification = { kind: "quantile", thresholds, labels };
  const counts = new Float64Array(k);
  for (let i = 0; i < reference.length; i++) {
    const c = classOf(cls, reference[i]);
    if (c >= 0) counts[c]++;
  }
  cls.quantile = {
    requestedShares: [...shares],
    achievedShares: Array.from(counts, (n) => n / cells),
    bins,
    min,
    max,
    cells,
    reference: options.reference ?? "",
  };
  return cls;
}

/**
 * Common practice, no source.
 *
 * The class of one value: 0 (highest) … k − 1, or −1 for NaN (no score). The rule is the module's
 * (Float32 rounding of thresholds and value). Preconditions: a classification from this module.
 * O(k).
 */
export function classOf(classification: ProjectClassification, value: number): number {
  if (value !== value) return -1;
  const t = classification.thresholds;
  const v = Math.fround(value);
  let c = 0;
  while (c < t.length && v < Math.fround(t[c])) c++;
  return c;
}

/**
 * Common practice, no source.
 *
 * The class of every cell as a Uint8Array (255 = no score), for block figures and target selection.
 * Preconditions: a classification from this module. O(n·k), no per-cell allocation.
 */
export function classifyRaster(classification: ProjectClassification, scores: Float32Array): Uint8Array {
  const t32 = Float32Array.from(classification.thresholds);
  const m = t32.length;
  const out = new Uint8Array(scores.length);
  for (let i = 0; i < scores.length; i++) {
    const v = scores[i];
    if (v !== v) {
      out[i] = 255;
      continue;
    }
    let c = 0;
    while (c < m && v < t32[c]) c++;
    out[i] = c;
  }
  return out;
}

export interface ClassAreas {
  /** cells per class inside the mask, highest class first */
  cells: Float64Array;
  /** area per class in m² (cells × cell area) */
  areaM2: Float64Array;
  /** cells inside the mask with no score (NaN): not in any class */
  unscoredCells: number;
}

/**
 * Common practice, no source.
 *
 * Area per class over a mask (e.g. cells that were land at the age inside the surveyed area, design
 * §5): cells with mask ≠ 0 and a score are counted in their class; masked cells without a score are
 * counted apart. `mask` null counts every cell.
 * Preconditions: mask, when given, the same length as the scores; cell area > 0 — else
 * {@link ScoringInputError}. O(n·k).
 */
export function classAreas(
  classification: ProjectClassification,
  scores: Float32Array,
  mask: Uint8Array | null,
  cellAreaM2 = 1,
): ClassAreas {
  if (mask && mask.length !== scores.length)
    throw new ScoringInputError(`The mask covers ${mask.length} cells but the scores ${scores.length}: they must come from the same grid.`);
  if (!(cellAreaM2 > 0) || !Number.isFinite(cellAreaM2)) throw new ScoringInputError(`The cell area must be a positive number of m² (got ${cellAreaM2}).`);
  const t32 = Float32Array.from(classification.thresholds);
  const m = t32.length;
  const cells = new Float64Array(m + 1);
  let unscoredCells = 0;
  for (let i = 0; i < scores.length; i++) {
    if (mask && mask[i] === 0) continue;
    const v = scores[i];
    if (v !== v) {
      unscoredCells++;
      continue;
    }
    let c = 0;
    while (c < m && v < t32[c]) c++;
    cells[c]++;
  }
  return { cells, areaM2: cells.map((n) => n * cellAreaM2), unscoredCells };
}

/**
 * Common practice, no source.
 *
 * Counts of values per class (sites or sample scores), highest class first, and how many had no
 * score. O(s·k).
 */
export function classCounts(classification: ProjectClassification, values: ArrayLike<number>): { counts: Float64Array; unscored: number } {
  const counts = new Float64Array(classification.thresholds.length + 1);
  let unscored = 0;
  for (let i = 0; i < values.length; i++) {
    const c = classOf(classification, values[i]);
    if (c < 0) unscored++;
    else counts[c]++;
  }
  return { counts, unscored };
}
