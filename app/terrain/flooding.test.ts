import { describe, expect, it } from "vitest";
import {
  CLASS_INTERTIDAL,
  CLASS_LAKE,
  CLASS_LAND,
  CLASS_NODATA,
  CLASS_SEA,
  classifyAtAge,
  oceanBoundaryMask,
  outletMask,
  spillElevation,
} from "./flooding";
import { D8_DCOL, D8_DROW, TerrainInputError } from "./grid";
import { gridFromRows, randomTerrain } from "./test-utils";

const level = (n: number, v: number) => new Float32Array(n).fill(v);

describe("spillElevation — Priority-Flood (Barnes, Lehman & Mulla 2014) from the open-ocean boundary", () => {
  it("holds the sea behind a one-cell diagonal barrier (4-connected flooding)", () => {
    // sea enters from the south; a diagonal line of 0 m cells separates a −10 m hollow from it
    const g = gridFromRows([
      [5, 5, 5, 5, 5],
      [5, -10, 0, 5, 5],
      [5, 0, -20, -20, -20],
      [-20, -20, -20, -20, -20],
    ]);
    const b = oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: ["south"] });
    const { spillM, basinLabel, basinFloorM, basinSpillM } = spillElevation(g, b);
    expect(spillM[1 * 5 + 1]).toBe(0); // (formula) the hollow fills from the sea only once the sea passes 0 m
    expect(spillM[3 * 5 + 0]).toBe(-20);
    expect(spillM[0]).toBe(5);
    const lab = basinLabel[1 * 5 + 1];
    expect(lab).toBeGreaterThan(0);
    expect(basinFloorM[lab]).toBe(-10);
    expect(basinSpillM[lab]).toBe(0);
    // at sea level −5 m the hollow is below sea level but cut off: a lake at its spill level 0 m
    const { classes, lakeLevelM } = classifyAtAge(g, spillElevation(g, b), level(20, -5));
    expect(classes[1 * 5 + 1]).toBe(CLASS_LAKE);
    expect(lakeLevelM[1 * 5 + 1]).toBe(0);
    expect(classes[3 * 5 + 2]).toBe(CLASS_SEA);
    expect(classes[1 * 5 + 2]).toBe(CLASS_LAND);
  });

  it("equals the brute-force minimax path elevation on random grids (formula)", () => {
    for (let seed = 1; seed <= 15; seed++) {
      const g = randomTerrain(seed, 11, 9, { nodataFraction: seed % 2 ? 0.12 : 0 });
      const sides = seed % 3 === 0 ? (["east", "south"] as const) : (["south"] as const);
      let b: Uint8Array;
      try {
        b = oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: [...sides] });
      } catch {
        continue;
      }
      const { spillM } = spillElevation(g, b);
      // Bellman-Ford relaxation of s(c) = max(z(c), min over 4-neighbours s(n)), seeds s = z on the boundary
      const n = g.data.length;
      const w = g.spec.width;
      const s = new Float64Array(n).fill(Infinity);
      for (let i = 0; i < n; i++) if (b[i]) s[i] = g.data[i];
      for (let changed = true; changed; ) {
        changed = false;
        for (let i = 0; i < n; i++) {
          if (g.nodata[i]) continue;
          const r = Math.floor(i / w);
          const c = i % w;
          for (let k = 0; k < 8; k += 2) {
            const rr = r + D8_DROW[k];
            const cc = c + D8_DCOL[k];
            if (rr < 0 || rr >= g.spec.height || cc < 0 || cc >= w) continue;
            const m = rr * w + cc;
            if (g.nodata[m]) continue;
            const v = Math.max(g.data[i], s[m]);
            if (v < s[i]) (s[i] = v), (changed = true);
          }
        }
      }
      for (let i = 0; i < n; i++) {
        if (g.nodata[i]) expect(Number.isNaN(spillM[i])).toBe(true);
        else expect(spillM[i]).toBe(s[i]);
      }
    }
  });

  it("classes sea, intertidal, lake and land with a tidal range", () => {
    const g = gridFromRows([
      [9, 9, 9, 9, 9],
      [9, -3, 4, 1, 9],
      [2, 1.5, 0.5, -0.5, -1],
      [-2, -2, -2, -2, -2],
    ]);
    const b = oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: ["south"] });
    const sp = spillElevation(g, b);
    // sea level 0, tidal range 2 m: sea ≤ −1, intertidal (−1, 1], lakes need a basin floor below 0
    const { classes, counts, lakeLevelM } = classifyAtAge(g, sp, level(20, 0), 2);
    // a lower tide-free sea (−2.5 m) leaves the hollow's floor (−3) below sea level: still a lake
    expect(classifyAtAge(g, sp, level(20, -2.5)).classes[1 * 5 + 1]).toBe(CLASS_LAKE);
    // at −4 m the basin floor is above the sea: dry land
    expect(classifyAtAge(g, sp, level(20, -4)).classes[1 * 5 + 1]).toBe(CLASS_LAND);
    expect(classes[2 * 5 + 4]).toBe(CLASS_SEA); // −1 ≤ L − R/2
    expect(classes[2 * 5 + 3]).toBe(CLASS_INTERTIDAL);
    expect(classes[2 * 5 + 2]).toBe(CLASS_INTERTIDAL);
    expect(classes[2 * 5 + 1]).toBe(CLASS_LAND); // 1.5 > L + R/2
    expect(classes[2 * 5 + 0]).toBe(CLASS_LAND);
    // the −3 hollow spills at 1.5 m, above high water, and its floor is below sea level: a lake at 1.5 m
    expect(classes[1 * 5 + 1]).toBe(CLASS_LAKE);
    expect(lakeLevelM[1 * 5 + 1]).toBe(1.5);
    expect(classes[1 * 5 + 2]).toBe(CLASS_LAND);
    expect(counts.sea + counts.intertidal + counts.lake + counts.land).toBe(20);
    // a tidal-range grid works the same
    const { classes: c2 } = classifyAtAge(g, sp, level(20, 0), new Float32Array(20).fill(2));
    expect(Array.from(c2)).toEqual(Array.from(classes));
    // outlets for routing: sea, lake and boundary cells
    const out = outletMask(classes, b);
    expect(out[1 * 5 + 1]).toBe(1);
    expect(out[2 * 5 + 3]).toBe(0);
    expect(out[3 * 5 + 0]).toBe(1);
  });

  it("refuses an open-ocean boundary that touches no valid cell", () => {
    const N = NaN;
    const g = gridFromRows([
      [1, 1, 1],
      [1, 1, 1],
      [N, N, N],
    ]);
    expect(() => oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: ["south"] })).toThrow(TerrainInputError);
    expect(() => oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: ["south"] })).toThrow(/south edge touches no valid cell/);
    // a line far outside the grid
    expect(() =>
      oceanBoundaryMask(g.spec, g.nodata, { kind: "line", points: [[0, 0], [10, 10]] }),
    ).toThrow(/line touches no valid cell/);
    // a line across the first row works
    const { originX: x, originY: y } = g.spec;
    const m = oceanBoundaryMask(g.spec, g.nodata, { kind: "line", points: [[x + 1, y - 5], [x + 29, y - 5]] });
    expect(Array.from(m)).toEqual([1, 1, 1, 0, 0, 0, 0, 0, 0]);
    const cls = classifyAtAge(g, spillElevation(g, m), level(9, 5)).classes;
    expect(cls[7]).toBe(CLASS_NODATA);
  });
});
