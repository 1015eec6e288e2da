import { describe, expect, it } from "vitest";
import { hillshade } from "./hillshade.ts";
import { prng } from "./test-utils.ts";
import { gdaldem } from "../../fixtures/terrain2/gdal-raw.ts";

describe("hillshade", () => {
  it("lights a flat surface at sin(altitude)", () => {
    const h = hillshade(new Float32Array(9).fill(-40), 3, 3, 10, 10);
    // (formula) 1 + round(254 · sin 45°) = 1 + 180 = 181
    expect(h[4]).toBe(181);
  });

  it("is brightest on a slope facing the light and darkest on one facing away", () => {
    // toward: plane rising to the south-east at 45°, so it faces (descends towards) the north-west
    const w = 5;
    const k = Math.SQRT1_2; // 1:1 overall, split between the two axes
    const toward = new Float32Array(25);
    const away = new Float32Array(25);
    for (let r = 0; r < 5; r++)
      for (let c = 0; c < 5; c++) {
        toward[r * w + c] = 10 * (k * c + k * r);
        away[r * w + c] = 10 * (-k * c - k * r);
      }
    // (formula) normal tilted 45° towards azimuth 315°, altitude 45° → normal · light = 1 → 255
    expect(hillshade(toward, 5, 5, 10, 10)[12]).toBe(255);
    // (formula) facing away at 45°: cos(90°) = 0 → fully shadowed = 1
    expect(hillshade(away, 5, 5, 10, 10)[12]).toBe(1);
  });

  it("writes 0 at nodata", () => {
    const z = new Float32Array(9).fill(-40);
    z[4] = NaN;
    expect(hillshade(z, 3, 3, 10, 10)[4]).toBe(0);
  });

  it("agrees with gdaldem hillshade within one grey level on interior cells", () => {
    const rnd = prng(315);
    const w = 40, h = 30, d = 25;
    const z = new Float32Array(w * h);
    for (let r = 0; r < h; r++) for (let c = 0; c < w; c++) z[r * w + c] = 30 * Math.sin(c / 6) * Math.cos(r / 5) + rnd() * 3;
    const ours = hillshade(z, w, h, d, d);
    const ref = gdaldem("hillshade", z, w, h, d, d);
    for (let r = 1; r < h - 1; r++)
      for (let c = 1; c < w - 1; c++)
        // (reference library) gdaldem hillshade, defaults azimuth 315°, altitude 45°, Horn gradient
        expect(Math.abs(ours[r * w + c] - ref[r * w + c]), `row ${r} col ${c}: ${ours[r * w + c]} vs ${ref[r * w + c]}`).toBeLessThanOrEqual(1);
  });
});
