import { describe, expect, it } from "vitest";
import { horizonEvidenceGrid, type HorizonEvidencePoint } from "./horizon-evidence.ts";
import { ScoringInputError } from "./errors.ts";
import { prng } from "../terrain/test-utils.ts";

describe("horizonEvidenceGrid", () => {
  it("marks the cells whose centres lie within the radius (hand-worked)", () => {
    // 5 × 4 grid of 100 m × 50 m cells, top-left corner (1000, 2000): centres x = 1050 … 1450,
    // y = 1975, 1925, 1875, 1825. A core at (1250, 1925) is the centre of (row 1, col 2).
    const grid = { width: 5, height: 4, cellSizeX: 100, cellSizeY: 50, originX: 1000, originY: 2000 };
    const g = horizonEvidenceGrid(grid, [{ x: 1250, y: 1925, state: "truncated" }], 100);
    // (formula) within 100 m: the cell itself (0), its row neighbours at 100 m (exactly the radius:
    // included), the cells above and below at 50 m, the two rows below at 100 m (row 3, col 2);
    // the diagonal neighbours at √(100² + 50²) = 111.8 m are outside.
    // prettier-ignore
    expect(Array.from(g)).toEqual([
      0, 0, 2, 0, 0,
      0, 2, 2, 2, 0,
      0, 0, 2, 0, 0,
      0, 0, 2, 0, 0,
    ]);
  });

  it("lets the nearest point win, and an exact tie go to intact whatever the order", () => {
    const grid = { width: 4, height: 1, cellSizeX: 10, cellSizeY: 10, originX: 0, originY: 10 };
    // centres x = 5, 15, 25, 35 on y = 5. Intact at x = 0, truncated at x = 30.
    // (formula) distances: cell 0: 5 | 25; cell 1: 15 | 15 (tie → intact); cell 2: 25 | 5; cell 3: 35 | 5
    const pts: HorizonEvidencePoint[] = [
      { x: 0, y: 5, state: "intact" },
      { x: 30, y: 5, state: "truncated" },
    ];
    expect(Array.from(horizonEvidenceGrid(grid, pts, 40))).toEqual([1, 1, 2, 2]);
    expect(Array.from(horizonEvidenceGrid(grid, [...pts].reverse(), 40))).toEqual([1, 1, 2, 2]);
    // (formula) radius 12: cell 1 is 15 m from both → no evidence
    expect(Array.from(horizonEvidenceGrid(grid, pts, 12))).toEqual([1, 0, 2, 2]);
  });

  it("equals brute force over every cell and point on random grids", () => {
    const rnd = prng(33);
    for (let trial = 0; trial < 10; trial++) {
      const width = 5 + Math.floor(rnd() * 25);
      const height = 5 + Math.floor(rnd() * 25);
      const grid = { width, height, cellSizeX: 20 + rnd() * 30, cellSizeY: 20 + rnd() * 30, originX: 500000, originY: 6000000 };
      const pts: HorizonEvidencePoint[] = Array.from({ length: 1 + Math.floor(rnd() * 8) }, () => ({
        // some points a little off the grid
        x: grid.originX + (rnd() * 1.2 - 0.1) * width * grid.cellSizeX,
        y: grid.originY - (rnd() * 1.2 - 0.1) * height * grid.cellSizeY,
        state: rnd() < 0.5 ? "intact" : "truncated",
      }));
      const radius = 30 + rnd() * 200;
      const g = horizonEvidenceGrid(grid, pts, radius);
      for (let r = 0; r < height; r++)
        for (let c = 0; c < width; c++) {
          const cx = grid.originX + (c + 0.5) * grid.cellSizeX;
          const cy = grid.originY - (r + 0.5) * grid.cellSizeY;
          let bestD = Infinity;
          let code = 0;
          for (const p of pts) {
            const d = Math.hypot(cx - p.x, cy - p.y);
            if (d > radius) continue;
            const k = p.state === "intact" ? 1 : 2;
            if (d < bestD || (d === bestD && k === 1)) {
              bestD = d;
              code = k;
            }
          }
          expect(g[r * width + c]).toBe(code);
        }
    }
  });

  it("refuses points without coordinates and a negative radius", () => {
    const grid = { width: 2, height: 2, cellSizeX: 10, cellSizeY: 10, originX: 0, originY: 20 };
    expect(() => horizonEvidenceGrid(grid, [{ x: NaN, y: 1, state: "intact" }], 10)).toThrow(/Evidence point 1 has no finite coordinates/);
    expect(() => horizonEvidenceGrid(grid, [], -1)).toThrow(ScoringInputError);
    expect(Array.from(horizonEvidenceGrid(grid, [], 100))).toEqual([0, 0, 0, 0]);
  });
});
