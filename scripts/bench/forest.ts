/**
 * Forest benchmark (issue 10): training time of the random forest against the number of samples
 * (500, 1 000, 2 000, 4 000) and trees (25, 50, 100) with 9 factors, and the time to predict a
 * 1 M-cell probability raster in one thread against the worker-thread pool. 8 000 samples are left
 * out: known to take about 211 s for one training.
 *
 *   node scripts/run-ts.mjs scripts/bench/forest.ts [--samples 500,1000,2000,4000] [--trees 25,50,100] [--cells 1000000] [--threads 2] [--json out.json]
 *
 * Data: tests/support/forest-data.ts (invented, seeded), 400 × 400 cells for training, presences
 * filling half of each sample (the most the cap lets them take, and the slowest case for CART, whose
 * candidate splits sit where the label changes along a sorted factor); the
 * prediction raster is 1000 × 1000 cells of nine synthetic factor layers. Speed is measured here,
 * never in the tests.
 */
import { writeFileSync } from "node:fs";
import { cpus, loadavg, totalmem } from "node:os";
import { targetGroupBackground } from "../../app/scoring/background.ts";
import { predictRaster, trainForest, trainingSet } from "../../app/scoring/forest.ts";
import { Mulberry32 } from "../../app/scoring/random.ts";
import { predictRasterInPool } from "../../jobs/forest-predict-pool.ts";
import { forestWorld } from "../../tests/support/forest-data.ts";

const argv = process.argv.slice(2);
const opt = (k: string, d: string) => {
  const i = argv.indexOf(`--${k}`);
  return i >= 0 ? argv[i + 1] : d;
};
const samplesList = opt("samples", "500,1000,2000,4000").split(",").map(Number);
const treesList = opt("trees", "25,50,100").split(",").map(Number);
const cells = Number(opt("cells", "1000000"));
const threads = Number(opt("threads", "2"));

const machine = { cpus: cpus().length, model: cpus()[0]?.model, totalMemGiB: +(totalmem() / 2 ** 30).toFixed(1), node: process.version };
console.log(`Lowstand forest benchmark — ${machine.cpus} cores (${machine.model}), ${machine.totalMemGiB} GiB, Node ${process.version}`);
console.log(`started ${new Date().toISOString()}, load average ${loadavg().map((x) => x.toFixed(2)).join(" ")}\n`);

const world = forestWorld({ width: 400, height: 400, cellSizeM: 50, factors: 9, sites: 2000, seed: 20260 });
const cellCount = world.grid.width * world.grid.height;
const maxN = Math.max(...samplesList);
const draws = targetGroupBackground({ effort: world.effort, landByAge: world.landByAge, presencesPerAge: world.sitesPerAge, count: Math.max(maxN, 2000), seed: 3 }); // 2 000 at least: the prediction model

const training: { samples: number; presences: number; background: number; trees: number; ms: number; cpuMs: number }[] = [];
let model: ReturnType<typeof trainForest> | null = null;
console.log("training (9 factors, 70 % of them per tree, ml-random-forest 2.1.0):");
console.log("  samples  presences  background  trees   time s    CPU s  (CPU time is the figure other load barely moves)");
for (const n of samplesList) {
  const set = trainingSet({ evidence: world.evidence, background: draws, stack: world.stack, cellCount, maxSamples: n, seed: 1 });
  for (const trees of treesList) {
    const c0 = process.cpuUsage();
    const t = trainForest(set, { trees, seed: 5, maxSamples: Math.max(20, n) });
    const c = process.cpuUsage(c0);
    const cpuMs = (c.user + c.system) / 1000;
    if (n === 2000 && trees === 50) model = t;
    training.push({ samples: set.labels.length, presences: set.presences, background: set.background, trees, ms: t.trainingMs, cpuMs });
    console.log(`  ${String(set.labels.length).padStart(7)}  ${String(set.presences).padStart(9)}  ${String(set.background).padStart(10)}  ${String(trees).padStart(5)}  ${(t.trainingMs / 1000).toFixed(2).padStart(7)}  ${(cpuMs / 1000).toFixed(2).padStart(7)}`);
  }
}

// prediction: the default model (2 000 samples, 50 trees) over a 1 M-cell raster of nine layers
model ??= trainForest(trainingSet({ evidence: world.evidence, background: draws, stack: world.stack, cellCount, maxSamples: 2000, seed: 1 }), { trees: 50, seed: 5 });
const rng = new Mulberry32(99);
const src = world.stack.ages[0].layers;
const layers = src.map(() => new Float32Array(cells));
for (let i = 0; i < cells; i++) {
  const j = rng.nextInt(cellCount);
  for (let f = 0; f < layers.length; f++) layers[f][i] = src[f][j];
}
let t0 = performance.now();
const single = predictRaster(model.compiled, layers);
const singleMs = performance.now() - t0;
t0 = performance.now();
const pooled = await predictRasterInPool(model.compiled, layers, { threads });
const poolMs = performance.now() - t0;
let same = single.length === pooled.length;
for (let i = 0; same && i < single.length; i++) if (!Object.is(single[i], pooled[i])) same = false;
const nodes = model.compiled.feature.length;
console.log(`\nprediction of ${(cells / 1e6).toFixed(1)} M cells, model of 2 000 samples and 50 trees (${nodes} nodes):`);
console.log(`  one thread                    ${(singleMs / 1000).toFixed(2).padStart(7)} s`);
console.log(`  pool of ${threads} threads (incl. start) ${(poolMs / 1000).toFixed(2).padStart(7)} s   identical to one thread: ${same}`);
console.log(`\nload average after: ${loadavg().map((x) => x.toFixed(2)).join(" ")}`);

const json = opt("json", "");
if (json) writeFileSync(json, JSON.stringify({ machine, training, prediction: { cells, threads, singleMs, poolMs, identical: same, nodes } }, null, 2));
