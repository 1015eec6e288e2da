/**
 * Helper for scripts/compare-grass.sh: compares our D8 flow accumulation and stream cells with GRASS
 * GIS `r.watershed -s` (single flow direction) run on our own filled grid — a general-purpose
 * reference library, with its conventions from check-values.md:
 *   - its accumulation counts the cell itself (ours does not: compare ours + 1);
 *   - it marks cells whose catchment may leave the region with negative values (take |value|);
 *   - it treats every edge cell and every cell next to nodata as an outlet (so do we, here);
 *   - it rounds elevations to the millimetre (so the grid we give it, and route ourselves, is
 *     rounded to the millimetre first).
 *
 *   node scripts/run-ts.mjs scripts/compare-grass.ts prepare <dir> [width height cellX cellY seed]
 *   node scripts/run-ts.mjs scripts/compare-grass.ts compare <dir> [thresholdCells margin]
 */
import { readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { fillDepressions } from "../app/terrain/fill.ts";
import { resolveFlats } from "../app/terrain/flats.ts";
import { flowAccumulation } from "../app/terrain/flow-accumulation.ts";
import { flowDirectionD8 } from "../app/terrain/flow-direction.ts";
import { readGeoTiff } from "../app/terrain/geotiff-read.ts";
import { writeGeoTiff } from "../app/terrain/geotiff-write.ts";
import { D8_DCOL, D8_DROW, type Grid, type GridSpec } from "../app/terrain/grid.ts";
import { resolveCrs } from "../app/terrain/crs.ts";
import { prng } from "../app/terrain/test-utils";

const [mode, dir, ...rest] = process.argv.slice(2);
if (!mode || !dir) {
  console.error("usage: compare-grass.ts prepare|compare <dir> [...]");
  process.exit(2);
}



/** An invented shelf: a slope to the south, meandering valleys, a few closed hollows, noise. */
function syntheticSurface(w: number, h: number, dx: number, dy: number, seed: number): Grid<Float32Array> {
  const rnd = prng(seed);
  const spec: GridSpec = { width: w, height: h, originX: 431000, originY: 612000, cellSizeX: dx, cellSizeY: dy, crs: resolveCrs(32631) };
  const data = new Float32Array(w * h);
  const valleys = Array.from({ length: 5 }, () => ({ x0: rnd() * w * dx, amp: 200 + rnd() * 600, wl: 1500 + rnd() * 3000, depth: 4 + rnd() * 8 }));
  const hollows = Array.from({ length: 8 }, () => ({ x: rnd() * w * dx, y: rnd() * h * dy, r: 150 + rnd() * 400, d: 2 + rnd() * 4 }));
  for (let r = 0; r < h; r++) {
    for (let c = 0; c < w; c++) {
      const x = c * dx;
      const y = r * dy;
      let z = 20 - (y / (h * dy)) * 60 + 3 * Math.sin(x / 900) * Math.cos(y / 700);
      for (const v of valleys) {
        const cx = v.x0 + v.amp * Math.sin(y / v.wl);
        const d = Math.abs(x - cx);
        z -= v.depth * Math.exp(-(d * d) / (2 * 120 * 120));
      }
      for (const o of hollows) {
        const d2 = (x - o.x) ** 2 + (y - o.y) ** 2;
        z -= o.d * Math.exp(-d2 / (2 * o.r * o.r));
      }
      z += (rnd() - 0.5) * 0.6;
      data[r * w + c] = Math.round(z * 1000) / 1000;
    }
  }
  return { spec, data, nodata: new Uint8Array(w * h) };
}

function edgeOutlets(g: Grid<Float32Array>): Uint8Array {
  const { width: w, height: h } = g.spec;
  const m = new Uint8Array(w * h);
  for (let r = 0; r < h; r++)
    for (let c = 0; c < w; c++) {
      const i = r * w + c;
      if (g.nodata[i]) continue;
      let edge = r === 0 || c === 0 || r === h - 1 || c === w - 1;
      for (let k = 0; k < 8 && !edge; k++) if (g.nodata[(r + D8_DROW[k]) * w + c + D8_DCOL[k]]) edge = true;
      if (edge) m[i] = 1;
    }
  return m;
}

if (mode === "prepare") {
  const [w, h, dx, dy, seed] = [rest[0] ?? "400", rest[1] ?? "300", rest[2] ?? "25", rest[3] ?? "25", rest[4] ?? "7"].map(Number);
  const g = syntheticSurface(w, h, dx, dy, seed);
  const filled = fillDepressions(g, edgeOutlets(g)).filledM;
  for (let i = 0; i < filled.length; i++) filled[i] = Math.round(filled[i] * 1000) / 1000; // GRASS's millimetres
  writeFileSync(path.join(dir, "filled.tif"), writeGeoTiff({ spec: g.spec, data: filled, nodata: g.nodata }));
  console.log(`prepared ${w}×${h} cells of ${dx}×${dy} m, seed ${seed}`);
} else if (mode === "compare") {
  const threshold = Number(rest[0] ?? "100");
  const margin = Number(rest[1] ?? "10");
  const filled = (await readGeoTiff(readFileSync(path.join(dir, "filled.tif")))).grid;
  const grassAcc = (await readGeoTiff(readFileSync(path.join(dir, "grass-acc.tif")), { declaredEpsg: 32631 })).grid;
  const grassDir = (await readGeoTiff(readFileSync(path.join(dir, "grass-dir.tif")), { declaredEpsg: 32631 })).grid;
  const { width: w, height: h } = filled.spec;
  const outlets = edgeOutlets(filled);
  const d8 = flowDirectionD8(filled, outlets);
  const flats = resolveFlats(filled, d8);
  const acc = flowAccumulation(filled.spec, flats.directions, filled.nodata).upstreamCells;
  let cells = 0;
  let equal = 0;
  let within5 = 0;
  let streamsOurs = 0;
  let streamsTheirs = 0;
  let streamsBoth = 0;
  let streamsAgree = 0;
  let sx = 0, sy = 0, sxx = 0, syy = 0, sxy = 0;
  const flatCells = new Uint8Array(w * h);
  for (let i = 0; i < w * h; i++) if (d8[i] === 9) flatCells[i] = 1;
  let flatN = 0, flatEq = 0, slopeN = 0, slopeEq = 0;
  let dirN = 0, dirEq = 0, dirFlatN = 0, dirFlatEq = 0, dirTie = 0, dirTheirsNotDown = 0;
  const dirRatios: number[] = [];
  const dist = [filled.spec.cellSizeX, Math.hypot(filled.spec.cellSizeX, filled.spec.cellSizeY), filled.spec.cellSizeY];
  for (let r = margin; r < h - margin; r++) {
    for (let c = margin; c < w - margin; c++) {
      const i = r * w + c;
      const ours = acc[i] + 1;
      const theirs = Math.abs(grassAcc.data[i]);
      if (!Number.isFinite(theirs)) continue;
      cells++;
      if (ours === theirs) equal++;
      if (Math.abs(ours - theirs) <= 0.05 * Math.max(ours, theirs)) within5++;
      // GRASS drainage: 1 NE, 2 N, 3 NW, 4 W, 5 SW, 6 S, 7 SE, 8 E (counter-clockwise from east); ours 0 E … 7 NE clockwise
      const gd = Math.abs(grassDir.data[i]);
      const od = flats.directions[i];
      if (od <= 7 && gd >= 1 && gd <= 8) {
        const same = 8 - od === gd;
        if (flatCells[i]) { dirFlatN++; if (same) dirFlatEq++; } else {
          dirN++;
          if (same) dirEq++;
          else {
            // is GRASS's choice an equally steep neighbour (a tie)?
            const gk = 8 - gd; // back to our code
            const gi = (r + D8_DROW[gk]) * w + c + D8_DCOL[gk];
            const oi = (r + D8_DROW[od]) * w + c + D8_DCOL[od];
            const sOurs = (filled.data[i] - filled.data[oi]) / dist[od % 2 === 1 ? 1 : od % 4 === 0 ? 0 : 2];
            const sTheirs = (filled.data[i] - filled.data[gi]) / dist[gk % 2 === 1 ? 1 : gk % 4 === 0 ? 0 : 2];
            if (Math.abs(sOurs - sTheirs) < 1e-9) dirTie++;
            else if (sTheirs <= 0) dirTheirsNotDown++;
            else dirRatios.push(sTheirs / sOurs);
          }
        }
      }
      if (flatCells[i]) { flatN++; if (ours === theirs) flatEq++; } else { slopeN++; if (ours === theirs) slopeEq++; }
      const lx = Math.log(ours);
      const ly = Math.log(theirs);
      sx += lx; sy += ly; sxx += lx * lx; syy += ly * ly; sxy += lx * ly;
      const a = ours >= threshold;
      const b = theirs >= threshold;
      if (a) streamsOurs++;
      if (b) streamsTheirs++;
      if (a && b) streamsBoth++;
      if (a === b) streamsAgree++;
    }
  }
  const corr = (cells * sxy - sx * sy) / Math.sqrt((cells * sxx - sx * sx) * (cells * syy - sy * sy));
  const pct = (a: number, b: number) => ((100 * a) / b).toFixed(2) + " %";
  console.log(`grid ${w}×${h}, cells compared (≥ ${margin} cells from the edge): ${cells}`);
  console.log(`flats resolved by us: ${flats.flatCount} flats, ${flats.resolvedCount} cells`);
  console.log(`accumulation (ours + 1 vs |GRASS|): identical ${pct(equal, cells)}; within 5 % ${pct(within5, cells)}; Pearson r of log values ${corr.toFixed(4)}`);
  console.log(`  on cells with a downhill neighbour: identical ${pct(slopeEq, slopeN)} of ${slopeN}; on flat cells: identical ${pct(flatEq, flatN)} of ${flatN}`);
  console.log(`D8 direction (cells with a downhill neighbour): identical ${pct(dirEq, dirN)} of ${dirN}; of the rest, equally steep ties: ${dirTie}; on flat cells identical ${pct(dirFlatEq, dirFlatN)} of ${dirFlatN}`);
  dirRatios.sort((a, b) => a - b);
  const q = (p: number) => (dirRatios.length ? dirRatios[Math.floor(p * (dirRatios.length - 1))].toFixed(3) : "-");
  console.log(`  other differences: GRASS's neighbour not lower ${dirTheirsNotDown}; lower but less steep ${dirRatios.length} (its gradient / ours: median ${q(0.5)}, 10 % ${q(0.1)}, 90 % ${q(0.9)})`);
  console.log(`stream cells at ${threshold} cells: ours ${streamsOurs}, GRASS ${streamsTheirs}, both ${streamsBoth}; Jaccard ${(streamsBoth / (streamsOurs + streamsTheirs - streamsBoth)).toFixed(4)}; cell-by-cell agreement ${pct(streamsAgree, cells)}`);
} else {
  console.error(`unknown mode ${mode}`);
  process.exit(2);
}
