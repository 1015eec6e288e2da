import { describe, expect, it } from "vitest";
import { aspectFromGradient, slopeAspect } from "./slope-aspect.ts";
import { prng } from "./test-utils.ts";
import { gdaldem } from "../../fixtures/terrain2/gdal-raw.ts";

function plane(w: number, h: number, dx: number, dy: number, fallEast: number, fallSouth: number): Float32Array {
  const z = new Float32Array(w * h);
  for (let r = 0; r < h; r++) for (let c = 0; c < w; c++) z[r * w + c] = 100 - fallEast * c * dx - fallSouth * r * dy;
  return z;
}

/** a smooth random surface with a flat shelf in one corner (seeded) */
function testSurface(w: number, h: number, dx: number, dy: number, seed: number): Float32Array {
  const rnd = prng(seed);
  const waves = Array.from({ length: 6 }, () => ({ a: 2 + rnd() * 20, kx: rnd() * 0.02, ky: rnd() * 0.02, p: rnd() * 6.28 }));
  const z = new Float32Array(w * h);
  for (let r = 0; r < h; r++)
    for (let c = 0; c < w; c++) {
      const x = c * dx;
      const y = r * dy;
      let v = -60 + 0.01 * x;
      for (const wv of waves) v += wv.a * Math.sin(wv.kx * x + wv.ky * y + wv.p);
      v += (rnd() - 0.5) * 0.5;
      z[r * w + c] = r < h / 4 && c < w / 4 ? -50 : v; // flat block: aspect undefined inside
    }
  return z;
}

function angleDiff(a: number, b: number): number {
  const d = Math.abs(a - b) % 360;
  return d > 180 ? 360 - d : d;
}

describe("slopeAspect (Horn 1981)", () => {
  it("a plane falling east at 1:1 has slope 45° and aspect 90°", () => {
    const { slopeDeg, aspectDeg } = slopeAspect(plane(5, 5, 10, 10, 1, 0), 5, 5, 10, 10);
    // (formula) atan(1) = 45°, descent due east
    expect(slopeDeg[12]).toBeCloseTo(45, 5);
    expect(aspectDeg[12]).toBeCloseTo(90, 5);
  });

  it("a 10 % plane falling south has slope 5.7106° and aspect 180°", () => {
    const { slopeDeg, aspectDeg } = slopeAspect(plane(5, 5, 20, 20, 0, 0.1), 5, 5, 20, 20);
    // (formula) atan(0.1) = 5.7106°
    expect(slopeDeg[12]).toBeCloseTo(5.7106, 4);
    expect(aspectDeg[12]).toBeCloseTo(180, 5);
  });

  it("keeps the gradient right on non-square cells", () => {
    // falls 0.1 m/m east and 0.2 m/m north-to-south with dx = 50, dy = 25
    const { slopeDeg, aspectDeg } = slopeAspect(plane(5, 5, 50, 25, 0.1, 0.2), 5, 5, 50, 25);
    // (formula) slope = atan(√(0.1² + 0.2²)) = 12.6044°; aspect = atan2(0.1, −0.2) → 153.4349°
    expect(slopeDeg[12]).toBeCloseTo(12.6044, 4);
    expect(aspectDeg[12]).toBeCloseTo(153.4349, 3);
  });

  it("gives slope 0 and aspect NaN (not 0) on a flat window", () => {
    const z = new Float32Array(25).fill(-12.5);
    const { slopeDeg, aspectDeg } = slopeAspect(z, 5, 5, 30, 30);
    // (formula) zero gradient: aspect undefined
    expect(slopeDeg[12]).toBe(0);
    expect(Number.isNaN(aspectDeg[12])).toBe(true);
  });

  it("turns the aspect clockwise from north for the four descent directions", () => {
    // (formula) descent north: dz/dy > 0 (rising southwards) → 0°; west: dz/dx > 0 → 270°
    expect(aspectFromGradient(0, 1)).toBe(0);
    expect(aspectFromGradient(-1, 0)).toBe(90);
    expect(aspectFromGradient(0, -1)).toBe(180);
    expect(aspectFromGradient(1, 0)).toBe(270);
    expect(aspectFromGradient(-1, 1)).toBeCloseTo(45, 10);
  });

  it("gives NaN at nodata and uses the centre value for missing neighbours", () => {
    const z = plane(4, 4, 10, 10, 1, 0);
    z[5] = NaN;
    const { slopeDeg, aspectDeg } = slopeAspect(z, 4, 4, 10, 10);
    expect(Number.isNaN(slopeDeg[5])).toBe(true);
    expect(Number.isNaN(aspectDeg[5])).toBe(true);
    // (formula) cell 6 (row 1, col 2, e = 80) has its west neighbour d (cell 5) missing, so d takes
    // e's value: a = g = 90, d = 80, c = f = i = 70 → dz/dx = (280 − (90 + 160 + 90))/80 = −0.75,
    // slope = atan(0.75) = 36.8699°
    expect(slopeDeg[6]).toBeCloseTo(36.8699, 3);
  });

  it("agrees with gdaldem slope (1e-4°) and aspect (0.1° where slope > 0.01°) on interior cells", () => {
    for (const [w, h, dx, dy, seed] of [
      [60, 45, 30, 30, 7],
      [50, 70, 50, 25, 11],
    ] as const) {
      const z = testSurface(w, h, dx, dy, seed);
      const ours = slopeAspect(z, w, h, dx, dy);
      // gdaldem's aspect takes the Horn differences without dividing by the cell sizes, i.e. it
      // assumes square cells; on non-square cells it is compared with our aspect for dx = dy, and
      // our non-square aspect is held to the formula in the test above
      const oursSquare = dx === dy ? ours : slopeAspect(z, w, h, dx, dx);
      const gSlope = gdaldem("slope", z, w, h, dx, dy);
      const gAspect = gdaldem("aspect", z, w, h, dx, dy);
      let compared = 0;
      let flats = 0;
      for (let r = 1; r < h - 1; r++)
        for (let c = 1; c < w - 1; c++) {
          const i = r * w + c;
          // (reference library) gdaldem slope, Horn by default
          expect(Math.abs(ours.slopeDeg[i] - gSlope[i])).toBeLessThan(1e-4);
          if (oursSquare.slopeDeg[i] > 0.01) {
            // (reference library) gdaldem aspect, compared around the circle
            expect(angleDiff(oursSquare.aspectDeg[i], gAspect[i])).toBeLessThan(0.1);
            compared++;
          } else if (ours.slopeDeg[i] === 0) {
            // flats compared explicitly: gdaldem writes −9999 where we write NaN
            expect(Number.isNaN(ours.aspectDeg[i])).toBe(true);
            expect(gAspect[i]).toBe(-9999);
            flats++;
          }
        }
      expect(compared).toBeGreaterThan((w - 2) * (h - 2) * 0.8);
      expect(flats).toBeGreaterThan(50);
    }
  });
});
