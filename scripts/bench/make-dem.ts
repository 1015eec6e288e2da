/**
 * Writes the synthetic shelf (synthetic-shelf.ts) as a GeoTIFF, for the CLI and for GRASS:
 *   node scripts/run-ts.mjs scripts/bench/make-dem.ts --size 1024 [--seed 20260] [--cell 25] --out shelf.tif
 * The grid's placement and CRS: see syntheticGrid in synthetic-shelf.ts.
 */
import { writeFileSync } from "node:fs";
import { writeGeoTiff } from "../../app/terrain/geotiff-write.ts";
import { SYNTHETIC_EPSG, syntheticGrid } from "./synthetic-shelf.ts";

{
  const arg = (k: string, d?: string) => {
    const i = process.argv.indexOf(`--${k}`);
    return i >= 0 ? process.argv[i + 1] : d;
  };
  const size = Number(arg("size", "1024"));
  const out = arg("out");
  if (!out || !(size >= 3)) {
    console.error("usage: make-dem.ts --size N [--seed S] [--cell M] --out FILE.tif");
    process.exit(2);
  }
  const g = syntheticGrid(size, Number(arg("seed", "20260")), Number(arg("cell", "25")));
  writeFileSync(out, writeGeoTiff(g));
  console.log(`wrote ${out}: ${size}×${size}, EPSG:${SYNTHETIC_EPSG}`);
}
