/**
 * Spatial blocks for cross-validation (issue 10): square blocks of a set size in metres laid over
 * the grid from its top-left corner, and an assignment of whole blocks to k folds, so that a
 * held-out fold is spatially apart from the data a model was trained on. After Roberts, D.R. et al.
 * (2017) "Cross-validation strategies for data with temporal, spatial, hierarchical, or phylogenetic
 * structure", Ecography 40(8), 913–929 (block cross-validation); the greedy balancing of folds by
 * presence count is common practice, no source.
 */
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";

export interface BlockGridShape {
  width: number;
  height: number;
  /** metres per column and per row */
  cellSizeX: number;
  cellSizeY: number;
}

/**
 * Roberts et al. (2017), Ecography 40(8) (block cross-validation).
 *
 * The block of each sample cell: blocks are `blockSizeM` squares from the grid's top-left corner,
 * numbered row by row (block = blockRow · blocksAcross + blockCol).
 * Preconditions: grid sizes positive; block size finite and at least one cell wide in both
 * directions; every cell index an integer inside the grid — else {@link ScoringInputError}.
 * O(s) for s samples.
 */
export function blockOfCells(grid: BlockGridShape, blockSizeM: number, cells: ArrayLike<number>): { block: Int32Array; blocksAcross: number; blocksDown: number } {
  const { width, height, cellSizeX, cellSizeY } = grid;
  if (!(width >= 1 && height >= 1 && cellSizeX > 0 && cellSizeY > 0)) throw new ScoringInputError("The grid for spatial blocks must have a positive size and cell size.");
  if (!Number.isFinite(blockSizeM) || !(blockSizeM >= cellSizeX && blockSizeM >= cellSizeY))
    throw new ScoringInputError(`A block must be at least one cell wide (${Math.max(cellSizeX, cellSizeY)} m); got ${blockSizeM} m.`, "blockSizeM");
  const blocksAcross = Math.ceil((width * cellSizeX) / blockSizeM);
  const blocksDown = Math.ceil((height * cellSizeY) / blockSizeM);
  const block = new Int32Array(cells.length);
  const n = width * height;
  for (let s = 0; s < cells.length; s++) {
    const i = cells[s];
    if (!Number.isInteger(i) || i < 0 || i >= n) throw new ScoringInputError(`Sample ${s + 1} lies outside the grid (cell ${i}).`);
    const row = Math.floor(i / width);
    const col = i - row * width;
    // the cell's centre decides its block
    const br = Math.min(blocksDown - 1, Math.floor(((row + 0.5) * cellSizeY) / blockSizeM));
    const bc = Math.min(blocksAcross - 1, Math.floor(((col + 0.5) * cellSizeX) / blockSizeM));
    block[s] = br * blocksAcross + bc;
  }
  return { block, blocksAcross, blocksDown };
}

export interface FoldAssignment {
  /** fold of each sample, 0 … k − 1 */
  fold: Int32Array;
  /** block of each sample (as {@link blockOfCells}) */
  block: Int32Array;
  /** fold of each occupied block */
  blockFold: Map<number, number>;
  k: number;
  blockSizeM: number;
  /** presences and background per fold */
  presences: number[];
  background: number[];
  /** blocks holding at least one presence */
  blocksWithPresences: number;
  blocks: number;
}

/**
 * Roberts et al. (2017), Ecography 40(8) (block cross-validation); the balancing is common practice,
 * no source.
 *
 * Assigns whole blocks to k folds: blocks holding presences are taken in order of presence count
 * (largest first, equal counts in a seeded random order) and each goes to the fold with the fewest
 * presences so far (ties: fewer samples, then the lower fold number); blocks with background only
 * follow, largest first, each to the fold with the least background. No block is ever in two folds,
 * so no sample shares a block with a sample of another fold. Every fold receives at least one
 * presence block (the first k go one to each fold).
 * Preconditions: labels 1 (presence) or 0 (background), one per cell; k an integer ≥ 2; at least k
 * blocks hold presences — else {@link ScoringInputError} naming the numbers. Deterministic for a
 * seed. Complexity O(s + b log b + b·k) for s samples and b occupied blocks.
 */
export function assignBlockFolds(
  grid: BlockGridShape,
  options: { blockSizeM: number; k: number; seed: number },
  cells: ArrayLike<number>,
  labels: ArrayLike<number>,
): FoldAssignment {
  const { blockSizeM, k, seed } = options;
  if (!Number.isInteger(k) || k < 2) throw new ScoringInputError(`Cross-validation needs at least 2 folds (got ${k}).`, "folds");
  if (labels.length !== cells.length) throw new ScoringInputError(`Every sample needs a label (${cells.length} samples, ${labels.length} labels).`);
  const { block, blocksAcross, blocksDown } = blockOfCells(grid, blockSizeM, cells);
  const pres = new Map<number, number>();
  const back = new Map<number, number>();
  for (let s = 0; s < cells.length; s++) {
    const l = labels[s];
    if (l !== 0 && l !== 1) throw new ScoringInputError(`Sample ${s + 1} has label ${l}; labels are 1 (presence) or 0 (background).`);
    const m = l === 1 ? pres : back;
    m.set(block[s], (m.get(block[s]) ?? 0) + 1);
  }
  const presenceBlocks = [...pres.keys()];
  if (presenceBlocks.length < k)
    throw new ScoringInputError(
      `Spatial cross-validation with ${k} folds needs at least ${k} blocks holding presences; with ${blockSizeM} m blocks only ${presenceBlocks.length} do. Use smaller blocks or fewer folds.`,
      "folds",
    );
  const rng = new Mulberry32(seed);
  // a seeded random key per block breaks ties without favouring the grid's corner
  const tie = new Map<number, number>();
  const allBlocks = new Set<number>([...pres.keys(), ...back.keys()]);
  for (const b of [...allBlocks].sort((a, b2) => a - b2)) tie.set(b, rng.next());
  presenceBlocks.sort((a, b) => pres.get(b)! - pres.get(a)! || tie.get(a)! - tie.get(b)!);
  const foldP = new Array<number>(k).fill(0);
  const foldB = new Array<number>(k).fill(0);
  const blockFold = new Map<number, number>();
  for (const b of presenceBlocks) {
    let best = 0;
    for (let f = 1; f < k; f++) {
      if (foldP[f] < foldP[best] || (foldP[f] === foldP[best] && foldP[f] + foldB[f] < foldP[best] + foldB[best])) best = f;
    }
    blockFold.set(b, best);
    foldP[best] += pres.get(b)!;
    foldB[best] += back.get(b) ?? 0;
  }
  const backgroundOnly = [...back.keys()].filter((b) => !pres.has(b));
  backgroundOnly.sort((a, b) => back.get(b)! - back.get(a)! || tie.get(a)! - tie.get(b)!);
  for (const b of backgroundOnly) {
    let best = 0;
    for (let f = 1; f < k; f++) if (foldB[f] < foldB[best]) best = f;
    blockFold.set(b, best);
    foldB[best] += back.get(b)!;
  }
  const fold = new Int32Array(cells.length);
  for (let s = 0; s < cells.length; s++) fold[s] = blockFold.get(block[s])!;
  return {
    fold,
    block,
    blockFold,
    k,
    blockSizeM,
    presences: foldP,
    background: foldB,
    blocksWithPresences: presenceBlocks.length,
    blocks: blocksAcross * blocksDown,
  };
}
