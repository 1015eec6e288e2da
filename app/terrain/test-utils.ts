/**
 * Helpers for the terrain tests only: a seeded PRNG and small random grids. Not used by the engine.
 */
import type { Grid, GridSpec } from "./grid";

/** mulberry32: a small, fast, seeded 32-bit PRNG (public-domain). Returns floats in [0, 1). */
export function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function spec(width: number, height: number, cellSizeX = 10, cellSizeY = cellSizeX): GridSpec {
  return { width, height, originX: 500000, originY: 6000000, cellSizeX, cellSizeY, crs: null };
}

/** A grid from rows of numbers (NaN = nodata). */
export function gridFromRows(rows: number[][], cellSizeX = 10, cellSizeY = cellSizeX): Grid<Float32Array> {
  const h = rows.length;
  const w = rows[0].length;
  const data = new Float32Array(w * h);
  const nodata = new Uint8Array(w * h);
  rows.forEach((row, r) =>
    row.forEach((v, c) => {
      data[r * w + c] = v;
      if (Number.isNaN(v)) nodata[r * w + c] = 1;
    }),
  );
  return { spec: spec(w, h, cellSizeX, cellSizeY), data, nodata };
}

/**
 * A random, rough terrain: a tilted plane (falling towards the south) plus noise (which makes many
 * pits) and optional nodata holes, with values quantised (default 0.5 m) so flats occur.
 */
export function randomTerrain(
  seed: number,
  width: number,
  height: number,
  opts: { nodataFraction?: number; cellSizeX?: number; cellSizeY?: number; quantum?: number } = {},
): Grid<Float32Array> {
  const rnd = prng(seed);
  const n = width * height;
  const data = new Float32Array(n);
  const nodata = new Uint8Array(n);
  const q = opts.quantum ?? 0.5;
  for (let r = 0; r < height; r++) {
    for (let c = 0; c < width; c++) {
      const v = -60 + (height - r) * 1.5 + (rnd() - 0.5) * 12;
      data[r * width + c] = Math.round(v / q) * q;
    }
  }
  const holes = opts.nodataFraction ?? 0;
  for (let i = 0; i < n; i++) {
    if (rnd() < holes) {
      nodata[i] = 1;
      data[i] = NaN;
    }
  }
  return { spec: spec(width, height, opts.cellSizeX ?? 10, opts.cellSizeY ?? opts.cellSizeX ?? 10), data, nodata };
}
