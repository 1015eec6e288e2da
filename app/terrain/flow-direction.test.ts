import { describe, expect, it } from "vitest";
import { downstreamIndex, flowDirectionD8 } from "./flow-direction";
import { D8_DCOL, D8_DROW, D8_NODATA, D8_OUTLET, D8_PIT, d8Distances } from "./grid";
import { gridFromRows, prng, randomTerrain } from "./test-utils";

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

  it("equals a plain per-cell reference (drop ÷ distance, first steepest in code order) on random grids (formula)", () => {
    for (let seed = 1; seed <= 20; seed++) {
      const rnd = prng(500 + seed);
      const w = 3 + Math.floor(rnd() * 25);
      const h = 3 + Math.floor(rnd() * 25);
      const g = randomTerrain(seed, w, h, { nodataFraction: seed % 3 ? 0.1 : 0, cellSizeX: 30, cellSizeY: seed % 2 ? 30 : 20, quantum: seed % 2 ? 0.5 : 2 });
      const outlets = new Uint8Array(w * h);
      for (let i = 0; i < w * h; i++) if (!g.nodata[i] && rnd() < 0.05) outlets[i] = 1;
      const dir = flowDirectionD8(g, outlets);
      const dist = d8Distances(g.spec);
      for (let r = 0; r < h; r++) {
        for (let c = 0; c < w; c++) {
          const i = r * w + c;
          let want: number = D8_PIT;
          if (g.nodata[i]) want = D8_NODATA;
          else if (outlets[i]) want = D8_OUTLET;
          else {
            let best = 0;
            for (let k = 0; k < 8; k++) {
              const rr = r + D8_DROW[k];
              const cc = c + D8_DCOL[k];
              if (rr < 0 || rr >= h || cc < 0 || cc >= w || g.nodata[rr * w + cc]) continue;
              const grad = (g.data[i] - g.data[rr * w + cc]) * (1 / dist[k]);
              if (grad > best) {
                best = grad;
                want = k;
              }
            }
          }
          expect(dir[i], `seed ${seed} cell ${i}`).toBe(want);
        }
      }
    }
  });
});
