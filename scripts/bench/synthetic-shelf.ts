/**
 * A deterministic synthetic continental shelf for benchmarks and demos: a coastal plain in the west
 * falling to a shelf break and slope in the east (the open ocean), two wave-cut terraces, meandering
 * drowned valleys running seawards, a few closed basins, and fractal value noise. Everything comes
 * from one integer seed (mulberry32, `prng`), so the same size and seed give the same grid on any machine.
 * Invented terrain: it imitates no real place.
 */
import { prng } from "../../app/terrain/test-utils.ts"; // mulberry32, the terrain tests' seeded PRNG
import { resolveCrs } from "../../app/terrain/crs.ts";
import type { Grid, GridSpec } from "../../app/terrain/grid.ts";

export interface SyntheticShelf {
  width: number;
  height: number;
  cellSizeM: number;
  /** elevation, m relative to present mean sea level, row 0 north */
  elevation: Float32Array;
}

/** smooth step from 0 (t ≤ 0) to 1 (t ≥ 1) */
function smooth(t: number): number {
  if (t <= 0) return 0;
  if (t >= 1) return 1;
  return t * t * (3 - 2 * t);
}

/**
 * Makes a size×size shelf with `cellSizeM` cells (default 25 m) from `seed`. O(size²) time; one
 * Float32Array of size² plus small lattices for the noise.
 */
export function syntheticShelf(size: number, seed = 20260, cellSizeM = 25): SyntheticShelf {
  const rnd = prng(seed);
  const w = size;
  const h = size;
  const z = new Float32Array(w * h);
  // value-noise lattices, 5 octaves
  const octaves = 5;
  const lattices: Float32Array[] = [];
  const lsz: number[] = [];
  for (let o = 0; o < octaves; o++) {
    const m = 4 * (1 << (o + 1)) + 2;
    const lat = new Float32Array(m * m);
    for (let i = 0; i < lat.length; i++) lat[i] = rnd() * 2 - 1;
    lattices.push(lat);
    lsz.push(m);
  }
  // valleys: centre line y = y0 + a·sin(2π f x + φ), depth and width grow seawards
  const nValleys = 5;
  const vy0 = new Float64Array(nValleys), va = new Float64Array(nValleys), vf = new Float64Array(nValleys);
  const vp = new Float64Array(nValleys), vd = new Float64Array(nValleys), vw = new Float64Array(nValleys);
  for (let k = 0; k < nValleys; k++) {
    vy0[k] = (k + 0.5 + (rnd() - 0.5) * 0.5) / nValleys;
    va[k] = 0.02 + rnd() * 0.04;
    vf[k] = 1.5 + rnd() * 3;
    vp[k] = rnd() * Math.PI * 2;
    vd[k] = 8 + rnd() * 12;
    vw[k] = 0.006 + rnd() * 0.008;
  }
  // closed basins (gaussian hollows on the mid-shelf)
  const nBasins = 6;
  const bx = new Float64Array(nBasins), by = new Float64Array(nBasins), br = new Float64Array(nBasins), bd = new Float64Array(nBasins);
  for (let k = 0; k < nBasins; k++) {
    bx[k] = 0.2 + rnd() * 0.5;
    by[k] = rnd();
    br[k] = 0.015 + rnd() * 0.03;
    bd[k] = 6 + rnd() * 10;
  }
  const rowNoise = new Float64Array(w);
  for (let r = 0; r < h; r++) {
    const v = r / h;
    for (let c = 0; c < w; c++) rowNoise[c] = 0;
    let amp = 6;
    for (let o = 0; o < octaves; o++) {
      const m = lsz[o];
      const lat = lattices[o];
      const fy = v * (m - 2);
      const y0 = Math.floor(fy);
      const ty = smooth(fy - y0);
      const scaleX = (m - 2) / w;
      for (let c = 0; c < w; c++) {
        const fx = c * scaleX;
        const x0 = Math.floor(fx);
        const tx = smooth(fx - x0);
        const a = lat[y0 * m + x0], b = lat[y0 * m + x0 + 1], d = lat[(y0 + 1) * m + x0], e = lat[(y0 + 1) * m + x0 + 1];
        rowNoise[c] += amp * ((a * (1 - tx) + b * tx) * (1 - ty) + (d * (1 - tx) + e * tx) * ty);
      }
      amp *= 0.5;
    }
    for (let c = 0; c < w; c++) {
      const u = c / w;
      // coastal plain +30 m → shelf −120 m at u = 0.8 → slope to −400 m
      let base = 30 - 150 * u - 280 * smooth((u - 0.8) / 0.2);
      // terraces: flatten bands around −45 m and −95 m
      base += 8 * smooth((u - 0.42) / 0.04) - 8 * smooth((u - 0.46) / 0.06);
      base += 6 * smooth((u - 0.7) / 0.03) - 6 * smooth((u - 0.73) / 0.05);
      let cut = 0;
      for (let k = 0; k < nValleys; k++) {
        const yc = vy0[k] + va[k] * Math.sin(2 * Math.PI * vf[k] * u + vp[k]);
        const wid = vw[k] * (1 + 2 * u);
        const dy = (v - yc) / wid;
        if (dy > -4 && dy < 4) {
          const dep = vd[k] * (0.4 + u) * Math.exp(-dy * dy);
          if (dep > cut) cut = dep;
        }
      }
      let hollow = 0;
      for (let k = 0; k < nBasins; k++) {
        const ex = (u - bx[k]) / br[k];
        const ey = (v - by[k]) / br[k];
        const q = ex * ex + ey * ey;
        if (q < 9) hollow += bd[k] * Math.exp(-q);
      }
      z[r * w + c] = base - cut - hollow + rowNoise[c];
    }
  }
  return { width: w, height: h, cellSizeM, elevation: z };
}

/** WGS 84 / UTM zone 25S: the grid is placed over the open South Atlantic, far from any coast. */
export const SYNTHETIC_EPSG = 32725;
export const SYNTHETIC_ORIGIN: [number, number] = [420000, 6100000];

/** The synthetic shelf as a georeferenced grid (EPSG:32725, no nodata). */
export function syntheticGrid(size: number, seed = 20260, cell = 25): Grid<Float32Array> {
  const s = syntheticShelf(size, seed, cell);
  const crs = resolveCrs(SYNTHETIC_EPSG);
  const spec: GridSpec = {
    width: size, height: size, originX: SYNTHETIC_ORIGIN[0], originY: SYNTHETIC_ORIGIN[1],
    cellSizeX: cell, cellSizeY: cell, crs: { epsg: crs.epsg, proj4: crs.proj4 },
  };
  return { spec, data: s.elevation, nodata: new Uint8Array(size * size) };
}

