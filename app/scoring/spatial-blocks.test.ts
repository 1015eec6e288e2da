import { describe, expect, it } from "vitest";
import { assignBlockFolds, blockOfCells } from "./spatial-blocks.ts";
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";

const grid = { width: 10, height: 10, cellSizeX: 100, cellSizeY: 100 };

describe("blocks", () => {
  it("numbers square blocks row by row from the top-left corner", () => {
    // 1 km grid, 500 m blocks: 2 × 2 blocks; cell (row 7, col 3) lies in block row 1, column 0
    const { block, blocksAcross, blocksDown } = blockOfCells(grid, 500, [0, 4, 5, 7 * 10 + 3, 99]);
    expect([blocksAcross, blocksDown]).toEqual([2, 2]);
    expect(Array.from(block)).toEqual([0, 0, 1, 2, 3]);
  });

  it("keeps a partial last block, and refuses blocks narrower than a cell or cells off the grid", () => {
    const { blocksAcross } = blockOfCells(grid, 300, [0]);
    expect(blocksAcross).toBe(4);
    expect(() => blockOfCells(grid, 50, [0])).toThrow(/at least one cell wide/);
    expect(() => blockOfCells(grid, 500, [100])).toThrow(/outside the grid/);
  });
});

describe("folds", () => {
  const big = { width: 200, height: 200, cellSizeX: 25, cellSizeY: 25 };
  const rng = new Mulberry32(11);
  const cells = Array.from({ length: 1500 }, () => rng.nextInt(big.width * big.height));
  const labels = cells.map((_, i) => (i % 10 === 0 ? 1 : 0));

  it("never puts one block in two folds", () => {
    const a = assignBlockFolds(big, { blockSizeM: 500, k: 5, seed: 1 }, cells, labels);
    const foldOfBlock = new Map<number, number>();
    const { block } = blockOfCells(big, 500, cells);
    for (let s = 0; s < cells.length; s++) {
      const seen = foldOfBlock.get(block[s]);
      if (seen === undefined) foldOfBlock.set(block[s], a.fold[s]);
      else expect(a.fold[s]).toBe(seen);
    }
    expect(new Set(a.fold).size).toBe(5);
  });

  it("balances presences across folds (greedy: no fold exceeds another by more than one block's presences)", () => {
    const a = assignBlockFolds(big, { blockSizeM: 500, k: 5, seed: 1 }, cells, labels);
    const { block } = blockOfCells(big, 500, cells);
    const perBlock = new Map<number, number>();
    for (let s = 0; s < cells.length; s++) if (labels[s] === 1) perBlock.set(block[s], (perBlock.get(block[s]) ?? 0) + 1);
    const largest = Math.max(...perBlock.values());
    expect(Math.max(...a.presences) - Math.min(...a.presences)).toBeLessThanOrEqual(largest);
    expect(a.presences.reduce((s, x) => s + x, 0)).toBe(150);
    expect(a.background.reduce((s, x) => s + x, 0)).toBe(1350);
    for (const p of a.presences) expect(p).toBeGreaterThan(0);
  });

  it("is the same for the same seed", () => {
    const a = assignBlockFolds(big, { blockSizeM: 500, k: 4, seed: 9 }, cells, labels);
    const b = assignBlockFolds(big, { blockSizeM: 500, k: 4, seed: 9 }, cells, labels);
    expect(Array.from(a.fold)).toEqual(Array.from(b.fold));
  });

  it("refuses fewer than two folds, and fewer blocks with presences than folds, naming the numbers", () => {
    expect(() => assignBlockFolds(grid, { blockSizeM: 500, k: 1, seed: 1 }, [0, 1], [1, 0])).toThrow(ScoringInputError);
    expect(() => assignBlockFolds(grid, { blockSizeM: 500, k: 2.5, seed: 1 }, [0, 1], [1, 0])).toThrow(/at least 2 folds/);
    // presences in blocks 0 and 1 only
    let err: unknown;
    try {
      assignBlockFolds(grid, { blockSizeM: 500, k: 3, seed: 1 }, [0, 1, 9, 99], [1, 1, 1, 0]);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ScoringInputError);
    expect((err as Error).message).toMatch(/needs at least 3 blocks holding presences; with 500 m blocks only 2 do/);
    expect(() => assignBlockFolds(grid, { blockSizeM: 500, k: 2, seed: 1 }, [0, 1], [1, 2])).toThrow(/labels are 1/);
  });
});
