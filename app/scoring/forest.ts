/**
 * The trained alternative (design §4, issue 10): a random forest on factor values, presences against
 * a target-group background, trained with ml-random-forest 2.1.0 and predicted by counting the trees'
 * votes ourselves over compiled trees (typed arrays, no per-cell allocation), chunk by chunk.
 *
 * Breiman, L. (2001) "Random forests", Machine Learning 45(1), 5–32. Ho, T.K. (1998) "The random
 * subspace method for constructing decision forests", IEEE Transactions on Pattern Analysis and
 * Machine Intelligence 20(8), 832–844 (the library draws a subset of the factors per tree, not per
 * split). Phillips, S.J. et al. (2009) "Sample selection bias and presence-only distribution models",
 * Ecological Applications 19(1), 181–197 (background from where searches happened).
 *
 * Why the votes are counted here: the library's `predictProbability` sums the votes with
 * `reduce` and no initial value, so the first tree's prediction (0 or 1) becomes the starting sum
 * instead of a counted vote — one tree is dropped, and a first vote of 1 adds 1 to a sum kept in
 * millionths. Its per-tree predictions (`predictionValues`) are right, and {@link compileForest}
 * reproduces them exactly (same comparison `value < split` → left, same leaf class: the first
 * largest entry of the leaf's class distribution).
 *
 * What trains: only presences — in-situ sites with an adequate position, and cores with
 * archaeological material. Derived, trawled and dredged finds (and finds of unknown context) never
 * enter training; they are listed as excluded with the reason. Cores without archaeological
 * material are NOT absences (a core samples far less than a square metre — check-values.md, facts
 * of the trade): they never become label 0; their cored areas only widen the search-effort mask the
 * background is drawn from, so a negative core's cell is label 0 only if drawn as a background cell,
 * like any searched cell.
 */
import { RandomForestClassifier } from "ml-random-forest";
import { ScoringInputError } from "./errors.ts";
import type { FactorId } from "./factors.ts";
import { sampleIndices } from "./background.ts";
import type { CrossValidationResult } from "./cross-validate.ts";

export const FOREST_LIBRARY = "ml-random-forest 2.1.0";

/** Thrown when a prediction is stopped by its caller (not an input error). */
export class PredictionCancelled extends Error {
  constructor() {
    super("prediction cancelled");
    this.name = "PredictionCancelled";
  }
}

// ---- the training set ---------------------------------------------------------------------------

/** A known site (site_records): only `in_situ` with an adequate position ever trains. */
export interface SiteEvidence {
  kind: "site";
  id: string;
  /** in_situ, derived, trawled, dredged or unknown (site_records.context) */
  context: string;
  /** false when the position is too imprecise for the grid (the caller's rule, e.g. precision ≤ a cell) */
  positionAdequate: boolean;
  /** cell index in the grid, −1 outside it */
  cell: number;
  /** the reconstructed age whose layers the site is compared at */
  ageKa: number;
}

/** A core: a presence only when it holds archaeological material; never an absence. */
export interface CoreEvidence {
  kind: "core";
  id: string;
  archaeologicalMaterial: boolean;
  cell: number;
  ageKa: number;
}

export type Evidence = SiteEvidence | CoreEvidence;

export type ExclusionReason =
  | "derived find"
  | "trawled find"
  | "dredged find"
  | "context unknown"
  | "position too imprecise"
  | "core without archaeological material (not an absence)"
  | "outside the grid"
  | "no reconstructed age"
  | "no factor value at its cell"
  | "not land at its age";

/** Factor layers per age, each in the order of `factorIds` (static layers may repeat at every age). */
export interface FactorStack {
  factorIds: readonly FactorId[];
  ages: readonly { ageKa: number; layers: readonly Float32Array[] }[];
}

export interface TrainingSet {
  factorIds: FactorId[];
  /** row-major, samples × factors */
  values: Float64Array;
  /** 1 presence, 0 background */
  labels: Uint8Array;
  cells: Uint32Array;
  ageKa: Float64Array;
  /** evidence id for a presence, "" for a background cell */
  ids: string[];
  presences: number;
  sites: number;
  cores: number;
  background: number;
  /** evidence left out of training, with the reason */
  excluded: { id: string; kind: "site" | "core"; reason: ExclusionReason }[];
  /** background cells left out for a missing factor value */
  backgroundWithoutValues: number;
  /** sizes before the cap, when the cap cut the set */
  capped: { presences: number; background: number } | null;
}

function reasonForContext(context: string): ExclusionReason | null {
  switch (context) {
    case "in_situ":
      return null;
    case "derived":
      return "derived find";
    case "trawled":
      return "trawled find";
    case "dredged":
      return "dredged find";
    default:
      return "context unknown";
  }
}

/**
 * Phillips et al. (2009), Ecological Applications 19(1) (presences against a target-group
 * background); the filtering and the cap are common practice, no source.
 *
 * Builds the samples the forest trains on: each presence's factor values read at its own age, each
 * background cell's at the age it was drawn for. Presences are in-situ sites with an adequate position
 * and cores with archaeological material; everything else is excluded with its reason (derived,
 * trawled and dredged finds, unknown context, imprecise positions, cores without material — which are
 * never made absences —, cells outside the grid, ages not in the stack, cells with a NaN factor).
 * Background cells with a NaN factor are dropped and counted. Infinite values are kept (a distance to
 * a feature that does not exist at that age). When presences + background exceed `maxSamples`,
 * presences keep at most half of the cap and the background the rest, each a seeded random subset
 * (order kept), so the cap never favours one corner of the grid.
 * Preconditions: every layer has `cellCount` cells; factorIds non-empty and distinct; maxSamples ≥ 2
 * — else {@link ScoringInputError}. Complexity O((e + b)·p) for e evidence, b background, p factors.
 */
export function trainingSet(input: {
  evidence: readonly Evidence[];
  background: readonly { ageKa: number; cells: ArrayLike<number> }[];
  stack: FactorStack;
  cellCount: number;
  maxSamples: number;
  seed: number;
  /** per age, 1 where the cell was land or intertidal: a presence elsewhere (sea or lake then) is excluded, as validation does */
  land?: ReadonlyMap<number, Uint8Array>;
}): TrainingSet {
  const { evidence, background, stack, cellCount, maxSamples, seed, land } = input;
  const p = stack.factorIds.length;
  if (p === 0) throw new ScoringInputError("The forest needs at least one factor.", "factors");
  if (new Set(stack.factorIds).size !== p) throw new ScoringInputError("A factor is listed twice for the forest.", "factors");
  if (!Number.isInteger(maxSamples) || maxSamples < 2) throw new ScoringInputError(`The sample cap must be a whole number ≥ 2 (got ${maxSamples}).`, "maxSamples");
  const byAge = new Map<number, readonly Float32Array[]>();
  for (const a of stack.ages) {
    if (a.layers.length !== p) throw new ScoringInputError(`At ${a.ageKa} ka there are ${a.layers.length} factor layers for ${p} factors.`);
    for (let f = 0; f < p; f++)
      if (a.layers[f].length !== cellCount)
        throw new ScoringInputError(`The layer of ${stack.factorIds[f]} at ${a.ageKa} ka has ${a.layers[f].length} cells, the grid ${cellCount}.`);
    byAge.set(a.ageKa, a.layers);
  }
  const row = new Float64Array(p);
  const read = (layers: readonly Float32Array[], cell: number): boolean => {
    for (let f = 0; f < p; f++) {
      const v = layers[f][cell];
      if (v !== v) return false;
      row[f] = v;
    }
    return true;
  };
  const excluded: TrainingSet["excluded"] = [];
  const pres: { id: string; kind: "site" | "core"; cell: number; ageKa: number; values: Float64Array }[] = [];
  for (const e of evidence) {
    let reason: ExclusionReason | null = null;
    if (e.kind === "site") {
      reason = reasonForContext(e.context);
      if (!reason && !e.positionAdequate) reason = "position too imprecise";
    } else if (!e.archaeologicalMaterial) reason = "core without archaeological material (not an absence)";
    if (!reason && !(Number.isInteger(e.cell) && e.cell >= 0 && e.cell < cellCount)) reason = "outside the grid";
    const layers = byAge.get(e.ageKa);
    if (!reason && !layers) reason = "no reconstructed age";
    if (!reason && land && land.get(e.ageKa)?.[e.cell] === 0) reason = "not land at its age";
    if (!reason && !read(layers!, e.cell)) reason = "no factor value at its cell";
    if (reason) {
      excluded.push({ id: e.id, kind: e.kind, reason });
      continue;
    }
    pres.push({ id: e.id, kind: e.kind, cell: e.cell, ageKa: e.ageKa, values: Float64Array.from(row) });
  }
  const back: { cell: number; ageKa: number; values: Float64Array }[] = [];
  let backgroundWithoutValues = 0;
  for (const draw of background) {
    const layers = byAge.get(draw.ageKa);
    if (!layers) throw new ScoringInputError(`Background was drawn at ${draw.ageKa} ka, an age without factor layers.`);
    for (let j = 0; j < draw.cells.length; j++) {
      const c = draw.cells[j];
      if (!(Number.isInteger(c) && c >= 0 && c < cellCount)) throw new ScoringInputError(`Background cell ${c} lies outside the grid.`);
      if (!read(layers, c)) {
        backgroundWithoutValues++;
        continue;
      }
      back.push({ cell: c, ageKa: draw.ageKa, values: Float64Array.from(row) });
    }
  }
  let keepP: ArrayLike<number> | null = null;
  let keepB: ArrayLike<number> | null = null;
  let capped: TrainingSet["capped"] = null;
  if (pres.length + back.length > maxSamples) {
    capped = { presences: pres.length, background: back.length };
    const np = Math.min(pres.length, Math.floor(maxSamples / 2));
    const nb = Math.min(back.length, maxSamples - np);
    if (np < pres.length) keepP = sampleIndices(pres.length, np, seed);
    if (nb < back.length) keepB = sampleIndices(back.length, nb, seed ^ 0x5bd1e995);
  }
  const P = keepP ? Array.from(keepP, (i) => pres[i]) : pres;
  const B = keepB ? Array.from(keepB, (i) => back[i]) : back;
  const n = P.length + B.length;
  const set: TrainingSet = {
    factorIds: [...stack.factorIds],
    values: new Float64Array(n * p),
    labels: new Uint8Array(n),
    cells: new Uint32Array(n),
    ageKa: new Float64Array(n),
    ids: new Array<string>(n),
    presences: P.length,
    sites: P.filter((x) => x.kind === "site").length,
    cores: P.filter((x) => x.kind === "core").length,
    background: B.length,
    excluded,
    backgroundWithoutValues,
    capped,
  };
  let s = 0;
  for (const x of P) {
    set.values.set(x.values, s * p);
    set.labels[s] = 1;
    set.cells[s] = x.cell;
    set.ageKa[s] = x.ageKa;
    set.ids[s] = x.id;
    s++;
  }
  for (const x of B) {
    set.values.set(x.values, s * p);
    set.labels[s] = 0;
    set.cells[s] = x.cell;
    set.ageKa[s] = x.ageKa;
    set.ids[s] = "";
    s++;
  }
  return set;
}

/**
 * Common practice, no source. The samples `rows` of a training set as a new training set (for a
 * fold); its exclusions are the whole set's. Preconditions: rows are indices of samples of `set`.
 * O(r·p).
 */
export function subsetTrainingSet(set: TrainingSet, rows: ArrayLike<number>): TrainingSet {
  const p = set.factorIds.length;
  const n = rows.length;
  const out: TrainingSet = {
    ...set,
    values: new Float64Array(n * p),
    labels: new Uint8Array(n),
    cells: new Uint32Array(n),
    ageKa: new Float64Array(n),
    ids: new Array<string>(n),
    presences: 0,
    sites: 0,
    cores: 0,
    background: 0,
    capped: null,
  };
  for (let j = 0; j < n; j++) {
    const r = rows[j];
    out.values.set(set.values.subarray(r * p, r * p + p), j * p);
    out.labels[j] = set.labels[r];
    out.cells[j] = set.cells[r];
    out.ageKa[j] = set.ageKa[r];
    out.ids[j] = set.ids[r];
    if (set.labels[r] === 1) out.presences++;
    else out.background++;
  }
  return out;
}

// ---- settings ------------------------------------------------------------------------------------

export interface ForestSettings {
  /** cap on presences + background (presences keep at most half) */
  maxSamples: number;
  trees: number;
  seed: number;
  /** refuse to train with fewer presences than this */
  minPresences: number;
  /** share of the factors each tree sees (random subspace, drawn without replacement) */
  featureShare: number;
  /** deepest split level */
  maxDepth: number;
  /** a node with this many samples or fewer becomes a leaf */
  minNodeSamples: number;
  /** cells per prediction call */
  chunkCells: number;
}

export const DEFAULT_FOREST_SETTINGS: Readonly<ForestSettings> = {
  maxSamples: 2000,
  trees: 50,
  seed: 20260,
  minPresences: 10,
  featureShare: 0.7,
  maxDepth: 20,
  minNodeSamples: 3,
  chunkCells: 50_000,
};

function intIn(name: string, v: number, lo: number, hi: number): void {
  if (!Number.isInteger(v) || v < lo || v > hi) throw new ScoringInputError(`${name} must be a whole number from ${lo} to ${hi} (got ${v}).`, name);
}

/**
 * Common practice, no source. The defaults with the given settings over them, checked.
 * Preconditions: each setting in its range — else {@link ScoringInputError} naming it. O(1).
 */
export function resolveForestSettings(partial: Partial<ForestSettings> = {}): ForestSettings {
  const s: ForestSettings = { ...DEFAULT_FOREST_SETTINGS, ...partial };
  intIn("maxSamples", s.maxSamples, 20, 20_000);
  intIn("trees", s.trees, 1, 500);
  intIn("seed", s.seed, -(2 ** 31), 2 ** 31 - 1);
  intIn("minPresences", s.minPresences, 2, 10_000);
  if (!(s.featureShare > 0 && s.featureShare <= 1)) throw new ScoringInputError(`featureShare must lie in (0, 1] (got ${s.featureShare}).`, "featureShare");
  intIn("maxDepth", s.maxDepth, 1, 64);
  intIn("minNodeSamples", s.minNodeSamples, 1, 1000);
  intIn("chunkCells", s.chunkCells, 1000, 10_000_000);
  return s;
}

// ---- training -----------------------------------------------------------------------------------

/** A forest as flat arrays: node n of tree t is a split (feature ≥ 0) or a leaf voting `vote`. */
export interface CompiledForest {
  factorCount: number;
  trees: number;
  /** root node of each tree */
  roots: Int32Array;
  /** global factor column of a split node, −1 for a leaf */
  feature: Int32Array;
  /** split value: value < threshold goes left */
  threshold: Float64Array;
  left: Int32Array;
  right: Int32Array;
  /** a leaf's vote (0 or 1) */
  vote: Uint8Array;
}

export interface SerialisedForest {
  format: "lowstand-random-forest";
  version: 1;
  library: typeof FOREST_LIBRARY;
  factorIds: FactorId[];
  settings: ForestSettings;
  /** the library's own toJSON() */
  model: ReturnType<RandomForestClassifier["toJSON"]>;
}

export interface TrainedForest {
  factorIds: FactorId[];
  settings: ForestSettings;
  /** the library's model (for its per-tree predictions and serialisation) */
  model: RandomForestClassifier;
  compiled: CompiledForest;
  /** factors each tree saw */
  featuresPerTree: number;
  trainingMs: number;
}

function exclusionSummary(set: TrainingSet): string {
  const counts = new Map<string, number>();
  for (const x of set.excluded) counts.set(x.reason, (counts.get(x.reason) ?? 0) + 1);
  if (counts.size === 0) return "";
  return ` (left out: ${[...counts].map(([r, n]) => `${n} ${r}`).join(", ")})`;
}

/**
 * Breiman (2001), Machine Learning 45(1); Ho (1998), IEEE TPAMI 20(8); trained with
 * ml-random-forest 2.1.0 (CART trees with Gini gain, bootstrap samples, factors drawn per tree).
 *
 * Trains the forest on a training set: `trees` trees, each on a bootstrap sample of the rows and a
 * random `featureShare` of the factors (at least one), seeded. Refuses with
 * {@link ScoringInputError} when fewer than `minPresences` presences remain — the message gives the
 * number and what was left out — or when there is no background.
 * Complexity: the library's CART tries every split between label changes, O(d·p·n²) per tree in the
 * worst case (n samples, depth d); see scripts/bench/RESULTS.md for measured times.
 */
export function trainForest(set: TrainingSet, partial: Partial<ForestSettings> = {}): TrainedForest {
  const settings = resolveForestSettings(partial);
  if (set.presences < settings.minPresences)
    throw new ScoringInputError(
      `The forest needs at least ${settings.minPresences} presences (in-situ sites and cores with archaeological material); only ${set.presences} remain${exclusionSummary(set)}.`,
      "presences",
    );
  if (set.background < 1) throw new ScoringInputError("The forest needs background cells from searched ground; none has factor values.", "background");
  const p = set.factorIds.length;
  const n = set.labels.length;
  const rows: number[][] = new Array(n);
  for (let i = 0; i < n; i++) rows[i] = Array.from(set.values.subarray(i * p, i * p + p));
  const y = Array.from(set.labels);
  const featuresPerTree = Math.max(1, Math.floor(p * settings.featureShare));
  const t0 = performance.now();
  const model = new RandomForestClassifier({
    nEstimators: settings.trees,
    seed: settings.seed,
    // the library reads any number in (0, 1] as a share (so an integer 1 would mean every factor) and
    // takes floor(p · share): half a factor over the wanted count gives exactly featuresPerTree
    maxFeatures: featuresPerTree === p ? 1.0 : (featuresPerTree + 0.5) / p,
    replacement: false,
    useSampleBagging: true,
    noOOB: true,
    treeOptions: { maxDepth: settings.maxDepth, minNumSamples: settings.minNodeSamples },
  });
  model.train(rows, y);
  const trainingMs = performance.now() - t0;
  return { factorIds: [...set.factorIds], settings, model, compiled: compileForest(model.toJSON(), p), featuresPerTree, trainingMs };
}

interface NodeJson {
  left?: NodeJson;
  right?: NodeJson;
  splitColumn?: number;
  splitValue?: number;
  distribution?: number[][] | number;
}

/**
 * Common practice, no source (flattening decision trees into arrays).
 *
 * Compiles the library's model (its toJSON(), fresh or stored) into flat arrays. Each tree's split
 * columns are mapped through the tree's own factor subset; a leaf votes for the first largest entry
 * of its class distribution, as the library's `maxRowIndex` does.
 * Preconditions: a classifier model from ml-random-forest 2.1.0 trained on `factorCount` factors with
 * labels 0/1 — else {@link ScoringInputError}. O(nodes).
 */
export function compileForest(modelJson: ReturnType<RandomForestClassifier["toJSON"]>, factorCount: number): CompiledForest {
  // one JSON round trip turns the live model's Matrix distributions into the stored form
  const json = JSON.parse(JSON.stringify(modelJson)) as { name: string; baseModel: { indexes: number[][]; estimators: { root: NodeJson }[] } };
  if (json?.name !== "RFClassifier" || !Array.isArray(json.baseModel?.estimators))
    throw new ScoringInputError("The stored model is not a random-forest classifier.");
  const { estimators, indexes } = json.baseModel;
  const feature: number[] = [];
  const threshold: number[] = [];
  const left: number[] = [];
  const right: number[] = [];
  const vote: number[] = [];
  const roots = new Int32Array(estimators.length);
  for (let t = 0; t < estimators.length; t++) {
    const cols = indexes[t];
    const add = (node: NodeJson): number => {
      const id = feature.length;
      feature.push(-1);
      threshold.push(0);
      left.push(-1);
      right.push(-1);
      vote.push(0);
      if (node.left && node.right && node.distribution === undefined) {
        const col = cols[node.splitColumn!];
        if (!(Number.isInteger(col) && col >= 0 && col < factorCount)) throw new ScoringInputError(`Tree ${t + 1} splits on factor ${col}, outside the ${factorCount} factors.`);
        feature[id] = col;
        threshold[id] = node.splitValue!;
        const l = add(node.left);
        const r = add(node.right);
        left[id] = l;
        right[id] = r;
      } else {
        const d = node.distribution;
        const row = Array.isArray(d) ? (Array.isArray(d[0]) ? d[0] : (d as unknown as number[])) : null;
        if (!row || row.length === 0) throw new ScoringInputError(`Tree ${t + 1} has a leaf without a class distribution.`);
        let best = 0;
        for (let c = 1; c < row.length; c++) if (row[c] > row[best]) best = c;
        if (best > 1) throw new ScoringInputError(`Tree ${t + 1} votes for class ${best}; the forest knows only 0 and 1.`);
        vote[id] = best;
      }
      return id;
    };
    roots[t] = add(estimators[t].root);
  }
  return {
    factorCount,
    trees: estimators.length,
    roots,
    feature: Int32Array.from(feature),
    threshold: Float64Array.from(threshold),
    left: Int32Array.from(left),
    right: Int32Array.from(right),
    vote: Uint8Array.from(vote),
  };
}

// ---- prediction ---------------------------------------------------------------------------------

/**
 * Breiman (2001), Machine Learning 45(1) (the forest's vote).
 *
 * Probability of presence of row-major samples: the share of trees voting 1. A row with a NaN value
 * gets NaN. Preconditions: `values.length` a multiple of the forest's factor count. O(r·T·depth).
 */
export function predictSamples(forest: CompiledForest, values: Float64Array): Float64Array {
  const p = forest.factorCount;
  if (values.length % p !== 0) throw new ScoringInputError(`The sample values (${values.length}) are not a whole number of rows of ${p} factors.`);
  const n = values.length / p;
  const out = new Float64Array(n);
  const { roots, feature, threshold, left, right, vote, trees } = forest;
  for (let r = 0; r < n; r++) {
    const base = r * p;
    let nan = false;
    for (let f = 0; f < p; f++) if (values[base + f] !== values[base + f]) nan = true;
    if (nan) {
      out[r] = NaN;
      continue;
    }
    let votes = 0;
    for (let t = 0; t < trees; t++) {
      let node = roots[t];
      let f = feature[node];
      while (f >= 0) {
        node = values[base + f] < threshold[node] ? left[node] : right[node];
        f = feature[node];
      }
      votes += vote[node];
    }
    out[r] = votes / trees;
  }
  return out;
}

/**
 * Breiman (2001), Machine Learning 45(1) (the forest's vote).
 *
 * Probability of presence for cells start … end − 1 of a raster, written into `out` at the same
 * indices: the share of trees voting 1, NaN where any factor is NaN. `layers` are the factor layers
 * in the forest's factor order. No allocation. Preconditions: p layers of equal length ≥ end, `out`
 * as long. O((end − start)·T·depth).
 */
export function predictCells(forest: CompiledForest, layers: readonly Float32Array[], start: number, end: number, out: Float32Array): void {
  const p = forest.factorCount;
  const { roots, feature, threshold, left, right, vote, trees } = forest;
  for (let i = start; i < end; i++) {
    let nan = false;
    for (let f = 0; f < p; f++) {
      const v = layers[f][i];
      if (v !== v) {
        nan = true;
        break;
      }
    }
    if (nan) {
      out[i] = NaN;
      continue;
    }
    let votes = 0;
    for (let t = 0; t < trees; t++) {
      let node = roots[t];
      let f = feature[node];
      while (f >= 0) {
        node = layers[f][i] < threshold[node] ? left[node] : right[node];
        f = feature[node];
      }
      votes += vote[node];
    }
    out[i] = votes / trees;
  }
}

function checkLayers(forest: CompiledForest, layers: readonly Float32Array[]): number {
  if (layers.length !== forest.factorCount)
    throw new ScoringInputError(`The forest was trained on ${forest.factorCount} factors but ${layers.length} layers were given.`);
  const n = layers[0]?.length ?? 0;
  for (const l of layers) if (l.length !== n) throw new ScoringInputError("The factor layers cover different grids.");
  return n;
}

/**
 * Breiman (2001), Machine Learning 45(1) (the forest's vote).
 *
 * The probability raster in one thread, `chunkCells` cells at a time (progress and cancellation
 * between chunks, {@link PredictionCancelled} when stopped; memory is the output raster only).
 * Preconditions: as {@link predictCells}; layers that do not fit the forest → {@link ScoringInputError}.
 * O(n·T·depth).
 */
export function predictRaster(
  forest: CompiledForest,
  layers: readonly Float32Array[],
  options: { chunkCells?: number; onProgress?: (fraction: number) => void; shouldCancel?: () => boolean } = {},
): Float32Array {
  const n = checkLayers(forest, layers);
  const chunk = options.chunkCells ?? DEFAULT_FOREST_SETTINGS.chunkCells;
  const out = new Float32Array(n);
  for (let s = 0; s < n; s += chunk) {
    if (options.shouldCancel?.()) throw new PredictionCancelled();
    predictCells(forest, layers, s, Math.min(n, s + chunk), out);
    options.onProgress?.(Math.min(n, s + chunk) / n);
  }
  return out;
}

export { checkLayers as checkForestLayers };

// ---- storage ------------------------------------------------------------------------------------

/** Common practice, no source. The trained forest as JSON for the job's storage. O(nodes). */
export function serialiseForest(trained: TrainedForest): SerialisedForest {
  return {
    format: "lowstand-random-forest",
    version: 1,
    library: FOREST_LIBRARY,
    factorIds: [...trained.factorIds],
    settings: { ...trained.settings },
    model: JSON.parse(JSON.stringify(trained.model.toJSON())),
  };
}

/**
 * Common practice, no source. A stored forest back as the library's model and the compiled trees.
 * Preconditions: JSON from {@link serialiseForest} — else {@link ScoringInputError}. O(nodes).
 */
export function deserialiseForest(json: unknown): Omit<TrainedForest, "trainingMs" | "featuresPerTree"> {
  const j = json as Partial<SerialisedForest> | null;
  if (!j || j.format !== "lowstand-random-forest" || j.version !== 1 || !Array.isArray(j.factorIds) || !j.model)
    throw new ScoringInputError("This is not a stored Lowstand random forest (format lowstand-random-forest, version 1).");
  const model = RandomForestClassifier.load(j.model);
  return { factorIds: j.factorIds, settings: resolveForestSettings(j.settings), model, compiled: compileForest(j.model, j.factorIds.length) };
}

// ---- model card ---------------------------------------------------------------------------------

export interface ModelCard {
  method: string;
  library: typeof FOREST_LIBRARY;
  inputs: FactorId[];
  samples: {
    presences: number;
    sites: number;
    cores: number;
    background: number;
    backgroundWithoutValues: number;
    /** evidence left out, per reason */
    excluded: Partial<Record<ExclusionReason, number>>;
    capped: TrainingSet["capped"];
  };
  parameters: ForestSettings & { featuresPerTree: number };
  /** spatial-block cross-validation, when it was run */
  folds: CrossValidationResult["summary"] | null;
  trainingMs: number;
  notes: string[];
}

/**
 * Common practice, no source (a model card: what went in, how it was set, how it did).
 * O(e) for e excluded records.
 */
export function modelCard(trained: TrainedForest, set: TrainingSet, cv: CrossValidationResult | null): ModelCard {
  const excluded: Partial<Record<ExclusionReason, number>> = {};
  for (const x of set.excluded) excluded[x.reason] = (excluded[x.reason] ?? 0) + 1;
  return {
    method: "Random forest of CART trees (Breiman 2001), factors drawn per tree (Ho 1998); probability = share of trees voting presence.",
    library: FOREST_LIBRARY,
    inputs: [...trained.factorIds],
    samples: {
      presences: set.presences,
      sites: set.sites,
      cores: set.cores,
      background: set.background,
      backgroundWithoutValues: set.backgroundWithoutValues,
      excluded,
      capped: set.capped,
    },
    parameters: { ...trained.settings, featuresPerTree: trained.featuresPerTree },
    folds: cv ? cv.summary : null,
    trainingMs: Math.round(trained.trainingMs),
    notes: [
      "Presences: in-situ sites with an adequate position and cores with archaeological material. Derived, trawled and dredged finds never train the model.",
      "Background: cells drawn from searched ground (survey-line corridors, dredging areas, cored areas) that was land at each presence's age (target-group background, Phillips et al. 2009).",
      "Cores without archaeological material are not absences: a core samples far less than a square metre.",
      "The probability is relative to searched ground, not a chance that a site exists; a low value is not evidence of absence.",
    ],
  };
}
