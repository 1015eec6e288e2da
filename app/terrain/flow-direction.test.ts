import { describe, expect, it } from "vitest";
import { downstreamIndex, flowDirectionD8 } from "./flow-direction";
import { D8_NODATA, D8_OUTLET, D8_PIT } from "./grid";
import { gridFromRows } from "./test-utils";

const H = 20; // "others higher"

describe("flowDirectionD8 — O'Callaghan & Mark (1984); Jenson & Domingue (1988)", () => {
  it("divides diagonal drops by √2: centre 10, east 7, south-east 6 → east", () => {
    // (formula) check-values.md: drop E = 3.000, drop SE = 4/√2 = 2.828 → flows east; forgetting √2 picks SE.
    const g = gridFromRows(
      [
        [H, H, H],
        [H, 10, 7],
        [H, H, 6],
      ],
      1,
    );
    const dir = flowDirectionD8(g, new Uint8Array(9));
    expect(dir[4]).toBe(0); // (formula) east
  });

  it("uses dx, dy and √(dx²+dy²) on non-square cells: dx 50, dy 25 → south", () => {
    // (formula) check-values.md: E 3/50 = 0.060, S 2/25 = 0.080, SE 4/√(50²+25²) = 0.0716 → south;
    // an implementation assuming square cells picks south-east.
    const g = gridFromRows(
      [
        [H, H, H],
        [H, 10, 7],
        [H, 8, 6],
      ],
      50,
      25,
    );
    const dir = flowDirectionD8(g, new Uint8Array(9));
    expect(dir[4]).toBe(2); // (formula) south
    // (formula) the same heights on square cells: E 3 > SE 4/√2 = 2.83 > S 2 → east
    const sq = flowDirectionD8({ ...g, spec: { ...g.spec, cellSizeX: 25, cellSizeY: 25 } }, new Uint8Array(9));
    expect(sq[4]).toBe(0);
  });

  it("marks outlets, pits and nodata, and never drains into nodata or off the grid", () => {
    const g = gridFromRows([
      [5, 5, 5, 5],
      [5, 1, NaN, 5],
      [5, 5, 5, 0],
    ]);
    const outlets = new Uint8Array(12);
    outlets[11] = 1;
    const dir = flowDirectionD8(g, outlets);
    expect(dir[5]).toBe(D8_PIT); // every neighbour of the 1 is higher or nodata
    expect(dir[6]).toBe(D8_NODATA);
    expect(dir[11]).toBe(D8_OUTLET);
    expect(dir[7]).toBe(2); // the 5 at row 1, col 3 drains south to the 0, not into nodata
    expect(dir[10]).toBe(0); // the 5 at row 2, col 2 drains east
    expect(dir[0]).toBe(1); // the corner 5 drains to the pit 1 (south-east)
    expect(downstreamIndex(4, 7, dir[7])).toBe(11);
    expect(downstreamIndex(4, 5, dir[5])).toBe(-1);
  });
});
