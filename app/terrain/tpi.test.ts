import { describe, expect, it } from "vitest";
import { topographicPositionIndex } from "./tpi.ts";
import { prng } from "./test-utils.ts";

/** brute-force mean over the clipped rectangular window, centre excluded */
function bruteTpi(z: Float32Array, w: number, h: number, hx: number, hy: number): Float64Array {
  const out = new Float64Array(w * h);
  for (let r = 0; r < h; r++)
    for (let c = 0; c < w; c++) {
      const zc = z[r * w + c];
      if (Number.isNaN(zc)) { out[r * w + c] = NaN; continue; }
      let s = 0;
      let k = 0;
      for (let rr = Math.max(0, r - hy); rr <= Math.min(h - 1, r + hy); rr++)
        for (let cc = Math.max(0, c - hx); cc <= Math.min(w - 1, c + hx); cc++) {
          if (rr === r && cc === c) continue;
          const v = z[rr * w + cc];
          if (!Number.isNaN(v)) { s += v; k++; }
        }
      out[r * w + c] = k > 0 ? zc - s / k : NaN;
    }
  return out;
}

describe("topographicPositionIndex", () => {
  it("is zero on a plane away from the edges and on a flat", () => {
    const w = 9, h = 9;
    const z = new Float32Array(w * h);
    for (let r = 0; r < h; r++) for (let c = 0; c < w; c++) z[r * w + c] = 3 * c - 2 * r;
    const t = topographicPositionIndex(z, w, h, 10, 10, 20);
    // (formula) the mean of a plane over a symmetric window is its centre value
    expect(t[4 * w + 4]).toBeCloseTo(0, 5);
    const flat = topographicPositionIndex(new Float32Array(25).fill(-30), 5, 5, 10, 10, 10);
    expect(Array.from(flat).every((v) => Math.abs(v) < 1e-6)).toBe(true);
  });

  it("is positive on a knoll and negative in a pit", () => {
    const z = new Float32Array(25).fill(-20);
    z[12] = -15; // 5 m knoll
    const t = topographicPositionIndex(z, 5, 5, 1, 1, 1);
    // (formula) centre: −15 − mean of 8 neighbours (−20) = +5; a neighbour at (1,1): its window
    // of 8 others holds the knoll: −20 − (7·(−20) + (−15))/8 = −0.625
    expect(t[12]).toBeCloseTo(5, 6);
    expect(t[6]).toBeCloseTo(-0.625, 6);
  });

  it("equals a brute-force window mean on random grids with nodata and non-square cells", () => {
    const rnd = prng(1999);
    for (let trial = 0; trial < 12; trial++) {
      const w = 3 + Math.floor(rnd() * 30);
      const h = 3 + Math.floor(rnd() * 30);
      const dx = 5 + rnd() * 45;
      const dy = 5 + rnd() * 45;
      const radius = 10 + rnd() * 150;
      const z = new Float32Array(w * h);
      for (let i = 0; i < z.length; i++) z[i] = rnd() < 0.1 ? NaN : -100 + rnd() * 50;
      const got = topographicPositionIndex(z, w, h, dx, dy, radius);
      const want = bruteTpi(z, w, h, Math.max(1, Math.round(radius / dx)), Math.max(1, Math.round(radius / dy)));
      for (let i = 0; i < z.length; i++) {
        if (Number.isNaN(want[i])) expect(Number.isNaN(got[i])).toBe(true);
        else expect(got[i]).toBeCloseTo(want[i], 3);
      }
    }
  });
});
