import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { execFileSync, spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { syntheticGrid } from "./bench/synthetic-shelf.ts";
import { writeGeoTiff } from "../app/terrain/geotiff-write.ts";
import { requireTool } from "../fixtures/terrain2/gdal-raw.ts";
import { seaLevelAt, defaultGlobalCurve } from "../app/terrain/sea-level.ts";

const root = path.resolve(import.meta.dirname, "..");
const dir = mkdtempSync(path.join(tmpdir(), "lowstand-cli-"));
const dem = path.join(dir, "shelf.tif");
const picks = path.join(dir, "picks.csv");
const lines = path.join(dir, "lines.csv");
const out = path.join(dir, "out");
const grid = syntheticGrid(96, 7, 100);

function cli(args: string[]) {
  return spawnSync(process.execPath, [path.join(root, "scripts/run-ts.mjs"), path.join(root, "scripts/reconstruct-cli.ts"), ...args], { encoding: "utf8", cwd: root });
}

beforeAll(() => {
  writeFileSync(dem, writeGeoTiff(grid));
  // two invented north–south lines with TWT picks every 10 m
  const rows = ["line,fix,x,y,twt_ms"];
  for (const [k, x] of [424050, 426050].entries())
    for (let f = 0, y = 6099995; y > 6090500; y -= 10, f++) rows.push(`BX-${k + 1},${f},${x},${y},2.5`);
  writeFileSync(picks, rows.join("\n") + "\n");
  writeFileSync(lines, "line,fix,x,y\nBX-1,1,424050,6099995\nBX-1,2,424050,6090505\nTIE-9,1,420000,6095050\nTIE-9,2,429600,6095050\n");
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("reconstruct CLI", () => {
  it("writes one GeoTIFF per layer and age, in the DEM's CRS and grid, and a manifest", () => {
    requireTool("gdalinfo");
    const r = cli(["--dem", dem, "--picks", picks, "--unassessed-m", "300", "--lines", lines, "--ages", "16,12", "--tidal-range", "2", "--stream-km2", "0.5", "--out", out, "--threads", "2"]);
    expect(r.status, r.stderr).toBe(0);
    const manifest = JSON.parse(readFileSync(path.join(out, "manifest.json"), "utf8"));
    expect(manifest.agesKa).toEqual([16, 12]);
    expect(manifest.analysisSurface.kind).toBe("horizon");
    expect(existsSync(path.join(out, "run.log"))).toBe(true);
    for (const l of manifest.layers) expect(existsSync(path.join(out, l.file)), l.file).toBe(true);
    for (const f of ["dist_stream_12ka.tif", "dist_survey_line.tif", "dist_pick_line.tif", "unassessed.tif"]) {
      expect(manifest.layers.some((l: { file: string }) => l.file === f), f).toBe(true);
    }
    const info = JSON.parse(execFileSync("gdalinfo", ["-json", path.join(out, "height_above_sea_12ka.tif")], { encoding: "utf8" }));
    expect(info.size).toEqual([96, 96]);
    expect(info.geoTransform).toEqual([420000, 100, 0, 6100000, 0, -100]);
    expect(info.coordinateSystem.wkt).toMatch(/ID\["EPSG",32725\]\]$/);
    expect(info.bands[0].noDataValue).toBe("NaN");
    // a cell far east of both lines (unassessed: the seabed is the surface there):
    // (formula) height above sea = seabed − RSL(12 ka)
    const col = 90, row = 40;
    const v = Number(execFileSync("gdallocationinfo", ["-valonly", path.join(out, "height_above_sea_12ka.tif"), String(col), String(row)], { encoding: "utf8" }));
    expect(v).toBeCloseTo(grid.data[row * 96 + col] - seaLevelAt(defaultGlobalCurve(), 12), 3);
    // on a line the horizon lies 2.0 m below the seabed at every pick — (formula) 2.5 ms at
    // 1600 m/s; the cell's cover differs from it by the seabed's curvature between the picks (the
    // bilinear seabed at the picks vs the cell's own value), a few centimetres on this grid
    const th = Number(execFileSync("gdallocationinfo", ["-valonly", path.join(out, "cover_thickness.tif"), "40", "40"], { encoding: "utf8" }));
    expect(Math.abs(th - 2.0)).toBeLessThan(0.05);
  }, 120_000);

  it("stops with one clear line and exit code 2 on bad input", () => {
    const noAges = cli(["--dem", dem, "--out", out]);
    expect(noAges.status).toBe(2);
    expect(noAges.stderr.trim()).toBe("error: --ages is required (e.g. --ages 20,15,10)");
    const badSide = cli(["--dem", dem, "--ages", "12", "--ocean-side", "up", "--out", out]);
    expect(badSide.status).toBe(2);
    expect(badSide.stderr.trim()).toMatch(/^error: --ocean-side: "up" is not east, west, north or south$/);
    const notTiff = cli(["--dem", picks, "--ages", "12", "--out", out]);
    expect(notTiff.status).toBe(2);
    expect(notTiff.stderr.trim().split("\n")).toHaveLength(1);
  }, 60_000);
});
