import { describe, expect, it } from "vitest";
import { searchEffortMask } from "./search-effort";
import { ScoringInputError } from "./errors";

// A 20 × 20 grid of 10 m cells, top-left corner at (1000, 2000): cell centres at 1005, 1015, … and
// 1995, 1985, … .
const grid = { width: 20, height: 20, originX: 1000, originY: 2000, cellSizeX: 10, cellSizeY: 10 };

describe("searchEffortMask", () => {
  it("marks a survey line's corridor by cell centre", () => {
    // A horizontal line along y = 1900 (a cell edge: rows 9 and 10 have centres 5 m away).
    const e = searchEffortMask(grid, { lines: [[[990, 1900], [1210, 1900]]], corridorM: 12, cores: [], radiusM: 0 });
    // Centres within 12 m of the line: 5 m (rows 9, 10) — 15 m (rows 8, 11) are outside; 2 rows × 20 columns.
    // (Geometry of the cell centres, worked by hand.)
    expect(e.cells).toBe(40);
    expect(e.lineCells).toBe(40);
    for (let c = 0; c < 20; c++) {
      expect(e.mask[9 * 20 + c]).toBe(1);
      expect(e.mask[10 * 20 + c]).toBe(1);
      expect(e.mask[8 * 20 + c]).toBe(0);
    }
  });

  it("marks a core's disc and counts overlap once in the mask", () => {
    // A core at a cell centre (1105, 1895) with a 10 m radius: that centre and its four neighbours
    // (10 m away) are inside; the diagonals (14.1 m) are not.
    const e = searchEffortMask(grid, { lines: [], corridorM: 0, cores: [[1105, 1895]], radiusM: 10 });
    expect(e.coreCells).toBe(5);
    expect(e.cells).toBe(5);
    const both = searchEffortMask(grid, { lines: [[[990, 1895], [1210, 1895]]], corridorM: 0, cores: [[1105, 1895]], radiusM: 10 });
    // the line with zero corridor marks row 10's 20 centres; the core adds its cells above and below
    expect(both.lineCells).toBe(20);
    expect(both.coreCells).toBe(5);
    expect(both.cells).toBe(22);
  });

  it("ignores geometry outside the grid and refuses a negative corridor", () => {
    const e = searchEffortMask(grid, { lines: [[[0, 0], [10, 10]]], corridorM: 50, cores: [[5000, 5000]], radiusM: 100 });
    expect(e.cells).toBe(0);
    expect(() => searchEffortMask(grid, { lines: [], corridorM: -1, cores: [], radiusM: 0 })).toThrow(ScoringInputError);
  });
});
