import { describe, expect, it } from "vitest";
import { fillDepressions, nextUpF32 } from "./fill";
import { D8_DCOL, D8_DROW, type Grid, TerrainCancelled, TerrainInputError } from "./grid";
import { gridFromRows, randomTerrain } from "./test-utils";

function borderMask(w: number, h: number, nodata?: Uint8Array): Uint8Array {
  const m = new Uint8Array(w * h);
  for (let r = 0; r < h; r++)
    for (let c = 0; c < w; c++) if (r === 0 || c === 0 || r === h - 1 || c === w - 1) m[r * w + c] = nodata?.[r * w + c] ? 0 : 1;
  return m;
}

/** Every valid cell has a non-ascending 8-connected path to an outlet (checked by a BFS up from the outlets). */
function allDrain(g: Grid<Float32Array>, filled: Float32Array, outlets: Uint8Array): boolean {
  const { width: w, height: h } = g.spec;
  const n = w * h;
  const seen = new Uint8Array(n);
  const stack: number[] = [];
  for (let i = 0; i < n; i++) if (outlets[i]) (seen[i] = 1), stack.push(i);
  while (stack.length) {
    const c = stack.pop()!;
    const r = Math.floor(c / w);
    const col = c % w;
    for (let k = 0; k < 8; k++) {
      const rr = r + D8_DROW[k];
      const cc = col + D8_DCOL[k];
      if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      const m = rr * w + cc;
      if (seen[m] || g.nodata[m] || filled[m] < filled[c]) continue;
      seen[m] = 1;
      stack.push(m);
    }
  }
  for (let i = 0; i < n; i++) if (!g.nodata[i] && !seen[i]) return false;
  return true;
}

describe("fillDepressions — Barnes, Lehman & Mulla (2014) Priority-Flood", () => {
  it("fills the 7×7 check grid: 8 cells raised, volume 29 cell-units, the 7 and the outlet 5 unchanged", () => {
    // (formula) check-values.md, depression filling: border 9s with a 5 in the middle of the bottom edge,
    // a ring of 6s around 2 3 2 / 3 1 3 / 2 3 7.
    const g = gridFromRows([
      [9, 9, 9, 9, 9, 9, 9],
      [9, 6, 6, 6, 6, 6, 9],
      [9, 6, 2, 3, 2, 6, 9],
      [9, 6, 3, 1, 3, 6, 9],
      [9, 6, 2, 3, 7, 6, 9],
      [9, 6, 6, 6, 6, 6, 9],
      [9, 9, 9, 5, 9, 9, 9],
    ]);
    const { filledM, raisedCount } = fillDepressions(g, borderMask(7, 7));
    let raised = 0;
    let volume = 0;
    for (let i = 0; i < 49; i++) {
      if (filledM[i] > g.data[i]) raised++;
      volume += filledM[i] - g.data[i];
    }
    expect(raised).toBe(8); // (formula)
    expect(raisedCount).toBe(8);
    expect(volume).toBe(29); // (formula)
    expect(filledM[4 * 7 + 4]).toBe(7); // (formula) the 7 unchanged
    expect(filledM[6 * 7 + 3]).toBe(5); // (formula) the outlet 5 unchanged
    expect(filledM[3 * 7 + 3]).toBe(6); // the centre 1 rises to the ring's 6
  });

  it("on random grids: filled ≥ input, filling twice changes nothing, every cell drains (formula invariants)", () => {
    for (let seed = 1; seed <= 25; seed++) {
      const g = randomTerrain(seed, 17 + (seed % 7), 13 + (seed % 5), { nodataFraction: seed % 3 === 0 ? 0.08 : 0 });
      const outlets = borderMask(g.spec.width, g.spec.height, g.nodata);
      if (!outlets.some((v) => v)) continue;
      const a = fillDepressions(g, outlets);
      for (let i = 0; i < g.data.length; i++) {
        if (g.nodata[i]) expect(Number.isNaN(a.filledM[i])).toBe(true);
        else expect(a.filledM[i]).toBeGreaterThanOrEqual(g.data[i]); // (formula) filled ≥ input
      }
      const again = fillDepressions({ ...g, data: a.filledM }, a.outlets);
      expect(Array.from(again.filledM)).toEqual(Array.from(a.filledM)); // (formula) idempotent
      expect(again.raisedCount).toBe(0);
      expect(allDrain(g, a.filledM, a.outlets)).toBe(true);
    }
  });

  it("with ε every non-outlet cell has a strictly lower neighbour (formula invariant)", () => {
    for (let seed = 100; seed < 110; seed++) {
      const g = randomTerrain(seed, 15, 12);
      const outlets = borderMask(15, 12);
      const { filledM } = fillDepressions(g, outlets, { epsilon: true });
      for (let r = 0; r < 12; r++)
        for (let c = 0; c < 15; c++) {
          const i = r * 15 + c;
          if (outlets[i]) continue;
          let lower = false;
          for (let k = 0; k < 8; k++) {
            const m = (r + D8_DROW[k]) * 15 + c + D8_DCOL[k];
            if (filledM[m] < filledM[i]) lower = true;
          }
          expect(lower).toBe(true);
          expect(filledM[i]).toBeGreaterThanOrEqual(g.data[i]);
        }
    }
  });

  it("nextUpF32 steps to the next Float32", () => {
    expect(nextUpF32(1)).toBe(1 + 2 ** -23);
    expect(nextUpF32(-1)).toBe(-(1 - 2 ** -24));
    expect(nextUpF32(0)).toBeGreaterThan(0);
  });

  it("seeded only from the sea: a depression is filled to its spill level, land above is untouched", () => {
    const g = gridFromRows([
      [5, 5, 5, 5, 5],
      [5, 1, 2, 4, 5],
      [5, 3, 5, 3, 5],
      [5, 5, 5, 0, 5],
      [5, 5, 5, -9, 5],
    ]);
    const outlets = new Uint8Array(25);
    outlets[4 * 5 + 3] = 1; // one sea cell
    const { filledM } = fillDepressions(g, outlets);
    // (formula) 8-connected: the pit 1 drains through the 2 and diagonally over the 3 at row 2, col 3 to
    // the 0 and the sea, so it fills to 3 (a 4-connected fill would need the 4 and give 4).
    expect(filledM[1 * 5 + 1]).toBe(3);
    expect(filledM[1 * 5 + 2]).toBe(3);
    expect(filledM[1 * 5 + 3]).toBe(4); // above the pass: untouched
    expect(filledM[2 * 5 + 3]).toBe(3);
    expect(filledM[3 * 5 + 3]).toBe(0);
  });

  it("parts cut off from every outlet by nodata drain off their data edge", () => {
    const N = NaN;
    const g = gridFromRows([
      [3, 3, 3, N, 9, 9],
      [3, 1, 3, N, 9, 9],
      [3, 3, 3, N, 9, 0],
    ]);
    const outlets = new Uint8Array(18);
    outlets[2 * 6 + 5] = 1;
    const res = fillDepressions(g, outlets);
    expect(res.addedOutletCount).toBe(8); // the ring of 3s, all on the edge or next to nodata
    expect(res.outlets[1 * 6 + 1]).toBe(0); // the pit is neither
    expect(res.filledM[1 * 6 + 1]).toBe(3);
  });

  it("reports progress and stops with TerrainCancelled when asked", () => {
    const g = randomTerrain(4, 300, 300);
    const steps: number[] = [];
    fillDepressions(g, borderMask(300, 300), { onProgress: (f) => steps.push(f) });
    expect(steps[0]).toBe(0);
    expect(steps.at(-1)).toBe(1);
    expect(steps.length).toBeGreaterThan(2); // 90 000 cells: ticks every 65 536 cells processed
    for (let k = 1; k < steps.length; k++) expect(steps[k]).toBeGreaterThanOrEqual(steps[k - 1]);
    let calls = 0;
    expect(() => fillDepressions(g, borderMask(300, 300), { shouldCancel: () => ++calls > 1 })).toThrow(TerrainCancelled);
  });

  it("refuses a grid with no outlet", () => {
    const g = randomTerrain(3, 5, 5);
    expect(() => fillDepressions(g, new Uint8Array(25))).toThrow(TerrainInputError);
  });
});
