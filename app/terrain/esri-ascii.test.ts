import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { readEsriAscii, writeEsriAscii } from "./esri-ascii";
import { TerrainInputError } from "./grid";

const fixtures = path.resolve(path.dirname(new URL(import.meta.url).pathname), "../../fixtures/terrain");

describe("readEsriAscii", () => {
  it("reads the fixture: header, north-first rows, nodata, declared CRS", () => {
    const r = readEsriAscii(readFileSync(path.join(fixtures, "small-dem.asc"), "utf8"), 32631);
    expect(r.grid.spec).toMatchObject({ width: 6, height: 5, originX: 450000, originY: 10000, cellSizeX: 100, cellSizeY: 100 });
    expect(r.grid.spec.crs?.epsg).toBe(32631);
    expect(r.nodataCount).toBe(1);
    expect(r.grid.nodata[1 * 6 + 3]).toBe(1);
    expect(r.grid.data[0]).toBe(-10);
    expect(r.grid.data[5 * 6 - 1]).toBe(-34);
  });

  it("handles centre registration, dx/dy for non-square cells, NaN/Inf tokens, and round-trips", () => {
    const text = "NCOLS 3\nNROWS 3\nXLLCENTER 1000\nYLLCENTER 2000\nDX 50\nDY 25\n1 2 3\n4 nan 6\n7 8 inf\n";
    const r = readEsriAscii(text, 32631);
    expect(r.grid.spec).toMatchObject({ originX: 975, originY: 2000 - 12.5 + 75, cellSizeX: 50, cellSizeY: 25 });
    expect(r.nonFiniteCount).toBe(2);
    const again = readEsriAscii(writeEsriAscii(r.grid), 32631);
    expect(again.grid.spec).toEqual(r.grid.spec);
    expect(Array.from(again.grid.nodata)).toEqual(Array.from(r.grid.nodata));
  });

  it("names the line and cell of bad input", () => {
    const head = "ncols 3\nnrows 3\nxllcorner 0\nyllcorner 0\ncellsize 10\n";
    expect(() => readEsriAscii(head + "1 2 3\n4 x 6\n7 8 9\n", 32631)).toThrow(/line 7: "x" is not a number \(grid row 1, column 1\)/);
    expect(() => readEsriAscii(head + "1 2 3\n4 5 6\n", 32631)).toThrow(/6 values but ncols × nrows = 3 × 3 = 9/);
    expect(() => readEsriAscii(head + "1 2 3\n4 5 6\n7 8 9 10\n", 32631)).toThrow(/line 8: more values/);
    expect(() => readEsriAscii("ncols 3\nnrows 3\nxllcorner 0\nyllcorner 0\n1 2 3\n", 32631)).toThrow(/no "cellsize"/);
    expect(() => readEsriAscii("ncols 2\nnrows 2\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2\n3 4\n", 32631)).toThrow(/at least 3×3/);
    expect(() => readEsriAscii(head + "-1 -1 -1\n-1 -1 -1\n-1 -1 -1\n".replace(/-1/g, "-9999"), 32631)).not.toThrow();
    expect(() =>
      readEsriAscii(head.replace("cellsize 10\n", "cellsize 10\nnodata_value -9999\n") + "-9999 -9999 -9999\n-9999 -9999 -9999\n-9999 -9999 -9999\n", 32631),
    ).toThrow(/every one of the 9 cells is nodata/);
    expect(() => readEsriAscii(head + "1 2 3\n4 5 6\n7 8 9\n", 4326)).toThrow(TerrainInputError);
  });
});
