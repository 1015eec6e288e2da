import { describe, expect, it } from "vitest";
import { traceBoundaries, traceStreams } from "./vectorise";

describe("traceBoundaries (marching squares)", () => {
  it("draws one closed ring midway around a single inside cell", () => {
    const g = new Uint8Array(9);
    g[4] = 1; // centre of 3×3
    const lines = traceBoundaries(g, 3, 3);
    expect(lines).toHaveLength(1);
    const pts = lines[0];
    // closed: first point repeated last; four edge midpoints around (1,1) (formula: centres ± 0.5)
    expect(pts.slice(0, 2)).toEqual(pts.slice(-2));
    const uniq = new Set<string>();
    for (let k = 0; k < pts.length; k += 2) uniq.add(`${pts[k]},${pts[k + 1]}`);
    expect([...uniq].sort()).toEqual(["0.5,1", "1,0.5", "1,1.5", "1.5,1"].sort());
  });

  it("separates two regions, and closes a region that touches the edge", () => {
    // 5×1: inside, outside, outside, inside, inside
    const lines = traceBoundaries(Uint8Array.of(1, 0, 0, 1, 1), 5, 1);
    expect(lines).toHaveLength(2);
    for (const l of lines) expect(l.slice(0, 2)).toEqual(l.slice(-2));
  });

  it("puts every segment between an inside and an outside cell", () => {
    const w = 12, h = 9;
    const g = new Uint8Array(w * h).map((_, i) => ((i * 7919) % 13 < 6 ? 1 : 0));
    const at = (c: number, r: number) => (c >= 0 && r >= 0 && c < w && r < h ? g[r * w + c] : 0);
    for (const l of traceBoundaries(g, w, h)) {
      for (let k = 0; k < l.length; k += 2) {
        const x = l[k], y = l[k + 1];
        // a midpoint on a horizontal edge lies between (floor x, y) and (ceil x, y); vertical likewise
        const [a, b] = Number.isInteger(x) ? [at(x, Math.floor(y)), at(x, Math.ceil(y))] : [at(Math.floor(x), y), at(Math.ceil(x), y)];
        expect(a).not.toBe(b);
      }
    }
  });
});

describe("traceStreams", () => {
  it("follows D8 directions and splits chains where the Strahler order changes", () => {
    // 4×3 grid; a first-order stream from (0,0) east to (2,0), joined at (2,0)... then flowing south
    const w = 4, h = 3;
    const E = 0, S = 2;
    const dir = new Uint8Array(w * h).fill(8);
    const order = new Uint8Array(w * h);
    dir[0] = E; order[0] = 1;
    dir[1] = E; order[1] = 1;
    dir[2] = S; order[2] = 2;
    dir[6] = S; order[6] = 2;
    order[10] = 0; // the sea below
    const chains = traceStreams(dir, order, w, h);
    const byOrder = Object.fromEntries(chains.map((c) => [c.order, c.line]));
    expect(byOrder[1]).toEqual([0, 0, 1, 0, 2, 0]);
    expect(byOrder[2]).toEqual([2, 0, 2, 1, 2, 2]);
  });
});
