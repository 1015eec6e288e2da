import { describe, expect, it } from "vitest";
import { targetGroupBackground } from "./background.ts";
import { fixedClassification, classCounts } from "./classification.ts";
import { crossValidate, spread } from "./cross-validate.ts";
import { ScoringInputError } from "./errors.ts";
import { modelCard, predictSamples, subsetTrainingSet, trainForest, trainingSet } from "./forest.ts";
import { blockOfCells } from "./spatial-blocks.ts";
import { gainByClass, rocAuc } from "./validation.ts";
import { forestWorld } from "../../tests/support/forest-data.ts";

const world = forestWorld({ sites: 40, seed: 7 });
const cellCount = world.grid.width * world.grid.height;
const draws = targetGroupBackground({ effort: world.effort, landByAge: world.landByAge, presencesPerAge: world.sitesPerAge, count: 200, seed: 3 });
const set = trainingSet({ evidence: world.evidence, background: draws, stack: world.stack, cellCount, maxSamples: 2000, seed: 1 });
const classification = fixedClassification([0.6, 0.3]);
const options = { grid: world.grid, blockSizeM: 500, k: 4, seed: 2, classification, forest: { trees: 11, seed: 5 } };
const cv = crossValidate(set, options);

describe("spatial-block cross-validation", () => {
  it("never lets a block's samples appear in two folds", () => {
    const { block } = blockOfCells(world.grid, 500, set.cells);
    const foldOf = new Map<number, number>();
    for (let i = 0; i < set.labels.length; i++) {
      const f = foldOf.get(block[i]);
      if (f === undefined) foldOf.set(block[i], cv.fold[i]);
      else expect(cv.fold[i]).toBe(f);
    }
    expect(new Set(cv.fold).size).toBe(4);
  });

  it("predicts each sample with the model trained on the other folds only", () => {
    const p = set.factorIds.length;
    for (let f = 0; f < 4; f++) {
      const train: number[] = [];
      const test: number[] = [];
      for (let i = 0; i < set.labels.length; i++) (cv.fold[i] === f ? test : train).push(i);
      const forest = trainForest(subsetTrainingSet(set, train), { trees: 11, seed: 5, minPresences: 2 });
      const values = new Float64Array(test.length * p);
      test.forEach((r, j) => values.set(set.values.subarray(r * p, r * p + p), j * p));
      const prob = predictSamples(forest.compiled, values);
      test.forEach((r, j) => expect(cv.outOfFold[r]).toBe(prob[j]));
      // and that model saw no sample of the held-out blocks
      expect(cv.summary.folds[f].trainPresences + cv.summary.folds[f].testPresences).toBe(set.presences);
    }
  });

  it("scores each fold with rocAuc and Kvamme's gain on the project classes, then takes mean and spread", () => {
    for (const fm of cv.summary.folds) {
      const pres: number[] = [];
      const back: number[] = [];
      for (let i = 0; i < set.labels.length; i++) if (cv.fold[i] === fm.fold) (set.labels[i] ? pres : back).push(cv.outOfFold[i]);
      // (formula) AUC = P(site > background) + ½ P(tie), as validation.ts
      expect(fm.auc).toBe(rocAuc(pres, back));
      const g = gainByClass(classCounts(classification, back).counts, classCounts(classification, pres).counts);
      expect(fm.gain).toEqual(Array.from(g.gain));
      expect(fm.presencesPerClass.reduce((s, x) => s + x, 0)).toBe(fm.testPresences);
    }
    expect(cv.summary.auc).toEqual(spread(cv.summary.folds.map((f) => f.auc)));
    expect(cv.summary.gain.length).toBe(3);
    expect(cv.summary.classLabels).toEqual(["high", "medium", "low"]);
    expect(cv.summary.areaShareFrom).toBe("held-out background cells");
    // the invented sites follow the coast, so held-out blocks are predicted better than chance
    expect(cv.summary.pooledAuc).toBeGreaterThan(0.7);
  });

  it("goes into the model card", () => {
    const card = modelCard(trainForest(set, { trees: 11, seed: 5 }), set, cv);
    expect(card.folds?.k).toBe(4);
    expect(card.folds?.folds.length).toBe(4);
  });

  it("refuses too few presences, with the number, and a fold without background", () => {
    const few = subsetTrainingSet(set, Array.from({ length: set.labels.length }, (_, i) => i).filter((i) => set.labels[i] === 0 || i < 8));
    expect(() => crossValidate(few, options)).toThrow(/at least 10 presences .*only 8 remain/);
    // background only in the first rows of the grid: some fold gets none
    const northOnly = subsetTrainingSet(set, Array.from({ length: set.labels.length }, (_, i) => i).filter((i) => set.labels[i] === 1 || set.cells[i] < world.grid.width * 8));
    let err: unknown;
    try {
      crossValidate(northOnly, { ...options, k: 5, blockSizeM: 1000 });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ScoringInputError);
    expect((err as Error).message).toMatch(/holds no background cells/);
  });
});

describe("spread", () => {
  it("gives mean, sample SD and range of the finite values", () => {
    // (formula) values 1, 2, 3 → mean 2, SD 1
    expect(spread([1, 2, 3, -Infinity, NaN])).toEqual({ mean: 2, sd: 1, min: 1, max: 3, finiteFolds: 3 });
    expect(spread([NaN]).finiteFolds).toBe(0);
  });
});
