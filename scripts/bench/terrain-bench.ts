/**
 * One benchmark measurement in a fresh process (so its peak RSS is its own), printed as one JSON line.
 * Started by run.mjs; not meant to be run by hand, though it can be:
 *   node scripts/run-ts.mjs scripts/bench/terrain-bench.ts --mode steps|pipeline|write --size N [--ages 20,16,14,12,10] [--threads 2]
 *
 * steps:    every step of one age and the age-independent layers, in this thread, one after another:
 *           time and peak RSS per step (RSS sampled every 5 ms by a helper thread)
 *   pipeline: reconstruct() over all ages in worker threads, layers dropped as they arrive
 *   write:    the same, writing every layer as an uncompressed GeoTIFF (as the CLI does), GeoTIFF
 *           writing timed separately
 * Also writes the grid for GRASS with --dem-out FILE (mode dem).
 */
import { Worker } from "node:worker_threads";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { syntheticGrid } from "./synthetic-shelf.ts";
import { type Grid, type Layer } from "../../app/terrain/grid.ts";
import { defaultGlobalCurve, seaLevelAt, seaLevelLayerAt } from "../../app/terrain/sea-level.ts";
import { classifyAtAge, oceanBoundaryMask, outletMask, spillElevation, CLASS_INTERTIDAL } from "../../app/terrain/flooding.ts";
import { floodingHistory } from "../../app/terrain/flooding-age.ts";
import { fillDepressions } from "../../app/terrain/fill.ts";
import { flowDirectionD8 } from "../../app/terrain/flow-direction.ts";
import { resolveFlats } from "../../app/terrain/flats.ts";
import { flowAccumulation } from "../../app/terrain/flow-accumulation.ts";
import { confluences, strahlerOrder, streamMask } from "../../app/terrain/streams.ts";
import { lakeMargins, riverMouths, seaAtTidalLevel, shorelineMask, waterMask } from "../../app/terrain/shoreline.ts";
import { euclideanDistance } from "../../app/terrain/distance-transform.ts";
import { slopeAspect } from "../../app/terrain/slope-aspect.ts";
import { topographicPositionIndex } from "../../app/terrain/tpi.ts";
import { hillshade } from "../../app/terrain/hillshade.ts";
import { heightAboveSea } from "../../app/terrain/height-above-sea.ts";
import { type LayerOut, interiorOutletsAsNodata, reconstruct } from "../../app/terrain/reconstruct.ts";
import { workerAgeRunner } from "../../app/terrain/reconstruct-worker.ts";
import { writeGeoTiff } from "../../app/terrain/geotiff-write.ts";

const arg = (k: string, d?: string) => {
  const i = process.argv.indexOf(`--${k}`);
  return i >= 0 ? process.argv[i + 1] : d;
};
const mode = arg("mode", "steps")!;
const size = Number(arg("size", "1024"));
const ages = (arg("ages", "20,16,14,12,10") ?? "").split(",").map(Number);
const threads = Number(arg("threads", "2"));
const STREAM_KM2 = 1;
const TIDAL_M = 2;

// ---- RSS sampler on a helper thread (keeps sampling while this thread computes) ------------------
const rssBox = new Int32Array(new SharedArrayBuffer(8));
const sampler = new Worker(
  `const { workerData } = require("node:worker_threads");
   const a = new Int32Array(workerData);
   setInterval(() => {
     const mb = Math.ceil(process.memoryUsage.rss() / 1048576);
     if (mb > Atomics.load(a, 0)) Atomics.store(a, 0, mb);
     if (Atomics.load(a, 1) === 1) process.exit(0);
   }, 5);`,
  { eval: true, workerData: rssBox.buffer },
);
const rssNowMiB = () => Math.ceil(process.memoryUsage.rss() / 1048576);
function resetPeak() {
  Atomics.store(rssBox, 0, rssNowMiB());
}
function peakMiB() {
  return Math.max(Atomics.load(rssBox, 0), rssNowMiB());
}

const steps: { step: string; ms: number; peakRssMiB: number }[] = [];
function timed<T>(step: string, f: () => T): T {
  resetPeak();
  const t0 = performance.now();
  const r = f();
  steps.push({ step, ms: performance.now() - t0, peakRssMiB: peakMiB() });
  return r;
}

async function main() {
  const grid = timed("generate synthetic shelf", () => syntheticGrid(size));
  const { spec, nodata } = grid;
  const curve = defaultGlobalCurve();
  const model = { kind: "curve" as const, curve };

  if (mode === "dem") {
    writeFileSync(arg("dem-out")!, writeGeoTiff(grid as Grid<Layer>));
    return { size, file: arg("dem-out") };
  }

  if (mode === "steps") {
    const age = 12;
    const n = spec.width * spec.height;
    const boundary = oceanBoundaryMask(spec, nodata, { kind: "sides", sides: ["east"] });
    const spill = timed("spill elevation (connected flooding)", () => spillElevation(grid, boundary));
    const sl = seaLevelLayerAt(model, spec, age);
    const cls = timed("classes at the age", () => classifyAtAge(grid, spill, sl, TIDAL_M));
    const outlets = outletMask(cls.classes, boundary);
    // as the pipeline does: open water (outlets with no land neighbour) is left out of routing
    const route = timed("routing mask (open water left out)", () => interiorOutletsAsNodata(spec, outlets, nodata));
    const filled = timed("fill (Priority-Flood)", () => fillDepressions({ spec, data: grid.data, nodata: route }, outlets));
    const fg = { spec, data: filled.filledM, nodata: route };
    const dirs = timed("D8 + flats", () => resolveFlats(fg, flowDirectionD8(fg, filled.outlets)).directions);
    const acc = timed("accumulation", () => flowAccumulation(spec, dirs, route));
    const streams = timed("streams (threshold)", () => streamMask(spec, acc.upstreamCells, STREAM_KM2, waterMask(cls.classes)));
    timed("Strahler order", () => strahlerOrder(spec, dirs, streams, acc.order, acc.validCount));
    const sea = seaAtTidalLevel(spill.spillM, sl, TIDAL_M, 0);
    const shore = timed("shoreline", () => shorelineMask(grid, sea));
    const mouths = timed("mouths, confluences, lake margins", () => {
      riverMouths(grid, dirs, streams, sea);
      confluences(spec, dirs, streams);
      return lakeMargins(grid, cls.classes);
    });
    void mouths;
    timed("distance to stream (EDT)", () => euclideanDistance(streams, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY));
    timed("distance to shoreline (EDT)", () => euclideanDistance(shore, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY));
    const inter = new Uint8Array(n);
    for (let i = 0; i < n; i++) if (cls.classes[i] === CLASS_INTERTIDAL) inter[i] = 1;
    timed("distance to intertidal (EDT)", () => euclideanDistance(inter, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY));
    timed("height above sea", () => heightAboveSea(grid.data, sl, nodata));
    timed("slope and aspect (Horn)", () => slopeAspect(grid.data, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY, nodata));
    timed("TPI (r = 500 m)", () => topographicPositionIndex(grid.data, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY, 500, nodata));
    timed("hillshade", () => hillshade(grid.data, spec.width, spec.height, spec.cellSizeX, spec.cellSizeY, {}, nodata));
    timed("flooding history", () => floodingHistory(grid, spill.spillM, model, { tidalRange: TIDAL_M }));
    const chainSteps = [
      "spill elevation (connected flooding)", "classes at the age", "routing mask (open water left out)", "fill (Priority-Flood)", "D8 + flats", "accumulation",
      "streams (threshold)", "shoreline", "distance to stream (EDT)", "distance to shoreline (EDT)", "slope and aspect (Horn)",
    ];
    const chainMs = steps.filter((s) => chainSteps.includes(s.step)).reduce((a, s) => a + s.ms, 0);
    return { size, mode, ageKa: age, seaLevelM: seaLevelAt(curve, age), steps, chainMs, chainSteps };
  }

  // pipeline / write
  const dir = mode === "write" ? mkdtempSync(path.join(tmpdir(), "lowstand-bench-")) : null;
  let writeMs = 0;
  let layers = 0;
  let bytes = 0;
  const sink = (l: LayerOut) => {
    layers++;
    if (!dir) return;
    const w0 = performance.now();
    const mask = new Uint8Array(l.data.length);
    if (l.nodata === "NaN") {
      const d = l.data as Float32Array;
      for (let i = 0; i < d.length; i++) if (d[i] !== d[i]) mask[i] = 1;
    } else for (let i = 0; i < l.data.length; i++) if (l.data[i] === l.nodata) mask[i] = 1;
    const b = writeGeoTiff({ spec, data: l.data, nodata: mask }, { nodataValue: l.nodata === "NaN" ? undefined : l.nodata });
    writeFileSync(path.join(dir, `${l.name}_${l.ageKa ?? "static"}.tif`), b);
    bytes += b.length;
    writeMs += performance.now() - w0;
  };
  resetPeak();
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  const manifest = await reconstruct(
    { seabed: grid, seaLevel: model, agesKa: ages, oceanBoundary: { kind: "sides", sides: ["east"] }, tidalRangeM: TIDAL_M, streamThresholdKm2: STREAM_KM2, tpiRadiusM: 500 },
    { sink, runAges: workerAgeRunner({ threads }) },
  );
  const wallMs = performance.now() - t0;
  // CPU time of every thread of this process (main, workers, the RSS sampler) during the run: on an
  // otherwise idle machine with two cores the wall time cannot fall below half of it
  const cpu = process.cpuUsage(cpu0);
  const cpuMs = (cpu.user + cpu.system) / 1000;
  if (dir) rmSync(dir, { recursive: true, force: true });
  return {
    size, mode, ages, threads, wallMs, cpuMs, layers, geotiffWriteMs: writeMs, geotiffBytes: bytes,
    peakRssMiB: peakMiB(), maxRssMiB: Math.ceil(process.resourceUsage().maxRSS / 1024),
    perAgeMs: manifest.ages.map((a) => ({ ageKa: a.ageKa, ...a.timingsMs })), staticMs: manifest.staticTimingsMs,
  };
}

main().then(
  (r) => {
    Atomics.store(rssBox, 1, 1);
    console.log(JSON.stringify({ ...r, processMaxRssMiB: Math.ceil(process.resourceUsage().maxRSS / 1024) }));
    process.exit(0);
  },
  (e) => {
    console.error(e?.stack ?? e);
    process.exit(1);
  },
);
