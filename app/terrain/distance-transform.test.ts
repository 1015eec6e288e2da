import { describe, expect, it } from "vitest";
import { euclideanDistance, squaredDistance1D } from "./distance-transform.ts";
import { prng } from "./test-utils.ts";

function bruteForce(features: Uint8Array, w: number, h: number, dx: number, dy: number): Float64Array {
  const out = new Float64Array(w * h).fill(Infinity);
  const fr: number[] = [];
  const fc: number[] = [];
  for (let i = 0; i < w * h; i++) if (features[i]) { fr.push(Math.floor(i / w)); fc.push(i % w); }
  for (let r = 0; r < h; r++)
    for (let c = 0; c < w; c++) {
      let best = Infinity;
      for (let k = 0; k < fr.length; k++) {
        const ex = (c - fc[k]) * dx;
        const ey = (r - fr[k]) * dy;
        const d = ex * ex + ey * ey;
        if (d < best) best = d;
      }
      out[r * w + c] = Math.sqrt(best);
    }
  return out;
}

describe("squaredDistance1D", () => {
  it("reproduces the 1-D squared transform of [0,∞,∞,∞,∞,0]", () => {
    const f = [0, Infinity, Infinity, Infinity, Infinity, 0];
    const d = new Float64Array(6);
    squaredDistance1D(f, 0, 1, 6, 1, d, 0, 1, new Int32Array(6), new Float64Array(7), new Float64Array(6));
    // (formula) Felzenszwalb & Huttenlocher (2012): min over the two features of (p − q)²
    expect(Array.from(d)).toEqual([0, 1, 4, 4, 1, 0]);
  });

  it("adds a sampled function, not only zeros, and scales by the spacing", () => {
    const f = [Infinity, 3, Infinity, Infinity, 0.5];
    const d = new Float64Array(5);
    squaredDistance1D(f, 0, 1, 5, 2, d, 0, 1, new Int32Array(5), new Float64Array(6), new Float64Array(5));
    // (formula) d(p) = min_q f(q) + (2(p − q))²: p0: 3+4=7; p1: 3; p2: min(3+4, 0.5+16)=7;
    // p3: min(3+16, 0.5+4)=4.5; p4: 0.5
    expect(Array.from(d)).toEqual([7, 3, 7, 4.5, 0.5]);
  });

  it("returns +Infinity throughout when no sample is finite", () => {
    const d = new Float64Array(4);
    squaredDistance1D([Infinity, Infinity, Infinity, Infinity], 0, 1, 4, 1, d, 0, 1, new Int32Array(4), new Float64Array(5), new Float64Array(4));
    expect(Array.from(d)).toEqual([Infinity, Infinity, Infinity, Infinity]);
  });
});

describe("euclideanDistance", () => {
  it("gives 1, √2, 2, √5, 2√2 around a single centre feature on a 5×5 grid", () => {
    const f = new Uint8Array(25);
    f[12] = 1;
    const d = euclideanDistance(f, 5, 5, 1, 1);
    // (formula) Euclidean distance from (2,2) on unit cells
    expect(d[12]).toBe(0);
    expect(d[13]).toBeCloseTo(1, 6);
    expect(d[18]).toBeCloseTo(Math.SQRT2, 6);
    expect(d[14]).toBeCloseTo(2, 6);
    expect(d[19]).toBeCloseTo(Math.sqrt(5), 6);
    for (const corner of [0, 4, 20, 24]) expect(d[corner]).toBeCloseTo(2 * Math.SQRT2, 6);
  });

  it("uses metres on non-square cells", () => {
    const f = new Uint8Array(25);
    f[12] = 1;
    const d = euclideanDistance(f, 5, 5, 50, 25);
    // (formula) corner: √((2·50)² + (2·25)²) = √12500 = 111.8034; east neighbour 50; south 25
    expect(d[0]).toBeCloseTo(111.8034, 3);
    expect(d[13]).toBeCloseTo(50, 4);
    expect(d[17]).toBeCloseTo(25, 4);
  });

  it("equals brute force over all feature cells on random grids", () => {
    const rnd = prng(20120901);
    for (let trial = 0; trial < 40; trial++) {
      const w = 1 + Math.floor(rnd() * 40);
      const h = 1 + Math.floor(rnd() * 40);
      const dx = 0.5 + rnd() * 60;
      const dy = trial % 3 === 0 ? dx : 0.5 + rnd() * 60;
      const density = [0.002, 0.02, 0.2, 0.7][trial % 4];
      const f = new Uint8Array(w * h);
      for (let i = 0; i < f.length; i++) f[i] = rnd() < density ? 1 : 0;
      const got = euclideanDistance(f, w, h, dx, dy);
      const want = bruteForce(f, w, h, dx, dy);
      for (let i = 0; i < f.length; i++) {
        // (formula) exact transform = brute force; Float32 storage → relative 1e-6
        if (want[i] === Infinity) expect(got[i]).toBe(Infinity);
        else expect(Math.abs(got[i] - want[i])).toBeLessThanOrEqual(1e-6 * Math.max(1, want[i]));
      }
    }
  });

  it("refuses a feature array of the wrong size", () => {
    expect(() => euclideanDistance(new Uint8Array(5), 2, 2, 1, 1)).toThrow(/expected 2×2/);
  });
});
