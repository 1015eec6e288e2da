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

  it("marks the cells whose centres lie inside a dredging area, holes left out, and counts each cell once", () => {
    // A square from x 1100–1200, y 1800–1900: centres 1105…1195 × 1895…1805 → 10 × 10 = 100 cells;
    // a hole 1140–1160 × 1840–1860 holds centres 1145, 1155 × 1855, 1845 → 4 cells out. 96 inside.
    // (Geometry of the cell centres, worked by hand.)
    const square = [[1100, 1800], [1200, 1800], [1200, 1900], [1100, 1900], [1100, 1800]];
    const hole = [[1140, 1840], [1160, 1840], [1160, 1860], [1140, 1860], [1140, 1840]];
    const e = searchEffortMask(grid, { lines: [], corridorM: 0, cores: [], radiusM: 0, areas: [[square, hole]] });
    expect(e.areaCells).toBe(96);
    expect(e.cells).toBe(96);
    expect(e.mask[(2000 - 1895 - 5) / 10 * 20 + (1105 - 1005) / 10]).toBe(1); // row 10, column 10: inside
    expect(e.mask[14 * 20 + 14]).toBe(0); // centre (1145, 1855): in the hole
    // A core inside the area adds nothing new to the mask, though both sources count it.
    const both = searchEffortMask(grid, { lines: [], corridorM: 0, cores: [[1105, 1895]], radiusM: 0, areas: [[square, hole]] });
    expect(both.coreCells).toBe(1);
    expect(both.areaCells).toBe(96);
    expect(both.cells).toBe(96);
    // An area wholly off the grid marks nothing.
    expect(searchEffortMask(grid, { lines: [], corridorM: 0, cores: [], radiusM: 0, areas: [[[[0, 0], [50, 0], [50, 50], [0, 0]]]] }).cells).toBe(0);
  });
});
