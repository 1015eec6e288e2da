import { describe, expect, it } from "vitest";
import { spec } from "./test-utils";
import { surfaceBelowCover, toElevationMsl } from "./vertical-datum";

describe("vertical datum and sign", () => {
  const g = { spec: spec(3, 3), data: Float32Array.from([10, 20, 30, 0, 5, NaN, 1, 2, 3]), nodata: Uint8Array.from([0, 0, 0, 0, 0, 1, 0, 0, 0]) };

  it("turns depths below a chart datum into elevations relative to present MSL", () => {
    // (formula) elevation = −depth + datum height above MSL: 10 m below a datum 2.5 m under MSL → −12.5 m
    const e = toElevationMsl(g, { sign: "depth", datumAboveMslM: -2.5, name: "chart datum (LAT)" });
    expect(e.data[0]).toBe(-12.5);
    expect(e.data[3]).toBe(-2.5);
    expect(e.nodata[5]).toBe(1);
    const up = toElevationMsl(g, { sign: "elevation", datumAboveMslM: 0, name: "MSL" });
    expect(up.data[1]).toBe(20);
    const off = new Float32Array(9).fill(-3);
    off[4] = NaN; // offset unknown here → nodata
    const grid = toElevationMsl(g, { sign: "depth", datumAboveMslM: off, name: "LAT (grid)" });
    expect(grid.data[2]).toBe(-33);
    expect(grid.nodata[4]).toBe(1);
    expect(() => toElevationMsl(g, { sign: "depth", datumAboveMslM: NaN, name: "x" })).toThrow(/datum offset/);
    expect(() => toElevationMsl(g, { sign: "up" as never, datumAboveMslM: 0, name: "x" })).toThrow(/"depth" \(positive down\)/);
  });

  it("puts the palaeo-surface below its cover: −40.0 m under 2.0 m → −42.0 m; no thickness = unassessed", () => {
    // (formula) check-values.md
    const seabed = { spec: spec(3, 3), data: new Float32Array(9).fill(-40), nodata: new Uint8Array(9) };
    const t = new Float32Array(9).fill(2);
    t[8] = NaN;
    const s = surfaceBelowCover(seabed, t);
    expect(s.data[0]).toBe(-42);
    expect(s.nodata[8]).toBe(1);
    t[3] = -1;
    expect(() => surfaceBelowCover(seabed, t)).toThrow(/negative \(-1 m\) at row 1, column 0/);
  });
});
