import { describe, expect, it } from "vitest";
import { targetGroupBackground } from "../app/scoring/background.ts";
import { ScoringInputError } from "../app/scoring/errors.ts";
import { predictRaster, trainForest, trainingSet } from "../app/scoring/forest.ts";
import { forestWorld } from "../tests/support/forest-data.ts";
import { PredictionCancelled, predictRasterInPool } from "./forest-predict-pool.ts";

const world = forestWorld({ sites: 30, seed: 9 });
const cellCount = world.grid.width * world.grid.height;
const draws = targetGroupBackground({ effort: world.effort, landByAge: world.landByAge, presencesPerAge: world.sitesPerAge, count: 150, seed: 3 });
const set = trainingSet({ evidence: world.evidence, background: draws, stack: world.stack, cellCount, maxSamples: 2000, seed: 1 });
const trained = trainForest(set, { trees: 9, seed: 2 });

describe("forest prediction in worker threads", () => {
  it("equals the single-thread raster cell for cell, NaN included", async () => {
    const layers = world.stack.ages[1].layers;
    const single = predictRaster(trained.compiled, layers);
    const fractions: number[] = [];
    const pooled = await predictRasterInPool(trained.compiled, layers, { threads: 2, chunkCells: 1000, onProgress: (f) => fractions.push(f) });
    expect(pooled.buffer).toBeInstanceOf(ArrayBuffer);
    expect(pooled.length).toBe(single.length);
    expect(Array.from(pooled)).toEqual(Array.from(single)); // toEqual treats NaN as equal to NaN
    expect(pooled.some((v) => Number.isNaN(v))).toBe(true);
    expect(fractions.length).toBe(Math.ceil(cellCount / 1000));
    expect(fractions[fractions.length - 1]).toBe(1);
  });

  it("stops when cancelled, and refuses layers that do not fit the forest", async () => {
    await expect(predictRasterInPool(trained.compiled, world.stack.ages[0].layers, { threads: 2, chunkCells: 1000, shouldCancel: () => true })).rejects.toBeInstanceOf(PredictionCancelled);
    expect(() => predictRasterInPool(trained.compiled, world.stack.ages[0].layers.slice(1))).toThrow(ScoringInputError);
  });
});
