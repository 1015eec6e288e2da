/**
 * Digests of every layer and the manifest (timings left out) of one reconstruction of the synthetic
 * shelf, one line per layer — to show that a speed change leaves every result bit-for-bit the same:
 * run it before and after, and diff the output.
 *   node scripts/run-ts.mjs scripts/bench/layer-digest.ts [--size 512] [--ages 20,16,14,12,10] [--threads 0] [--cell-y M] [--holes F]
 * --threads 0 (the default) runs the ages inline in this thread; N > 0 runs them on N worker threads.
 * --cell-y makes the cells non-square (25 m × M); --holes F makes a seeded fraction F of the cells nodata.
 */
import { createHash } from "node:crypto";
import { syntheticGrid } from "./synthetic-shelf.ts";
import { defaultGlobalCurve } from "../../app/terrain/sea-level.ts";
import { type LayerOut, reconstruct } from "../../app/terrain/reconstruct.ts";
import { workerAgeRunner } from "../../app/terrain/reconstruct-worker.ts";
import { prng } from "../../app/terrain/test-utils.ts";

const arg = (k: string, d: string) => {
  const i = process.argv.indexOf(`--${k}`);
  return i >= 0 ? process.argv[i + 1] : d;
};
const size = Number(arg("size", "512"));
const ages = arg("ages", "20,16,14,12,10").split(",").map(Number);
const threads = Number(arg("threads", "0"));

const grid = syntheticGrid(size);
const cellY = Number(arg("cell-y", "25"));
grid.spec = { ...grid.spec, cellSizeY: cellY };
const holes = Number(arg("holes", "0"));
if (holes > 0) {
  const rnd = prng(31);
  for (let i = 0; i < grid.data.length; i++) {
    if (rnd() < holes) {
      grid.nodata[i] = 1;
      grid.data[i] = NaN;
    }
  }
}
const lines: string[] = [];
const sink = (l: LayerOut) => {
  const h = createHash("sha256").update(new Uint8Array(l.data.buffer, l.data.byteOffset, l.data.byteLength)).digest("hex");
  lines.push(`${l.name} ${l.ageKa ?? "-"} ${h.slice(0, 16)} ${JSON.stringify(l.stats)}`);
};
const manifest = await reconstruct(
  {
    seabed: grid,
    seaLevel: { kind: "curve", curve: defaultGlobalCurve() },
    agesKa: ages,
    oceanBoundary: { kind: "sides", sides: ["east"] },
    tidalRangeM: 2,
    streamThresholdKm2: 1,
    tpiRadiusM: 500,
  },
  { sink, ...(threads > 0 ? { runAges: workerAgeRunner({ threads }) } : {}) },
);
lines.sort();
const m = { ...manifest, staticTimingsMs: undefined, ages: manifest.ages.map((a) => ({ ...a, timingsMs: undefined })) };
for (const l of lines) console.log(l);
console.log(`manifest ${createHash("sha256").update(JSON.stringify(m)).digest("hex").slice(0, 16)}`);
process.exit(0);
