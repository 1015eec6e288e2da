import { describe, expect, it } from "vitest";
import { shelterIndex } from "./shelter.ts";
import { ScoringInputError } from "./errors.ts";
import { prng } from "../terrain/test-utils.ts";

const N = 255;

describe("shelterIndex", () => {
  it("scores a bay head above a headland tip (hand-worked)", () => {
    // 100 m cells, radius 100 m → a 3×3 window. 0 land, 1 sea, 255 nodata.
    // prettier-ignore
    const lc = Uint8Array.from([
      0, 0, 0, N, 1, 0, 1,
      0, 0, 0, N, 1, 0, 1,
      0, 1, 0, N, 1, 1, 1,
      1, 1, 1, 1, 1, 1, 1,
    ]);
    const s = shelterIndex(lc, { width: 7, height: 4, cellSizeX: 100, cellSizeY: 100 }, 100);
    const at = (r: number, c: number) => s[r * 7 + c];
    // (formula) bay head (row 1, col 1): rows 0–2 × cols 0–2 hold one sea cell → 8/9
    expect(at(1, 1)).toBeCloseTo(8 / 9, 6);
    // (formula) headland tip (row 1, col 5): land only at (0,5) and (1,5) → 2/9
    expect(at(1, 5)).toBeCloseTo(2 / 9, 6);
    // (formula) next to nodata (row 1, col 2): column 3 left out, 6 valid cells, one sea → 5/6
    expect(at(1, 2)).toBeCloseTo(5 / 6, 6);
    // (formula) corner (0,0): window clipped to 2×2, all land → 1
    expect(at(0, 0)).toBe(1);
    // (formula) sea cell (3,3): rows 2–3 × cols 2–4, (2,3) nodata: 5 valid, land only at (2,2) → 1/5
    expect(at(3, 3)).toBeCloseTo(0.2, 6);
    expect(at(0, 3)).toBeNaN();
  });

  it("counts intertidal and lake cells as sheltering ground (hand-worked)", () => {
    // (formula) a 3×3 grid: 2 intertidal, 1 lake, 2 land, 4 sea → centre 5/9
    const lc = Uint8Array.from([2, 1, 1, 3, 0, 1, 2, 1, 0]);
    const s = shelterIndex(lc, { width: 3, height: 3, cellSizeX: 10, cellSizeY: 10 }, 10);
    expect(s[4]).toBeCloseTo(5 / 9, 6);
  });

  it("equals brute force on random grids with non-square cells", () => {
    const rnd = prng(91);
    const classes = [0, 0, 1, 1, 2, 3, N];
    for (let trial = 0; trial < 12; trial++) {
      const width = 3 + Math.floor(rnd() * 20);
      const height = 3 + Math.floor(rnd() * 20);
      const cellSizeX = [25, 50, 30][trial % 3];
      const cellSizeY = [25, 100, 45][trial % 3];
      const radiusM = 20 + rnd() * 300;
      const lc = new Uint8Array(width * height);
      for (let i = 0; i < lc.length; i++) lc[i] = classes[Math.floor(rnd() * classes.length)];
      const s = shelterIndex(lc, { width, height, cellSizeX, cellSizeY }, radiusM);
      // (formula) the definition, window by window
      const hx = Math.max(1, Math.round(radiusM / cellSizeX));
      const hy = Math.max(1, Math.round(radiusM / cellSizeY));
      for (let r = 0; r < height; r++)
        for (let c = 0; c < width; c++) {
          const i = r * width + c;
          if (lc[i] === N) {
            expect(s[i]).toBeNaN();
            continue;
          }
          let valid = 0;
          let land = 0;
          for (let rr = Math.max(0, r - hy); rr <= Math.min(height - 1, r + hy); rr++)
            for (let cc = Math.max(0, c - hx); cc <= Math.min(width - 1, c + hx); cc++) {
              const k = lc[rr * width + cc];
              if (k === N) continue;
              valid++;
              if (k !== 1) land++;
            }
          expect(s[i]).toBeCloseTo(land / valid, 6);
        }
    }
  });

  it("refuses a bad radius or a layer of the wrong size", () => {
    const g = { width: 2, height: 2, cellSizeX: 10, cellSizeY: 10 };
    expect(() => shelterIndex(new Uint8Array(4), g, 0)).toThrow(/shelter radius must be a positive/);
    expect(() => shelterIndex(new Uint8Array(4), g, NaN)).toThrow(ScoringInputError);
    expect(() => shelterIndex(new Uint8Array(3), g, 100)).toThrow(/has 3 cells; the grid has 4/);
  });
});
