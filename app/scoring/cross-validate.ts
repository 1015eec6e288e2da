/**
 * Spatial-block cross-validation of the random forest (design §4, issue 10): whole blocks go to k
 * folds; for each fold a forest is trained on the other folds and predicts the held-out samples, so
 * every presence and background cell gets an out-of-fold probability from a model that never saw
 * its block. Per fold: ROC AUC of held-out presences against held-out background, and Kvamme's gain
 * per class of the project classification; then their mean and spread across folds, and the AUC of
 * all out-of-fold predictions pooled.
 *
 * Roberts, D.R. et al. (2017) "Cross-validation strategies for data with temporal, spatial,
 * hierarchical, or phylogenetic structure", Ecography 40(8), 913–929. Hanley & McNeil (1982) and
 * Kvamme (1988) as in validation.ts.
 *
 * The area shares of a fold's gain are estimated from its held-out background cells: they are a
 * random sample of searched ground that was land at the presences' ages (background.ts), so the
 * share of them in a class estimates the share of that ground in the class. The published gain on the
 * map (validation.ts over the predicted raster) uses the census of cells instead.
 */
import { classCounts, type ProjectClassification } from "./classification.ts";
import { ScoringInputError } from "./errors.ts";
import { predictSamples, resolveForestSettings, subsetTrainingSet, trainForest, type ForestSettings, type TrainingSet } from "./forest.ts";
import { assignBlockFolds, type BlockGridShape, type FoldAssignment } from "./spatial-blocks.ts";
import { gainByClass, rocAuc } from "./validation.ts";

export interface FoldMetrics {
  fold: number;
  trainPresences: number;
  trainBackground: number;
  testPresences: number;
  testBackground: number;
  auc: number;
  /** Kvamme's gain per class, highest first (−Infinity: the class holds background but no presence) */
  gain: number[];
  cumulativeGain: number[];
  /** held-out presences and background per class */
  presencesPerClass: number[];
  backgroundPerClass: number[];
  trainingMs: number;
}

export interface Spread {
  mean: number;
  /** sample standard deviation across folds (NaN with one finite value) */
  sd: number;
  min: number;
  max: number;
  /** folds with a finite value (the others: a class without presences, gain −Infinity) */
  finiteFolds: number;
}

export interface CrossValidationResult {
  /** out-of-fold probability of each sample of the training set */
  outOfFold: Float64Array;
  /** fold of each sample */
  fold: Int32Array;
  assignment: Omit<FoldAssignment, "fold" | "block" | "blockFold">;
  summary: {
    k: number;
    blockSizeM: number;
    seed: number;
    presences: number;
    background: number;
    folds: FoldMetrics[];
    auc: Spread;
    /** AUC of all out-of-fold predictions together */
    pooledAuc: number;
    gain: Spread[];
    cumulativeGain: Spread[];
    classLabels: string[];
    thresholds: number[];
    areaShareFrom: "held-out background cells";
  };
}

/** Common practice, no source. Mean, sample SD, min and max of the finite values. O(n). */
export function spread(values: readonly number[]): Spread {
  const f = values.filter((v) => Number.isFinite(v));
  if (f.length === 0) return { mean: NaN, sd: NaN, min: NaN, max: NaN, finiteFolds: 0 };
  const mean = f.reduce((s, v) => s + v, 0) / f.length;
  const sd = f.length > 1 ? Math.sqrt(f.reduce((s, v) => s + (v - mean) ** 2, 0) / (f.length - 1)) : NaN;
  return { mean, sd, min: Math.min(...f), max: Math.max(...f), finiteFolds: f.length };
}

/**
 * Roberts et al. (2017), Ecography 40(8) (spatial-block cross-validation); Hanley & McNeil (1982)
 * (AUC); Kvamme (1988) (gain).
 *
 * Preconditions: a training set from `trainingSet` on `grid`; the whole set holds at least the
 * forest's `minPresences` presences (else {@link ScoringInputError} with the number); blocks and folds
 * as {@link assignBlockFolds}; every fold holds background (else {@link ScoringInputError}: use
 * smaller blocks or fewer folds). Fold models are trained with the given settings (their
 * `minPresences` applies to the whole set only). Deterministic for the seeds.
 * Complexity: k trainings on about (k − 1)/k of the samples, plus O(n·T·depth) prediction.
 */
export function crossValidate(
  set: TrainingSet,
  options: {
    grid: BlockGridShape;
    blockSizeM: number;
    k: number;
    seed: number;
    classification: ProjectClassification;
    forest?: Partial<ForestSettings>;
    onFold?: (done: number, k: number) => void;
  },
): CrossValidationResult {
  const settings = resolveForestSettings(options.forest);
  if (set.presences < settings.minPresences)
    throw new ScoringInputError(
      `Cross-validation needs at least ${settings.minPresences} presences (in-situ sites and cores with archaeological material); only ${set.presences} remain.`,
      "presences",
    );
  const a = assignBlockFolds(options.grid, { blockSizeM: options.blockSizeM, k: options.k, seed: options.seed }, set.cells, set.labels);
  for (let f = 0; f < a.k; f++)
    if (a.background[f] === 0)
      throw new ScoringInputError(`Fold ${f + 1} of ${a.k} holds no background cells, so it cannot be scored; use smaller blocks or fewer folds.`, "folds");
  const n = set.labels.length;
  const p = set.factorIds.length;
  const outOfFold = new Float64Array(n).fill(NaN);
  const folds: FoldMetrics[] = [];
  const cls = options.classification;
  for (let f = 0; f < a.k; f++) {
    const trainRows: number[] = [];
    const testRows: number[] = [];
    for (let i = 0; i < n; i++) (a.fold[i] === f ? testRows : trainRows).push(i);
    const train = subsetTrainingSet(set, trainRows);
    const forest = trainForest(train, { ...settings, minPresences: 2 });
    const testValues = new Float64Array(testRows.length * p);
    for (let j = 0; j < testRows.length; j++) testValues.set(set.values.subarray(testRows[j] * p, testRows[j] * p + p), j * p);
    const prob = predictSamples(forest.compiled, testValues);
    const pres: number[] = [];
    const back: number[] = [];
    for (let j = 0; j < testRows.length; j++) {
      outOfFold[testRows[j]] = prob[j];
      (set.labels[testRows[j]] === 1 ? pres : back).push(prob[j]);
    }
    const pc = classCounts(cls, pres).counts;
    const bc = classCounts(cls, back).counts;
    const g = gainByClass(bc, pc);
    folds.push({
      fold: f,
      trainPresences: train.presences,
      trainBackground: train.background,
      testPresences: pres.length,
      testBackground: back.length,
      auc: rocAuc(pres, back),
      gain: Array.from(g.gain),
      cumulativeGain: Array.from(g.cumulativeGain),
      presencesPerClass: Array.from(pc),
      backgroundPerClass: Array.from(bc),
      trainingMs: Math.round(forest.trainingMs),
    });
    options.onFold?.(f + 1, a.k);
  }
  const allP: number[] = [];
  const allB: number[] = [];
  for (let i = 0; i < n; i++) (set.labels[i] === 1 ? allP : allB).push(outOfFold[i]);
  const classes = cls.thresholds.length + 1;
  const { fold, block: _block, blockFold: _blockFold, ...assignment } = a;
  return {
    outOfFold,
    fold,
    assignment,
    summary: {
      k: a.k,
      blockSizeM: a.blockSizeM,
      seed: options.seed,
      presences: set.presences,
      background: set.background,
      folds,
      auc: spread(folds.map((x) => x.auc)),
      pooledAuc: rocAuc(allP, allB),
      gain: Array.from({ length: classes }, (_, c) => spread(folds.map((x) => x.gain[c]))),
      cumulativeGain: Array.from({ length: classes }, (_, c) => spread(folds.map((x) => x.cumulativeGain[c]))),
      classLabels: [...cls.labels],
      thresholds: [...cls.thresholds],
      areaShareFrom: "held-out background cells",
    },
  };
}
