#!/usr/bin/env node
// Terrain benchmark (`npm run bench`): per-step time and peak RSS of the reconstruction on a
// deterministic synthetic shelf (scripts/bench/synthetic-shelf.ts), the whole multi-age pipeline in
// worker threads, GeoTIFF writing timed separately, and — where GRASS GIS is installed — the comparable
// single-age GRASS chain on the same grid (r.watershed -s, stream threshold, shoreline, two
// r.grow.distance, r.slope.aspect; import and export not counted).
//
//   node scripts/bench/run.mjs [--size 1024,2048,4096] [--ages 5] [--threads 2] [--no-grass] [--no-write] [--json out.json] [--forest | --forest-only]
//                              [--no-scoring | --scoring-only] [--scoring-size 1024]
//                              [--live | --live-only]   (weighing sessions: NOTIFY and event-stream latency, scripts/bench/live.ts)
//                              [--uncertainty | --uncertainty-only]   (1000 weight draws over 1 M cells, one thread and the pool, scripts/bench/uncertainty.ts)
//
// First, unless --no-scoring or --forest-only: the live re-scoring benchmark (scripts/bench/scoring.ts)
// — lookup tables + scoreAge on a 1024² display grid with 8 factors as 8-bit codes, with and without
// preservation, and colouring the result, against the target of ≤ 50 ms (aim 16 ms) from input to
// new image. --scoring-only stops after it.
//
// Every measurement runs in a fresh Node process so its peak RSS is its own. Speed and memory are
// measured here, never by timed assertions in the tests.
import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync, existsSync } from "node:fs";
import { tmpdir, cpus, totalmem, loadavg } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, "../..");
const runTs = path.join(root, "scripts/run-ts.mjs");
const bench = path.join(here, "terrain-bench.ts");
const scoringBench = path.join(here, "scoring.ts");

const argv = process.argv.slice(2);
const opt = (k, d) => {
  const i = argv.indexOf(`--${k}`);
  return i >= 0 ? argv[i + 1] : d;
};
const flag = (k) => argv.includes(`--${k}`);
const sizes = flag("forest-only") || flag("live-only") || flag("uncertainty-only") ? [] : String(opt("size", "1024,2048,4096")).split(",").map(Number); // --forest-only: the forest benchmark alone
const AGE_LIST = [20, 16, 14, 12, 10, 8, 18, 6, 15, 11];
const agesOpt = String(opt("ages", "5"));
const ages = agesOpt.includes(",") ? agesOpt.split(",").map(Number) : AGE_LIST.slice(0, Math.max(1, Math.min(AGE_LIST.length, Number(agesOpt))));
const threads = Number(opt("threads", String(Math.min(2, cpus().length))));
const STREAM_CELLS = 1600; // 1 km² at 25 m cells
const SEA_LEVEL_12KA = -62.58; // (paper) Lambeck et al. 2014 esl at 12 ka, the age of the single-age chain

function child(args) {
  const r = spawnSync(process.execPath, ["--max-old-space-size=4096", runTs, bench, ...args], { encoding: "utf8", maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`benchmark child ${args.join(" ")} failed:\n${r.stderr}`);
  const line = r.stdout.trim().split("\n").pop();
  return JSON.parse(line);
}

const s = (ms) => (ms / 1000).toFixed(2).padStart(7);
const mib = (m) => String(m).padStart(6);

function grassChain(size) {
  let grass;
  try {
    grass = execFileSync("which", ["grass"], { encoding: "utf8" }).trim();
  } catch {
    return { skipped: "GRASS GIS not installed (apt-get install -y grass-core)" };
  }
  const dir = mkdtempSync(path.join(tmpdir(), "lowstand-grass-"));
  try {
    const tif = path.join(dir, "dem.tif");
    child(["--mode", "dem", "--size", String(size), "--dem-out", tif]);
    const script = path.join(dir, "chain.sh");
    writeFileSync(
      script,
      `set -e
r.in.gdal input=${tif} output=dem --quiet
g.region raster=dem
t() { local name="$1"; shift; local a=$(date +%s%N); "$@"; local b=$(date +%s%N); echo "T|$name|$a|$b"; }
t "r.watershed -s (accumulation, drainage)" r.watershed -s elevation=dem accumulation=acc drainage=dir --quiet
t "stream threshold (r.mapcalc)" r.mapcalc --quiet expression="streams = if(abs(acc) >= ${STREAM_CELLS}, 1, null())"
t "shoreline (r.mapcalc, bathtub sea)" sh -c 'r.mapcalc --quiet expression="sea = if(dem <= ${SEA_LEVEL_12KA}, 1, null())" && r.mapcalc --quiet expression="shore = if(isnull(sea) && (!isnull(sea[0,1]) || !isnull(sea[0,-1]) || !isnull(sea[1,0]) || !isnull(sea[-1,0])), 1, null())"'
t "r.grow.distance (to streams)" r.grow.distance input=streams distance=dstream metric=euclidean --quiet
t "r.grow.distance (to shoreline)" r.grow.distance input=shore distance=dshore metric=euclidean --quiet
t "r.slope.aspect" r.slope.aspect elevation=dem slope=slope aspect=aspect --quiet
`,
    );
    const r = spawnSync(grass, ["--tmp-location", tif, "--exec", "bash", script], { encoding: "utf8", maxBuffer: 1 << 24 });
    if (r.status !== 0) return { skipped: `GRASS run failed: ${(r.stderr || r.stdout).trim().split("\n").slice(-3).join(" / ")}` };
    const steps = [];
    for (const line of r.stdout.split("\n")) {
      const m = line.match(/^T\|(.+)\|(\d+)\|(\d+)$/);
      if (m) steps.push({ step: m[1], ms: Number(BigInt(m[3]) - BigInt(m[2])) / 1e6 });
    }
    return { grass, steps, chainMs: steps.reduce((a, x) => a + x.ms, 0) };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const results = { machine: { cpus: cpus().length, model: cpus()[0]?.model, totalMemGiB: +(totalmem() / 2 ** 30).toFixed(1), node: process.version }, ages, threads, sizes: [] };
if (!flag("no-scoring") && !flag("forest-only") && !flag("live-only") && !flag("uncertainty-only")) {
  const r = spawnSync(process.execPath, [runTs, scoringBench, "--size", String(opt("scoring-size", "1024"))], { encoding: "utf8", maxBuffer: 1 << 24 });
  if (r.status !== 0) throw new Error(`scoring benchmark failed:\n${r.stderr}`);
  const lines = r.stdout.trim().split("\n");
  results.scoring = JSON.parse(lines.pop());
  console.log(lines.join("\n") + "\n");
  if (flag("scoring-only")) {
    const jsonOut = opt("json");
    if (jsonOut) writeFileSync(jsonOut, JSON.stringify(results, null, 2));
    process.exit(0);
  }
}
console.log(`Lowstand terrain benchmark — ${results.machine.cpus} cores (${results.machine.model}), ${results.machine.totalMemGiB} GiB, Node ${process.version}`);
console.log(`synthetic shelf (seed 20260, 25 m cells), ages ${ages.join(", ")} ka, ${threads} worker threads`);
console.log(`started ${new Date().toISOString()}, load average ${loadavg().map((x) => x.toFixed(2)).join(" ")} (other work on the machine slows every figure)\n`);
for (const size of sizes) {
  console.log(`== ${size}×${size} (${((size * size) / 1e6).toFixed(1)} M cells)`);
  const st = child(["--mode", "steps", "--size", String(size)]);
  console.log(`  one age (${st.ageKa} ka), each step in turn in one thread:      time s   peak RSS MiB`);
  for (const x of st.steps) console.log(`    ${x.step.padEnd(50)} ${s(x.ms)}   ${mib(x.peakRssMiB)}`);
  console.log(`    ${"comparable chain (as GRASS below)".padEnd(50)} ${s(st.chainMs)}`);
  const pipe = child(["--mode", "pipeline", "--size", String(size), "--ages", ages.join(","), "--threads", String(threads)]);
  console.log(`  pipeline, ${ages.length} ages + age-independent layers, ${threads} threads: ${s(pipe.wallMs)} s wall (${(pipe.cpuMs / 1000).toFixed(1)} CPU-s in all threads), peak RSS ${pipe.peakRssMiB} MiB (process max ${pipe.processMaxRssMiB} MiB incl. generating the grid), ${pipe.layers} layers`);
  let wr = null;
  if (!flag("no-write")) {
    wr = child(["--mode", "write", "--size", String(size), "--ages", ages.join(","), "--threads", String(threads)]);
    console.log(`  same, writing every layer as GeoTIFF:             ${s(wr.wallMs)} s wall, of which GeoTIFF writing ${s(wr.geotiffWriteMs).trim()} s (${(wr.geotiffBytes / 2 ** 30).toFixed(2)} GiB), peak RSS ${wr.peakRssMiB} MiB`);
  }
  let g = null;
  if (!flag("no-grass")) {
    g = grassChain(size);
    if (g.skipped) console.log(`  GRASS: skipped — ${g.skipped}`);
    else {
      console.log(`  GRASS chain on the same grid (${g.grass}):`);
      for (const x of g.steps) console.log(`    ${x.step.padEnd(50)} ${s(x.ms)}`);
      console.log(`    ${"total".padEnd(50)} ${s(g.chainMs)}`);
      console.log(`  ours / GRASS for the single-age chain: ${(st.chainMs / g.chainMs).toFixed(3)}`);
    }
  }
  results.sizes.push({ size, steps: st, pipeline: pipe, write: wr, grass: g, loadAverageAfter: loadavg() });
  console.log(`  load average after: ${loadavg().map((x) => x.toFixed(2)).join(" ")}\n`);
}
// the forest benchmark (scripts/bench/forest.ts: training time against samples and trees, prediction in
// one thread against the pool), with --forest or --forest-only; it prints its own table
if (flag("forest") || flag("forest-only")) {
  const r = spawnSync(process.execPath, [runTs, path.join(here, "forest.ts"), "--threads", String(threads)], { stdio: "inherit" });
  if (r.status !== 0) process.exitCode = 1;
}
// the live-collaboration benchmark (scripts/bench/live.ts: NOTIFY round trip, and a saved proposal until
// every open event stream has it), with --live or --live-only; it prints its own table
if (flag("live") || flag("live-only")) {
  const r = spawnSync(process.execPath, [runTs, path.join(here, "live.ts")], { stdio: "inherit" });
  if (r.status !== 0) process.exitCode = 1;
}
// the uncertainty benchmark (scripts/bench/uncertainty.ts), with --uncertainty or --uncertainty-only
if (flag("uncertainty") || flag("uncertainty-only")) {
  const r = spawnSync(process.execPath, [runTs, path.join(here, "uncertainty.ts"), "--threads", String(threads), "--landscape", "3"], { stdio: "inherit" });
  if (r.status !== 0) process.exitCode = 1;
}
const jsonOut = opt("json");
if (jsonOut) writeFileSync(jsonOut, JSON.stringify(results, null, 2));
if (!existsSync(runTs)) process.exitCode = 1;
