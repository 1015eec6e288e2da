/**
 * Reconstruct the drowned landscape from the command line (batch runs, and checking the engine from
 * outside the app):
 *
 *   node scripts/run-ts.mjs scripts/reconstruct-cli.ts --dem in.tif --ages 20,15,10 --out dir/ [options]
 *
 * Writes one GeoTIFF per layer (per age where it applies: `<layer>_<age>ka.tif`), manifest.json and
 * run.log into --out. Each file is written under a temporary name and renamed when complete, and the
 * manifest last, so a failed or killed run leaves no half-written layer under a final name. Bad input
 * gives a one-line "error: …" on stderr and exit code 2; an engine fault exit code 1.
 */
import { mkdirSync, readFileSync, renameSync, writeFileSync, appendFileSync, existsSync } from "node:fs";
import path from "node:path";
import { TerrainInputError, TerrainCancelled, sameSpec, type Grid, type Layer } from "../app/terrain/grid.ts";
import { readGeoTiff } from "../app/terrain/geotiff-read.ts";
import { writeGeoTiff } from "../app/terrain/geotiff-write.ts";
import { nodeDeflate } from "../app/terrain/geotiff-deflate-node.ts";
import { toElevationMsl } from "../app/terrain/vertical-datum.ts";
import { defaultGlobalCurve, parseSeaLevelCsv, type SeaLevelModel } from "../app/terrain/sea-level.ts";
import { gridHorizon, horizonFromGrid, parsePicksCsv, type HorizonResult } from "../app/terrain/horizon.ts";
import { type SurveyLine, parseSurveyLinesCsv, parseSurveyLinesGeoJson, rasteriseLines } from "../app/terrain/survey-lines.ts";
import { type LayerOut, type ReconstructInput, reconstruct, inlineAgeRunner } from "../app/terrain/reconstruct.ts";
import { workerAgeRunner } from "../app/terrain/reconstruct-worker.ts";
import type { Side } from "../app/terrain/flooding.ts";

const USAGE = `usage: node scripts/run-ts.mjs scripts/reconstruct-cli.ts --dem in.tif --ages 20,18,16 --out DIR [options]
  --dem FILE               bathymetry / elevation GeoTIFF (one band, projected CRS in metres)
  --epsg N                 declare the CRS when the file has none
  --depth-positive-down    the grid holds depths (positive down), not elevations
  --datum-offset M         height of the grid's vertical datum above present mean sea level (default 0)
  --picks FILE             sub-bottom picks CSV (line,x,y and depth_m or twt_ms[,velocity_mps])
  --horizon FILE           or a gridded horizon GeoTIFF on the same grid, same vertical convention as --dem
  --horizon-name NAME      name of the horizon (default "buried horizon")
  --velocity M_S           velocity for TWT picks without their own (default 1600)
  --unassessed-m M         cells farther than this from a line with picks are unassessed (default 250)
  --vertical-resolution-m M  vertical resolution of the sub-bottom system (default 0.3)
  --curve-csv FILE         relative sea-level curve (age_ka, rsl_m[, sigma_m]); default: global curve, Lambeck et al. 2014
  --tidal-range M          palaeo-tidal range (default 0)
  --ocean-side SIDES       side(s) where the open ocean is: east, west, north, south, comma-separated (default east)
  --ages LIST              ages in ka BP, comma-separated
  --stream-km2 A           stream threshold area, km² (default 1)
  --lines FILE             survey line navigation: CSV (line,fix,x,y) or GeoJSON LineStrings, in the grid's CRS
  --channels FILE          mapped palaeochannels, GeoJSON LineStrings in the grid's CRS
  --burn-m M               burn the channels in by M metres before filling (default 0: no burning)
  --tpi-radius-m M         TPI radius (default 500)
  --threads N              worker threads for the ages (default: all cores; 0 = in this thread)
  --compress               Deflate-compress the GeoTIFFs (smaller, slower)`;

type Args = Record<string, string | true>;

function parseArgs(argv: string[]): Args {
  const a: Args = {};
  for (let k = 0; k < argv.length; k++) {
    const t = argv[k];
    if (!t.startsWith("--")) throw new TerrainInputError(`unexpected argument "${t}" (options start with --)`);
    const key = t.slice(2);
    const v = argv[k + 1];
    if (v === undefined || v.startsWith("--")) a[key] = true;
    else {
      a[key] = v;
      k++;
    }
  }
  return a;
}

const FLAGS = new Set(["depth-positive-down", "compress", "help"]);
const KNOWN = new Set([
  "dem", "epsg", "depth-positive-down", "datum-offset", "picks", "horizon", "horizon-name", "velocity", "unassessed-m",
  "vertical-resolution-m", "curve-csv", "tidal-range", "ocean-side", "ages", "stream-km2", "channels", "burn-m",
  "tpi-radius-m", "threads", "compress", "out", "help", "lines",
]);

function str(a: Args, key: string): string | undefined {
  const v = a[key];
  if (v === true) throw new TerrainInputError(`--${key} needs a value`);
  return v;
}

function num(a: Args, key: string, dflt?: number): number | undefined {
  const v = str(a, key);
  if (v === undefined) return dflt;
  const x = Number(v);
  if (v.trim() === "" || !Number.isFinite(x)) throw new TerrainInputError(`--${key} must be a number, got "${v}"`);
  return x;
}

function readFile(file: string, what: string): Buffer {
  if (!existsSync(file)) throw new TerrainInputError(`${what} file not found: ${file}`);
  return readFileSync(file);
}

function layerFileName(l: { name: string; ageKa: number | null }): string {
  return l.ageKa === null ? `${l.name}.tif` : `${l.name}_${String(l.ageKa).replace(".", "p")}ka.tif`;
}

async function main(): Promise<number> {
  const argv = process.argv.slice(2);
  const a = parseArgs(argv);
  if (a.help || argv.length === 0) {
    console.log(USAGE);
    return argv.length === 0 ? 2 : 0;
  }
  for (const k of Object.keys(a)) {
    if (!KNOWN.has(k)) throw new TerrainInputError(`unknown option --${k} (see --help)`);
    if (FLAGS.has(k) && a[k] !== true) throw new TerrainInputError(`--${k} takes no value`);
  }
  const demFile = str(a, "dem");
  const outDir = str(a, "out");
  const agesText = str(a, "ages");
  if (!demFile) throw new TerrainInputError("--dem is required");
  if (!outDir) throw new TerrainInputError("--out is required");
  if (!agesText) throw new TerrainInputError("--ages is required (e.g. --ages 20,15,10)");
  const agesKa = agesText.split(",").map((s) => {
    const x = Number(s);
    if (s.trim() === "" || !Number.isFinite(x)) throw new TerrainInputError(`--ages: "${s}" is not an age in ka`);
    return x;
  });
  if (a.picks && a.horizon) throw new TerrainInputError("give --picks or --horizon, not both");
  const epsg = num(a, "epsg");
  const threads = num(a, "threads");

  mkdirSync(outDir, { recursive: true });
  const logFile = path.join(outDir, "run.log");
  writeFileSync(logFile, `lowstand reconstruct ${new Date().toISOString()}\nargs: ${argv.join(" ")}\n`);
  const log = (line: string) => appendFileSync(logFile, `${new Date().toISOString()} ${line}\n`);
  const t0 = performance.now();

  const datum = {
    sign: a["depth-positive-down"] ? ("depth" as const) : ("elevation" as const),
    datumAboveMslM: num(a, "datum-offset", 0)!,
    name: a["datum-offset"] ? "declared datum" : "mean sea level",
  };
  const demRead = await readGeoTiff(readFile(demFile, "--dem"), { declaredEpsg: epsg });
  const seabed = toElevationMsl(demRead.grid, datum);
  const spec = seabed.spec;
  log(`dem ${demFile}: ${spec.width}×${spec.height}, cells ${spec.cellSizeX}×${spec.cellSizeY} m, EPSG ${spec.crs?.epsg ?? "none"} (${demRead.crsSource}), ${demRead.nodataCount} nodata cells, sample type ${demRead.sampleType}`);

  let horizon: { name: string; result: HorizonResult } | undefined;
  const horizonName = str(a, "horizon-name") ?? "buried horizon";
  if (a.picks) {
    const picks = parsePicksCsv(readFile(str(a, "picks")!, "--picks").toString("utf8"));
    const result = gridHorizon(seabed.data, spec, picks, {
      unassessedBeyondM: num(a, "unassessed-m", 250)!,
      verticalResolutionM: num(a, "vertical-resolution-m", 0.3)!,
      defaultVelocityMps: num(a, "velocity", 1600)!,
    });
    horizon = { name: horizonName, result };
    log(`horizon from ${result.pickCount} picks (${result.pointCount} cells with picks, ${result.picksOnNodata} off the grid or on nodata): ${result.assessedCells} cells assessed, ${result.clampedCells} set to the seabed where the horizon rose above it`);
  } else if (a.horizon) {
    const h = await readGeoTiff(readFile(str(a, "horizon")!, "--horizon"), { declaredEpsg: epsg ?? spec.crs?.epsg });
    if (!sameSpec(h.grid.spec, spec)) throw new TerrainInputError("--horizon must be on the same grid as --dem (size, origin and cell size)");
    const hz = toElevationMsl(h.grid, datum);
    const result = horizonFromGrid(seabed.data, hz.data, num(a, "vertical-resolution-m", 0.3)!);
    horizon = { name: horizonName, result };
    log(`horizon grid ${a.horizon}: ${result.assessedCells} cells assessed, ${result.clampedCells} set to the seabed where the horizon rose above it`);
  }

  let seaLevel: SeaLevelModel;
  if (a["curve-csv"]) {
    const file = str(a, "curve-csv")!;
    seaLevel = { kind: "curve", curve: parseSeaLevelCsv(readFile(file, "--curve-csv").toString("utf8"), { name: path.basename(file), label: "user-supplied curve", citation: file }) };
  } else seaLevel = { kind: "curve", curve: defaultGlobalCurve() };

  const sides = (str(a, "ocean-side") ?? "east").split(",").map((s) => s.trim()) as Side[];
  for (const s of sides) if (!["east", "west", "north", "south"].includes(s)) throw new TerrainInputError(`--ocean-side: "${s}" is not east, west, north or south`);

  let palaeochannels: Uint8Array | undefined;
  if (a.channels) palaeochannels = rasteriseLines(parseSurveyLinesGeoJson(readFile(str(a, "channels")!, "--channels").toString("utf8"), "channels"), spec);

  let surveyLines: SurveyLine[] | undefined;
  if (a.lines) {
    const file = str(a, "lines")!;
    const text = readFile(file, "--lines").toString("utf8");
    surveyLines = /\.(geo)?json$/i.test(file) ? parseSurveyLinesGeoJson(text) : parseSurveyLinesCsv(text);
    log(`survey lines ${file}: ${surveyLines.length} lines`);
  }

  const input: ReconstructInput = {
    seabed,
    horizon,
    seaLevel,
    agesKa,
    oceanBoundary: { kind: "sides", sides },
    tidalRangeM: num(a, "tidal-range", 0)!,
    streamThresholdKm2: num(a, "stream-km2", 1)!,
    palaeochannels,
    surveyLines,
    burnDepthM: num(a, "burn-m", 0)!,
    tpiRadiusM: num(a, "tpi-radius-m", 500)!,
  };
  const compress = a.compress === true;
  let writeMs = 0;
  let lastStep = "";
  const sink = (l: LayerOut) => {
    const w0 = performance.now();
    const nodata = new Uint8Array(l.data.length);
    if (l.nodata === "NaN") {
      const d = l.data as Float32Array;
      for (let i = 0; i < d.length; i++) if (d[i] !== d[i]) nodata[i] = 1;
    } else {
      const code = l.nodata;
      for (let i = 0; i < l.data.length; i++) if (l.data[i] === code) nodata[i] = 1;
    }
    const grid: Grid<Layer> = { spec, data: l.data, nodata };
    const bytes = writeGeoTiff(grid, {
      deflate: compress ? nodeDeflate : undefined,
      nodataValue: l.nodata === "NaN" ? undefined : l.nodata,
      citation: `Lowstand ${l.name}${l.ageKa === null ? "" : ` at ${l.ageKa} ka BP`} (${l.units})`,
    });
    const file = path.join(outDir, layerFileName(l));
    writeFileSync(`${file}.partial`, bytes);
    renameSync(`${file}.partial`, file);
    writeMs += performance.now() - w0;
  };
  const manifest = await reconstruct(input, {
    sink,
    runAges: threads === 0 ? inlineAgeRunner : workerAgeRunner({ threads }),
    onProgress: (f, step) => {
      if (step && step !== lastStep) {
        lastStep = step;
        log(`${(100 * f).toFixed(1)} % ${step}`);
      }
    },
  });
  const files = manifest.layers.map((l) => ({ ...l, file: layerFileName(l) }));
  const full = {
    ...manifest,
    layers: files,
    inputs: { dem: path.resolve(demFile), picks: a.picks ? path.resolve(str(a, "picks")!) : null, lines: a.lines ? path.resolve(str(a, "lines")!) : null, horizon: a.horizon ? path.resolve(str(a, "horizon")!) : null, curve: a["curve-csv"] ?? null, verticalDatum: datum, crsSource: demRead.crsSource },
    timing: { totalMs: performance.now() - t0, geotiffWriteMs: writeMs },
  };
  const mf = path.join(outDir, "manifest.json");
  writeFileSync(`${mf}.partial`, JSON.stringify(full, null, 2));
  renameSync(`${mf}.partial`, mf);
  log(`done: ${files.length} layers in ${(full.timing.totalMs / 1000).toFixed(1)} s (GeoTIFF writing ${(writeMs / 1000).toFixed(1)} s)`);
  console.log(`${files.length} layers and manifest.json written to ${outDir} in ${(full.timing.totalMs / 1000).toFixed(1)} s`);
  for (const w of manifest.warnings) console.log(`warning: ${w}`);
  return 0;
}

main().then(
  (code) => process.exit(code),
  (e: Error) => {
    if (e instanceof TerrainInputError) {
      console.error(`error: ${e.message}`);
      process.exit(2);
    }
    if (e instanceof TerrainCancelled) {
      console.error(`cancelled: ${e.message}`);
      process.exit(130);
    }
    console.error(`error: internal fault: ${e?.message ?? e}`);
    if (e?.stack) console.error(e.stack);
    process.exit(1);
  },
);
