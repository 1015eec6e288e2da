import { describe, expect, it } from "vitest";
import { CellHeap, CellQueue, TerrainInputError, cellAreaKm2, cellCentre, makeElevationGrid, pointToCell, validateSpec } from "./grid";
import { prng, spec } from "./test-utils";

describe("grid model", () => {
  it("refuses grids smaller than 3×3 and bad cell sizes, naming the problem", () => {
    expect(() => validateSpec(spec(2, 5))).toThrow(/2×5 cells; it must be at least 3×3/);
    expect(() => validateSpec({ ...spec(5, 5), cellSizeX: 0 })).toThrow(/positive metres/);
    expect(() => validateSpec({ ...spec(5, 5), originX: NaN })).toThrow(TerrainInputError);
    expect(() => validateSpec(spec(3, 3))).not.toThrow();
  });

  it("makes NaN/±Inf cells nodata and counts them; refuses all-nodata", () => {
    const r = makeElevationGrid(spec(3, 3), [1, NaN, Infinity, -Infinity, 5, 6, 7, 8, 1e39]);
    expect(r.nonFiniteCount).toBe(4); // 1e39 overflows Float32
    expect(Array.from(r.grid.nodata)).toEqual([0, 1, 1, 1, 0, 0, 0, 0, 1]);
    expect(Number.isNaN(r.grid.data[1])).toBe(true);
    expect(() => makeElevationGrid(spec(3, 3), new Array(9).fill(NaN))).toThrow(/every one of the 9 cells is nodata/);
    expect(() => makeElevationGrid(spec(3, 3), [1, 2])).toThrow(/2 cells but the grid has 3×3 = 9/);
  });

  it("locates cells on non-square grids (north-up: rows go south)", () => {
    const s = { ...spec(4, 3), cellSizeX: 50, cellSizeY: 25 };
    expect(cellCentre(s, 0, 0)).toEqual([500025, 5999987.5]);
    expect(pointToCell(s, 500125, 5999950)).toEqual([2, 2.5]);
    expect(cellAreaKm2(s)).toBe(0.00125);
  });

  it("the typed-array heap pops in key order, ties in insertion order", () => {
    const r = prng(9);
    const h = new CellHeap(4);
    const items: [number, number][] = [];
    for (let i = 0; i < 500; i++) {
      const key = Math.floor(r() * 50);
      items.push([key, i]);
      h.push(i, key);
    }
    const expected = [...items].sort((a, b) => a[0] - b[0] || a[1] - b[1]).map((x) => x[1]);
    const got: number[] = [];
    while (h.size) got.push(h.pop());
    expect(got).toEqual(expected);
  });

  it("the ring-buffer queue is first in, first out across growth", () => {
    const q = new CellQueue(4);
    const out: number[] = [];
    for (let i = 0; i < 10; i++) {
      q.push(i);
      if (i % 3 === 0) out.push(q.shift());
    }
    while (q.size) out.push(q.shift());
    expect(out).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
  });
});
