import { describe, expect, it } from "vitest";
import { previewRgba, quantise } from "./raster-display";

describe("quantise", () => {
  it("maps min to code 0 and max to the top value code, with nodata on its own code", () => {
    const q = quantise(Float32Array.from([-40, -20, NaN, 0]), "NaN", 8);
    expect(q.data[0]).toBe(0);
    expect(q.data[3]).toBe(254);
    expect(q.data[2]).toBe(255);
    // decoding gives the values back within half a step (formula: v = code × scale + offset)
    expect(q.data[1] * q.scale + q.offset).toBeCloseTo(-20, 0);
    expect(Math.abs(q.data[1] * q.scale + q.offset - -20)).toBeLessThanOrEqual(q.scale / 2 + 1e-9);
  });
  it("keeps 16-bit precision for small ranges", () => {
    const q = quantise(Float32Array.from([0, 0.001, 1]), "NaN", 16);
    expect(Math.abs(q.data[1] * q.scale + q.offset - 0.001)).toBeLessThanOrEqual(q.scale / 2 + 1e-12);
  });
});

describe("previewRgba", () => {
  it("samples down to the maximum side and leaves nodata transparent", () => {
    const w = 600, h = 300;
    const v = new Float32Array(w * h).map((_, i) => i % w);
    v[0] = NaN;
    const p = previewRgba(v, w, h, "NaN", { maxSide: 200 });
    expect([p.width, p.height]).toEqual([200, 100]);
    expect(p.rgba[3]).toBe(0);
    expect(p.rgba[7]).toBe(255);
  });
});
