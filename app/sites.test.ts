import { describe, expect, it } from "vitest";
import { generaliseSites } from "./sites";

describe("generaliseSites", () => {
  it("snaps to the centres of fixed cells and counts per cell", () => {
    const g = generaliseSites(
      [
        { x: 480_120, y: 5_020_980 },
        { x: 480_990, y: 5_020_010 },
        { x: 480_500, y: 5_020_500 },
        { x: 481_001, y: 5_020_500 },
      ],
      1000,
      1,
    );
    expect(g.cells).toContainEqual({ x: 480_500, y: 5_020_500, count: 3 });
    expect(g.cells).toContainEqual({ x: 481_500, y: 5_020_500, count: 1 });
    expect(g.suppressed).toBe(0);
  });

  it("never returns an input position, and suppresses small counts", () => {
    const pts = [
      { x: 100.3, y: 200.7 },
      { x: 150.1, y: 210.2 },
      { x: 5_000.5, y: 5_000.5 },
    ];
    const g = generaliseSites(pts, 1000, 2);
    expect(g.cells).toEqual([{ x: 500, y: 500, count: 2 }]);
    expect(g.suppressed).toBe(1);
    for (const c of g.cells) for (const p of pts) expect(c.x === p.x && c.y === p.y).toBe(false);
  });

  it("handles negative coordinates with the same fixed grid", () => {
    expect(generaliseSites([{ x: -10, y: -990 }], 1000, 1).cells).toEqual([{ x: -500, y: -500, count: 1 }]);
  });
});
