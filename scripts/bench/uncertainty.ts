/**
 * Uncertainty benchmark (issue 12): 1000 weight draws over 1 M cells, target about 10 s. Started by
 * run.mjs with --uncertainty / --uncertainty-only, or by hand:
 *   node scripts/run-ts.mjs scripts/bench/uncertainty.ts [--size 1024] [--draws 1000] [--factors 6] [--threads 2] [--landscape 0]
 *
 * A deterministic synthetic grid (size², all land but a sea strip) with `factors` score layers and a
 * preservation layer. Measured: (a) the cells × draws accumulation in one thread and (b) in the worker
 * pool (jobs/uncertainty-pool.ts, thread start included); both on the same shared arrays, and the two
 * results are checked equal. (c) With --landscape L > 0, one landscape draw of the shoreline and stream
 * distances (app/scoring/monte-carlo.ts landscapeDraw) timed on its own, to say what L landscape
 * draws add. Prints readable lines, then one JSON line.
 */
import { cpus, loadavg } from "node:os";
import { Mulberry32 } from "../../app/scoring/random.ts";
import {
  convergenceCheckpoints,
  createAccumulators,
  createLandscapeOut,
  drawWeights,
  landscapeDraw,
  type DrawBlock,
} from "../../app/scoring/monte-carlo.ts";
import { inlineBlockRunner } from "../../app/scoring/uncertainty-run.ts";
import { createDrawPool } from "../../jobs/uncertainty-pool.ts";

const argv = process.argv.slice(2);
const opt = (k: string, d: string) => {
  const i = argv.indexOf(`--${k}`);
  return i >= 0 ? argv[i + 1] : d;
};
const size = Number(opt("size", "1024"));
const draws = Number(opt("draws", "1000"));
const k = Number(opt("factors", "6"));
const threads = Number(opt("threads", "2"));
const landscapeDraws = Number(opt("landscape", "0"));
const n = size * size;

const rng = new Mulberry32(1);
const shared = (len: number) => new Float32Array(new SharedArrayBuffer(len * 4));
const scores = Array.from({ length: k }, (_, f) => {
  const a = shared(n);
  for (let i = 0; i < n; i++) a[i] = 0.5 + 0.5 * Math.sin((i % size) / (17 + f) + Math.floor(i / size) / (23 + 3 * f)) * rng.next();
  return a;
});
const pres = shared(n);
for (let i = 0; i < n; i++) pres[i] = 0.6 + 0.4 * rng.next();
const land = new Uint8Array(new SharedArrayBuffer(n));
for (let i = 0; i < n; i++) land[i] = i % size < size / 10 ? 1 : 0;
const wd = drawWeights(Array.from({ length: k }, (_, f) => k - f), { kind: "dirichlet", concentration: 20 }, draws, new Mulberry32(2));
const W = new Float64Array(new SharedArrayBuffer(wd.weights.byteLength));
W.set(wd.weights);
const block: DrawBlock = { scores, preservation: pres, landClass: land, weights: W, from: 0, to: draws, threshold: 0.5, checkpoints: convergenceCheckpoints(draws) };

const load0 = loadavg()[0];
const cpu0 = process.cpuUsage();
let t0 = performance.now();
const accA = createAccumulators(n, true);
await inlineBlockRunner(block, accA);
const oneThread = performance.now() - t0;
const cpuOne = process.cpuUsage(cpu0);

t0 = performance.now();
const pool = await createDrawPool(threads);
const start = performance.now() - t0;
const accB = createAccumulators(n, true);
t0 = performance.now();
await pool.run(block, accB);
const poolRun = performance.now() - t0;
await pool.close();
let equal = true;
for (let i = 0; i < n; i++) if (accA.high[i] !== accB.high[i] || accA.mean[i] !== accB.mean[i] || accA.m2[i] !== accB.m2[i]) equal = false;

let landscapeMs: number | null = null;
if (landscapeDraws > 0) {
  const spill = new Float32Array(n);
  const area = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    spill[i] = (i % size) * 0.05 - 20 + rng.next();
    area[i] = rng.next() < 0.02 ? 5 : 0.01;
  }
  const lc = new Uint8Array(n);
  for (let i = 0; i < n; i++) lc[i] = spill[i] <= -10 ? 1 : 0;
  const base = { width: size, height: size, cellSizeX: 25, cellSizeY: 25, landClass: lc, spill, seaLevelM: -10, sigmaM: 3, tidalRangeM: 0, shorelineTidalLevel: 0, coverThickness: null, contributingArea: area, streamThresholdKm2: 1 };
  const out = createLandscapeOut(n, { shoreline: true, streams: true });
  t0 = performance.now();
  for (let d = 0; d < landscapeDraws; d++) landscapeDraw(base, { seaLevelZ: rng.next() * 2 - 1, datumOffsetM: 0, velocityRatio: 1, streamThresholdKm2: 1 + rng.next(), erosionDepthM: 10 }, 1, out, { shoreline: true, streams: true });
  landscapeMs = (performance.now() - t0) / landscapeDraws;
}

const r = (ms: number) => `${(ms / 1000).toFixed(2)} s`;
console.log(`uncertainty: ${draws} weight draws × ${size}² cells (${(n / 1e6).toFixed(2)} M), ${k} factors, preservation on; ${cpus().length} cores, load ${load0.toFixed(2)}`);
console.log(`  one thread:            ${r(oneThread)} (CPU ${r((cpuOne.user + cpuOne.system) / 1000)})`);
console.log(`  pool of ${threads} threads:     ${r(poolRun)} (+ ${r(start)} to start the threads); equal to one thread: ${equal}`);
if (landscapeMs !== null) console.log(`  one landscape draw (classes, shoreline + stream distances): ${(landscapeMs).toFixed(0)} ms`);
console.log(JSON.stringify({ size, cells: n, draws, factors: k, threads, oneThreadMs: oneThread, poolMs: poolRun, poolStartMs: start, equal, landscapeDrawMs: landscapeMs, load: load0 }));
