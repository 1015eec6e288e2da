import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import path from "node:path";
import { displayCopy, displayGridOf, LAYER_REDUCTION, previewRgba, quantise, reduceToDisplay, reductionOf } from "./raster-display";

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

describe("the display grid", () => {
  it("takes the smallest whole step that brings the longer side within the maximum", () => {
    const g = { width: 4096, height: 3000, originX: 100, originY: 900, cellSizeX: 25, cellSizeY: 20 };
    // ceil(4096 / 1024) = 4; ceil(3000 / 4) = 750 (worked by hand)
    expect(displayGridOf(g, 1024)).toEqual({ width: 1024, height: 750, originX: 100, originY: 900, cellSizeX: 100, cellSizeY: 80, step: 4 });
    // 1025 cells need a step of 2: ceil(1025 / 2) = 513, the last display column covers one cell
    expect(displayGridOf({ ...g, width: 1025, height: 10 }, 1024)).toMatchObject({ width: 513, height: 5, step: 2 });
    expect(displayGridOf({ ...g, width: 512, height: 512 }, 1024)).toMatchObject({ width: 512, height: 512, step: 1, cellSizeX: 25 });
  });

  it("reduces by each layer's rule: mean and max without nodata, majority with ties to the smaller, aspect by unit vectors", () => {
    // 3 × 3 grid, step 2 → 2 × 2 display cells: blocks {0,1,3,4}, {2,5}, {6,7}, {8} (worked by hand)
    const v = Float32Array.from([1, 2, 9, NaN, 5, 7, 4, 4, NaN]);
    expect(Array.from(reduceToDisplay(v, 3, 3, 2, "mean"))).toEqual([Math.fround(8 / 3), 8, 4, NaN]);
    expect(Array.from(reduceToDisplay(v, 3, 3, 2, "max"))).toEqual([5, 9, 4, NaN]);
    const classes = Float32Array.from([1, 0, 3, 0, 1, 3, 2, 2, 255]);
    // {1,0,0,1} ties 0/1 → 0; {3,3} → 3; {2,2} → 2; {255} is nodata → NaN
    expect(Array.from(reduceToDisplay(classes, 3, 3, 2, "majority", 255))).toEqual([0, 3, 2, NaN]);
    // codes that are not small whole numbers take the sorting path, by the same rule
    expect(Array.from(reduceToDisplay(Float32Array.from([0.5, 2, 2, 0.5]), 2, 2, 2, "majority"))).toEqual([0.5]);
    expect(Array.from(reduceToDisplay(Float32Array.from([300, 1, 300, 2]), 2, 2, 2, "majority"))).toEqual([300]);
    expect(Array.from(reduceToDisplay(Float32Array.from([1, 1, 300, 2]), 2, 2, 2, "majority"))).toEqual([1]); // counted, then sorted
    // aspect: 350° and 10° point north (0°), not south (the plain mean, 180°)
    const a = reduceToDisplay(Float32Array.from([350, 10, 80, 100]), 2, 2, 2, "aspect");
    // unit vectors summed: x = cos 350 + cos 10 + cos 80 + cos 100 = 2 cos 10; y = sin 350 + sin 10 +
    // sin 80 + sin 100 = 2 sin 80 = 2 cos 10 → atan2(y, x) = 45° (worked by hand)
    expect(a[0]).toBeCloseTo(45, 4);
    expect(Array.from(reduceToDisplay(Float32Array.from([0, 180]), 2, 1, 2, "aspect"))).toEqual([NaN]); // opposite directions cancel
  });

  it("leaves a grid within the maximum exactly as it was (step 1): the same codes as before reduction existed", () => {
    const v = Float32Array.from([-40, -20, NaN, 0]);
    const d = displayCopy(v, 2, 2, 1, "slope", 8);
    const q = quantise(v, "NaN", 8);
    expect(Array.from(d.data)).toEqual(Array.from(q.data));
    expect([d.width, d.height, d.scale, d.offset]).toEqual([2, 2, q.scale, q.offset]);
  });

  it("names the same reduction for every layer as docs/layers.md", () => {
    const doc = readFileSync(path.resolve(import.meta.dirname, "../docs/layers.md"), "utf8");
    let rows = 0;
    for (const line of doc.split("\n")) {
      const m = /^\| `([a-z_]+)` \|[^|]*\|[^|]*\|[^|]*\| ([^|]+) \|/.exec(line);
      if (!m || !m[2].trim()) continue;
      const said = m[2].trim();
      const expected = said.startsWith("mean of unit vectors") ? "aspect" : said;
      expect(reductionOf(m[1]), m[1]).toBe(expected);
      rows++;
    }
    expect(rows).toBeGreaterThan(30);
    for (const name of Object.keys(LAYER_REDUCTION)) expect(doc, name).toContain(`| \`${name}\` |`);
  });
});
