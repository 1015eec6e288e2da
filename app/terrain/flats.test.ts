import { describe, expect, it } from "vitest";
import { resolveFlats } from "./flats";
import { flowAccumulation } from "./flow-accumulation";
import { downstreamIndex, flowDirectionD8 } from "./flow-direction";
import { D8_DROW, D8_PIT } from "./grid";
import { gridFromRows } from "./test-utils";

describe("resolveFlats — Barnes, Lehman & Mulla (2014) flats", () => {
  // A flat valley floor 9 rows × 21 columns at 1 m, ridges of 5 m on north and south, a wall of 5 m at
  // the west end, and one outlet cell (0 m) in the middle of the east end.
  const W = 23;
  const Hh = 11;
  const rows: number[][] = [];
  for (let r = 0; r < Hh; r++) {
    const row: number[] = [];
    for (let c = 0; c < W; c++) row.push(r === 0 || r === Hh - 1 || c === 0 || c === W - 1 ? 5 : 1);
    rows.push(row);
  }
  rows[5][W - 1] = 0;
  const g = gridFromRows(rows);
  const outlets = new Uint8Array(W * Hh);
  outlets[5 * W + W - 1] = 1;

  it("gives every flat cell a direction and drains the whole flat to the outlet without cycles", () => {
    const d8 = flowDirectionD8(g, outlets);
    const flatCells = Array.from(d8).filter((d) => d === D8_PIT).length;
    expect(flatCells).toBeGreaterThan(9 * 21 - 5); // the floor is flat: almost no cell has a lower neighbour
    const res = resolveFlats(g, d8);
    expect(res.unresolvedCount).toBe(0);
    expect(res.resolvedCount).toBe(flatCells);
    const acc = flowAccumulation(g.spec, res.directions, g.nodata).upstreamCells;
    // (formula) every cell of the valley, floor and ridges alike, ends at the single outlet
    expect(acc[5 * W + W - 1] + 1).toBe(W * Hh);
  });

  it("drains away from higher terrain: floor cells beside a ridge flow away from it, the main channel runs down the middle", () => {
    const res = resolveFlats(g, flowDirectionD8(g, outlets));
    const dirs = res.directions;
    // cells next to the northern ridge (row 1) step south or stay; none steps north into row 0
    let awaySteps = 0;
    let total = 0;
    for (let c = 2; c < W - 4; c++) {
      const i = 1 * W + c;
      const dr = D8_DROW[dirs[i]];
      total++;
      if (dr > 0) awaySteps++;
      expect(dr).toBeGreaterThanOrEqual(0);
    }
    expect(awaySteps).toBe(total); // (paper) the away-from-higher gradient pushes them off the ridge
    const acc = flowAccumulation(g.spec, dirs, g.nodata).upstreamCells;
    // the centre row carries the flow: the cell before the outlet gathers nearly the whole floor
    const beforeOutlet = 5 * W + W - 2;
    expect(downstreamIndex(W, beforeOutlet, dirs[beforeOutlet])).toBe(5 * W + W - 1);
    expect(acc[beforeOutlet]).toBeGreaterThan(0.8 * 9 * 21);
  });
});
