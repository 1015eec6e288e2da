import { describe, expect, it } from "vitest";
import { targetGroupBackground } from "./background.ts";
import { ScoringInputError } from "./errors.ts";
import {
  compileForest,
  deserialiseForest,
  modelCard,
  predictCells,
  predictRaster,
  predictSamples,
  PredictionCancelled,
  serialiseForest,
  trainForest,
  trainingSet,
  type Evidence,
} from "./forest.ts";
import { forestWorld } from "../../tests/support/forest-data.ts";

const world = forestWorld({ sites: 40, seed: 7 });
const cellCount = world.grid.width * world.grid.height;
const draws = targetGroupBackground({ effort: world.effort, landByAge: world.landByAge, presencesPerAge: world.sitesPerAge, count: 200, seed: 3 });
const set = trainingSet({ evidence: world.evidence, background: draws, stack: world.stack, cellCount, maxSamples: 2000, seed: 1 });
const trained = trainForest(set, { trees: 15, seed: 4 });

/** The rows of a training set as the library takes them. */
function rowsOf(values: Float64Array, p: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < values.length / p; i++) out.push(Array.from(values.subarray(i * p, i * p + p)));
  return out;
}

describe("the training set", () => {
  it("trains on in-situ sites and cores with archaeological material only", () => {
    expect(set.sites).toBe(40);
    expect(set.cores).toBe(1);
    expect(set.presences).toBe(41);
    const reasons = Object.fromEntries(set.excluded.map((x) => [x.id, x.reason]));
    expect(reasons).toEqual({
      D1: "derived find",
      T1: "trawled find",
      R1: "dredged find",
      "C-neg-1": "core without archaeological material (not an absence)",
      "C-neg-2": "core without archaeological material (not an absence)",
    });
    // derived, trawled and dredged finds never appear in the samples, under either label
    for (const id of ["D1", "T1", "R1", "C-neg-1", "C-neg-2"]) expect(set.ids).not.toContain(id);
  });

  it("never makes a core without archaeological material an absence (label 0) — only a background draw can", () => {
    const neg = world.evidence.find((e) => e.id === "C-neg-1")!;
    const withoutDraw = trainingSet({ evidence: world.evidence, background: [{ ageKa: 12, cells: [] }], stack: world.stack, cellCount, maxSamples: 2000, seed: 1 });
    expect(withoutDraw.background).toBe(0);
    expect(Array.from(withoutDraw.labels).every((l) => l === 1)).toBe(true);
    // the same cell drawn as a searched background cell is label 0 like any other searched cell
    const drawn = trainingSet({ evidence: world.evidence, background: [{ ageKa: neg.ageKa, cells: [neg.cell] }], stack: world.stack, cellCount, maxSamples: 2000, seed: 1 });
    expect(drawn.background).toBe(1);
    const j = drawn.labels.indexOf(0);
    expect(drawn.cells[j]).toBe(neg.cell);
    expect(drawn.ids[j]).toBe("");
  });

  it("leaves out imprecise positions, unknown contexts, ages without layers, nodata cells and cells off the grid", () => {
    const nodataCell = world.stack.ages[0].layers[1].findIndex((v) => Number.isNaN(v));
    const ev: Evidence[] = [
      { kind: "site", id: "a", context: "in_situ", positionAdequate: false, cell: 5, ageKa: 12 },
      { kind: "site", id: "b", context: "unknown", positionAdequate: true, cell: 5, ageKa: 12 },
      { kind: "site", id: "c", context: "in_situ", positionAdequate: true, cell: 5, ageKa: 11 },
      { kind: "site", id: "d", context: "in_situ", positionAdequate: true, cell: nodataCell, ageKa: 12 },
      { kind: "site", id: "e", context: "in_situ", positionAdequate: true, cell: -1, ageKa: 12 },
      { kind: "site", id: "f", context: "in_situ", positionAdequate: true, cell: 5, ageKa: 12 },
    ];
    const s = trainingSet({ evidence: ev, background: [{ ageKa: 12, cells: [nodataCell, 6] }], stack: world.stack, cellCount, maxSamples: 100, seed: 1 });
    expect(s.excluded.map((x) => x.reason)).toEqual(["position too imprecise", "context unknown", "no reconstructed age", "no factor value at its cell", "outside the grid"]);
    expect(s.presences).toBe(1);
    expect(s.background).toBe(1);
    expect(s.backgroundWithoutValues).toBe(1);
  });

  it("leaves out a presence on ground that was sea or lake at its age, as validation does", () => {
    const ev: Evidence[] = [
      { kind: "site", id: "wet", context: "in_situ", positionAdequate: true, cell: 5, ageKa: 12 },
      { kind: "site", id: "dry", context: "in_situ", positionAdequate: true, cell: 6, ageKa: 12 },
    ];
    const land = new Uint8Array(cellCount).fill(1);
    land[5] = 0;
    const s = trainingSet({ evidence: ev, background: [], stack: world.stack, cellCount, maxSamples: 100, seed: 1, land: new Map([[12, land]]) });
    expect(s.excluded).toEqual([{ id: "wet", kind: "site", reason: "not land at its age" }]);
    expect(s.presences).toBe(1);
  });

  it("reads each sample's factor values at its own age", () => {
    for (let i = 0; i < set.labels.length; i++) {
      const layers = world.stack.ages.find((a) => a.ageKa === set.ageKa[i])!.layers;
      for (let f = 0; f < layers.length; f++) expect(set.values[i * layers.length + f]).toBe(layers[f][set.cells[i]]);
    }
  });

  it("caps the samples with presences keeping at most half, as seeded random subsets", () => {
    const s = trainingSet({ evidence: world.evidence, background: draws, stack: world.stack, cellCount, maxSamples: 60, seed: 1 });
    expect(s.capped).toEqual({ presences: 41, background: 200 });
    expect(s.presences).toBe(30);
    expect(s.background).toBe(30);
    // the background kept is spread over the grid, not the first cells drawn
    const kept = Array.from(s.cells.subarray(30));
    expect(Math.max(...kept)).toBeGreaterThan(cellCount / 2);
  });
});

describe("training and the refusal", () => {
  it("refuses below the minimum number of presences and shows the number and what was left out", () => {
    // six in-situ sites, the derived, trawled and dredged finds, two negative cores and one positive core
    const few = trainingSet({ evidence: world.evidence.slice(0, 6).concat(world.evidence.slice(-6)), background: draws, stack: world.stack, cellCount, maxSamples: 2000, seed: 1 });
    expect(few.presences).toBe(7);
    let err: unknown;
    try {
      trainForest(few, { trees: 5 });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ScoringInputError);
    expect((err as Error).message).toBe(
      "The forest needs at least 10 presences (in-situ sites and cores with archaeological material); only 7 remain (left out: 1 derived find, 1 trawled find, 1 dredged find, 2 core without archaeological material (not an absence)).",
    );
  });

  it("gives each tree the share of factors asked for", () => {
    expect(trained.featuresPerTree).toBe(2); // floor(4 · 0.7)
    const json = trained.model.toJSON() as unknown as { baseModel: { indexes: number[][] } };
    for (const idx of json.baseModel.indexes) {
      expect(idx.length).toBe(2);
      expect(new Set(idx).size).toBe(2);
    }
    const one = trainForest(set, { trees: 3, featureShare: 0.25 });
    expect(one.featuresPerTree).toBe(1);
    for (const idx of (one.model.toJSON() as unknown as { baseModel: { indexes: number[][] } }).baseModel.indexes) expect(idx.length).toBe(1);
  });
});

describe("counting the votes", () => {
  const p = set.factorIds.length;
  const rows = rowsOf(set.values, p);

  it("equals the share of the library's trees voting 1, row by row", () => {
    const perTree = trained.model.predictionValues(rows); // rows × trees, each 0 or 1
    const ours = predictSamples(trained.compiled, set.values);
    for (let i = 0; i < rows.length; i++) {
      const votes = perTree.getRow(i);
      expect(votes.length).toBe(15);
      const share = votes.filter((v: number) => v === 1).length / votes.length;
      expect(ours[i]).toBe(share);
    }
  });

  it("differs from the library's predictProbability, which drops the first tree's vote (read in its source)", () => {
    const perTree = trained.model.predictionValues(rows);
    const lib = trained.model.predictProbability(rows, 1);
    const ours = predictSamples(trained.compiled, set.values);
    let differ = 0;
    for (let i = 0; i < rows.length; i++) {
      const v = perTree.getRow(i);
      // its reduce starts from the first tree's label (0 or 1) and counts 10⁶/T for each later vote
      let acc = v[0];
      for (let t = 1; t < v.length; t++) if (v[t] === 1) acc += 1e6 / v.length;
      expect(lib[i]).toBe(Math.round(acc) / 1e6);
      if (Math.abs(lib[i] - ours[i]) > 1e-9) differ++;
    }
    expect(differ).toBeGreaterThan(0);
  });

  it("predicts a raster in any chunk size the same, NaN where a factor has no value", () => {
    const layers = world.stack.ages[0].layers;
    const a = predictRaster(trained.compiled, layers, { chunkCells: 1000 });
    const b = predictRaster(trained.compiled, layers, { chunkCells: 4096 });
    expect(Array.from(a)).toEqual(Array.from(b));
    const nodata = layers[1].findIndex((v) => Number.isNaN(v));
    expect(Number.isNaN(a[nodata])).toBe(true);
    // the same as the samples' prediction at their cells (12 ka samples)
    const ours = predictSamples(trained.compiled, set.values);
    for (let i = 0; i < set.labels.length; i++) if (set.ageKa[i] === 12) expect(a[set.cells[i]]).toBeCloseTo(ours[i], 6);
    const part = new Float32Array(layers[0].length).fill(-1);
    predictCells(trained.compiled, layers, 10, 20, part);
    expect(part[9]).toBe(-1);
    expect(part[10]).toBe(a[10]);
    expect(part[20]).toBe(-1);
    expect(() => predictRaster(trained.compiled, layers, { shouldCancel: () => true })).toThrow(PredictionCancelled);
    expect(() => predictRaster(trained.compiled, layers.slice(1))).toThrow(/trained on 4 factors but 3 layers/);
  });

  it("learns the coast preference of the invented sites", () => {
    // the presences lie near the shoreline of their age: cells at the coast score above cells far inland
    const a = predictRaster(trained.compiled, world.stack.ages[0].layers);
    const w = world.grid.width;
    let near = 0;
    let far = 0;
    let nn = 0;
    let nf = 0;
    for (let i = 0; i < a.length; i++) {
      if (Number.isNaN(a[i])) continue;
      const c = i % w;
      if (c >= 64 && c < 68) (near += a[i]), nn++;
      if (c < 20) (far += a[i]), nf++;
    }
    expect(near / nn).toBeGreaterThan(far / nf + 0.2);
  });
});

describe("storage and the model card", () => {
  it("round-trips through JSON to the same predictions, in the library and compiled", () => {
    const stored = JSON.parse(JSON.stringify(serialiseForest(trained)));
    const back = deserialiseForest(stored);
    expect(back.factorIds).toEqual(set.factorIds);
    expect(Array.from(predictSamples(back.compiled, set.values))).toEqual(Array.from(predictSamples(trained.compiled, set.values)));
    const rows = rowsOf(set.values, set.factorIds.length);
    expect(back.model.predictionValues(rows).to2DArray()).toEqual(trained.model.predictionValues(rows).to2DArray());
    expect(compileForest(stored.model, 4).vote).toEqual(trained.compiled.vote);
    expect(() => deserialiseForest({ format: "other" })).toThrow(/not a stored Lowstand random forest/);
  });

  it("describes inputs, sample counts, parameters and training time", () => {
    const card = modelCard(trained, set, null);
    expect(card.inputs).toEqual(set.factorIds);
    expect(card.samples).toMatchObject({ presences: 41, sites: 40, cores: 1, background: set.background });
    expect(card.samples.excluded).toEqual({ "derived find": 1, "trawled find": 1, "dredged find": 1, "core without archaeological material (not an absence)": 2 });
    expect(card.parameters).toMatchObject({ trees: 15, seed: 4, maxSamples: 2000, featuresPerTree: 2 });
    expect(card.trainingMs).toBeGreaterThanOrEqual(0);
    expect(card.folds).toBeNull();
    expect(card.notes.join(" ")).toMatch(/not evidence of absence/);
  });

  it("refuses settings out of range by name", () => {
    expect(() => trainForest(set, { trees: 0 })).toThrow(/trees must be a whole number/);
    expect(() => trainForest(set, { featureShare: 1.5 })).toThrow(/featureShare/);
  });
});
