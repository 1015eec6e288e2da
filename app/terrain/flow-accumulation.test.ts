import { describe, expect, it } from "vitest";
import { fillDepressions } from "./fill";
import { resolveFlats } from "./flats";
import { contributingAreaKm2, flowAccumulation } from "./flow-accumulation";
import { downstreamIndex, flowDirectionD8 } from "./flow-direction";
import { D8_PIT, type Grid } from "./grid";
import { gridFromRows, randomTerrain } from "./test-utils";

/** Outlets on the southern edge only (the "sea"), as a reconstruction would have. */
function southOutlets(g: Grid<Float32Array>): Uint8Array {
  const { width: w, height: h } = g.spec;
  const m = new Uint8Array(w * h);
  for (let c = 0; c < w; c++) if (!g.nodata[(h - 1) * w + c]) m[(h - 1) * w + c] = 1;
  return m;
}

function route(g: Grid<Float32Array>) {
  const fill = fillDepressions(g, southOutlets(g));
  const surface = { ...g, data: fill.filledM };
  const flat = resolveFlats(surface, flowDirectionD8(surface, fill.outlets));
  return { fill, dirs: flat.directions, flat };
}

describe("flowAccumulation — D8, topological order", () => {
  it("on random grids: outlet accumulation = cells draining to it, Σ(acc+1) over outlets = valid cells, never decreasing downstream", () => {
    for (let seed = 1; seed <= 30; seed++) {
      const g = randomTerrain(seed, 12 + (seed % 9), 10 + (seed % 6), {
        nodataFraction: seed % 4 === 0 ? 0.1 : 0,
        cellSizeX: 30,
        cellSizeY: seed % 2 ? 30 : 15,
      });
      const { dirs, flat } = route(g);
      expect(flat.unresolvedCount).toBe(0);
      const { width: w } = g.spec;
      const n = g.data.length;
      const { upstreamCells: acc, validCount, order } = flowAccumulation(g.spec, dirs, g.nodata);
      // order: every valid cell once, each before the cell it drains to
      const pos = new Int32Array(n).fill(-1);
      for (let k = 0; k < validCount; k++) {
        expect(pos[order[k]]).toBe(-1);
        expect(g.nodata[order[k]]).toBe(0);
        pos[order[k]] = k;
      }
      for (let i = 0; i < n; i++) {
        const d = g.nodata[i] ? -1 : downstreamIndex(w, i, dirs[i]);
        if (d >= 0) expect(pos[d]).toBeGreaterThan(pos[i]);
      }
      // brute force: walk down from every cell, counting at each cell passed and at the outlet
      const brute = new Int32Array(n);
      const reachedOutlet = new Int32Array(n);
      let valid = 0;
      for (let i = 0; i < n; i++) {
        if (g.nodata[i]) continue;
        valid++;
        let c = i;
        let steps = 0;
        for (;;) {
          const d = downstreamIndex(w, c, dirs[c]);
          if (d < 0) break;
          brute[d]++;
          c = d;
          expect(++steps).toBeLessThan(n); // no cycles
        }
        reachedOutlet[c]++;
      }
      expect(validCount).toBe(valid);
      let sum = 0;
      for (let i = 0; i < n; i++) {
        if (g.nodata[i]) {
          expect(acc[i]).toBe(-1);
          continue;
        }
        expect(acc[i]).toBe(brute[i]);
        const d = downstreamIndex(w, i, dirs[i]);
        if (d < 0) {
          expect(acc[i] + 1).toBe(reachedOutlet[i]); // (formula) outlet accumulation = cells draining to it (+ itself)
          sum += acc[i] + 1;
          expect(dirs[i]).not.toBe(D8_PIT);
        } else {
          expect(acc[d]).toBeGreaterThanOrEqual(acc[i] + 1); // (formula) never decreases downstream
        }
      }
      expect(sum).toBe(valid); // (formula) Σ over outlets of (accumulation + 1) = number of valid cells
    }
  });

  it("gives contributing area in km² including the cell itself", () => {
    const g = gridFromRows(
      [
        [4, 3, 2],
        [3, 2, 1],
        [2, 1, 0],
      ],
      100,
      50,
    );
    const outlets = new Uint8Array(9);
    outlets[8] = 1;
    const dirs = flowDirectionD8(g, outlets);
    const { upstreamCells } = flowAccumulation(g.spec, dirs, g.nodata);
    expect(upstreamCells[8]).toBe(8);
    const area = contributingAreaKm2(g.spec, upstreamCells);
    expect(area[8]).toBeCloseTo(9 * 0.005, 7); // Float32 layer // (formula) 9 cells × 100 m × 50 m
    expect(area[0]).toBeCloseTo(0.005, 7);
  });

  it("throws on directions with a cycle (an engine bug, not user input)", () => {
    const g = gridFromRows([
      [1, 1, 1],
      [1, 1, 1],
      [1, 1, 1],
    ]);
    const dirs = new Uint8Array(9).fill(8);
    dirs[0] = 0; // E
    dirs[1] = 4; // W
    expect(() => flowAccumulation(g.spec, dirs, g.nodata)).toThrow(/cycle/);
  });
});
