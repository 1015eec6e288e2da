import { describe, expect, it } from "vitest";
import { polygonMask, polygonsOfGeometries } from "./polygon-mask";
import { ScoringInputError } from "./errors";

// 6 × 4 grid of 10 m cells, west edge x = 0, north edge y = 40: centres at x = 5, 15, …, 55 and y = 35, 25, 15, 5.
const grid = { width: 6, height: 4, originX: 0, originY: 40, cellSizeX: 10, cellSizeY: 10 };
const rows = (m: Uint8Array) => Array.from({ length: grid.height }, (_, r) => Array.from(m.subarray(r * grid.width, (r + 1) * grid.width)).join(""));

describe("polygonMask", () => {
  it("marks the cells whose centres lie inside a rectangle (common practice: centre rule)", () => {
    // x 10–40, y 10–30 contains centres x = 15, 25, 35 and y = 25, 15
    const m = polygonMask(grid, [[[[10, 10], [40, 10], [40, 30], [10, 30], [10, 10]]]]);
    expect(rows(m)).toEqual(["000000", "011100", "011100", "000000"]);
  });

  it("leaves a hole out by the even–odd rule and ORs separate polygons", () => {
    const outer = [[0, 0], [60, 0], [60, 40], [0, 40]];
    const hole = [[20, 10], [40, 10], [40, 30], [20, 30]];
    const m = polygonMask(grid, [[outer, hole]]);
    expect(rows(m)).toEqual(["111111", "110011", "110011", "111111"]);
    const two = polygonMask(grid, [[[[0, 30], [10, 30], [10, 40], [0, 40]]], [[[50, 0], [60, 0], [60, 10], [50, 10]]]]);
    expect(rows(two)).toEqual(["100000", "000000", "000000", "000001"]);
  });

  it("gives a cell on a shared edge to one polygon only (half-open rule)", () => {
    // two rectangles meeting at x = 25, on the centres of column 2: exactly one of them takes each cell
    const left = [[0, 0], [25, 0], [25, 40], [0, 40]];
    const right = [[25, 0], [60, 0], [60, 40], [25, 40]];
    const a = polygonMask(grid, [[left]]);
    const b = polygonMask(grid, [[right]]);
    for (let i = 0; i < a.length; i++) expect(a[i] + b[i]).toBe(1);
  });

  it("reads Polygon and MultiPolygon geometries and skips others", () => {
    const { polygons, skipped } = polygonsOfGeometries([
      { type: "Polygon", coordinates: [[[0, 0], [1, 0], [1, 1], [0, 0]]] },
      { type: "MultiPolygon", coordinates: [[[[0, 0], [1, 0], [1, 1], [0, 0]]], [[[2, 2], [3, 2], [3, 3], [2, 2]]]] },
      { type: "Point", coordinates: [0, 0] },
    ]);
    expect(polygons).toHaveLength(3);
    expect(skipped).toBe(1);
  });

  it("refuses a ring with fewer than 3 vertices", () => {
    expect(() => polygonMask(grid, [[[[0, 0], [1, 1]]]])).toThrow(ScoringInputError);
  });
});
