import { describe, expect, it } from "vitest";
import { distanceToNearestLine, parseSurveyLinesCsv, parseSurveyLinesGeoJson, rasteriseLines } from "./survey-lines.ts";
import { TerrainInputError, type GridSpec } from "./grid.ts";
import { prng } from "./test-utils.ts";

const spec: GridSpec = { width: 20, height: 10, originX: 1000, originY: 5000, cellSizeX: 10, cellSizeY: 5, crs: null };

/** distance from point (px,py) to segment (ax,ay)-(bx,by) */
function segDist(px: number, py: number, ax: number, ay: number, bx: number, by: number): number {
  const vx = bx - ax, vy = by - ay;
  const t = Math.max(0, Math.min(1, ((px - ax) * vx + (py - ay) * vy) / (vx * vx + vy * vy || 1)));
  return Math.hypot(px - ax - t * vx, py - ay - t * vy);
}

describe("rasteriseLines", () => {
  it("marks the cells an east–west line crosses, and nothing else", () => {
    const m = rasteriseLines([{ id: "E1", x: [1015, 1175], y: [4987, 4987] }], spec);
    // (formula) y = 4987 is row floor((5000 − 4987)/5) = 2; x 1015–1175 → columns 1–17
    for (let c = 0; c < 20; c++) expect(m[2 * 20 + c]).toBe(c >= 1 && c <= 17 ? 1 : 0);
    expect(m.reduce((a, b) => a + b, 0)).toBe(17);
  });

  it("marks every cell a random segment passes through (checked by fine sampling)", () => {
    const rnd = prng(1987);
    for (let k = 0; k < 30; k++) {
      const x0 = 1000 + rnd() * 200, y0 = 4950 + rnd() * 50, x1 = 1000 + rnd() * 200, y1 = 4950 + rnd() * 50;
      const m = rasteriseLines([{ id: "R", x: [x0, x1], y: [y0, y1] }], spec);
      const want = new Uint8Array(200);
      for (let s = 0; s <= 20000; s++) {
        const t = s / 20000;
        const c = Math.floor((x0 + t * (x1 - x0) - 1000) / 10), r = Math.floor((5000 - (y0 + t * (y1 - y0))) / 5);
        if (c >= 0 && c < 20 && r >= 0 && r < 10) want[r * 20 + c] = 1;
      }
      // every sampled cell is marked; extra marks only where the segment clips a cell corner
      // more finely than the sampling (at most a few)
      let extra = 0;
      for (let i = 0; i < 200; i++) {
        if (want[i]) expect(m[i]).toBe(1);
        else if (m[i]) extra++;
      }
      expect(extra).toBeLessThanOrEqual(2);
    }
  });

  it("names the line and fix of a bad coordinate", () => {
    expect(() => rasteriseLines([{ id: "NE-7", x: [1000, NaN], y: [4990, 4990] }], spec)).toThrow(TerrainInputError);
    expect(() => rasteriseLines([{ id: "NE-7", x: [1000, NaN], y: [4990, 4990] }], spec)).toThrow(/NE-7, fix 2/);
  });
});

describe("distanceToNearestLine", () => {
  it("is within half a cell diagonal of the true distance to the line", () => {
    const line = { id: "D", x: [1003, 1190, 1120], y: [4997, 4960, 4951] };
    const d = distanceToNearestLine([line], spec);
    const half = Math.hypot(5, 2.5);
    for (let r = 0; r < 10; r++)
      for (let c = 0; c < 20; c++) {
        const px = 1005 + c * 10, py = 4997.5 - r * 5;
        const truth = Math.min(segDist(px, py, 1003, 4997, 1190, 4960), segDist(px, py, 1190, 4960, 1120, 4951));
        // (formula) distance to crossed-cell centres differs from the distance to the line by at
        // most half a cell diagonal
        expect(Math.abs(d[r * 20 + c] - truth)).toBeLessThanOrEqual(half + 1e-6);
      }
  });

  it("is +Infinity everywhere when no line touches the grid", () => {
    const d = distanceToNearestLine([{ id: "far", x: [0, 10], y: [0, 10] }], spec);
    expect(d.every((v) => v === Infinity)).toBe(true);
  });
});

describe("parseSurveyLinesCsv / parseSurveyLinesGeoJson", () => {
  it("groups fixes by line, sorts by fix, and names a bad cell", () => {
    const lines = parseSurveyLinesCsv("line,fix,x,y\nSW-2,2,1020,4990\nSW-2,1,1010,4990\nSW-3,1,1000,4980\n");
    expect(lines.map((l) => l.id)).toEqual(["SW-2", "SW-3"]);
    expect(Array.from(lines[0].x)).toEqual([1010, 1020]);
    expect(() => parseSurveyLinesCsv("line,x,y\nA,1,zz\n")).toThrow(/row 2, column "y"/);
  });

  it("reads LineString and MultiLineString features and refuses points", () => {
    const gj = JSON.stringify({
      type: "FeatureCollection",
      features: [
        { type: "Feature", properties: { line: "NE-4" }, geometry: { type: "LineString", coordinates: [[1000, 4990], [1100, 4990]] } },
        { type: "Feature", properties: {}, geometry: { type: "MultiLineString", coordinates: [[[1000, 4960], [1050, 4960]], [[1100, 4960], [1150, 4960]]] } },
      ],
    });
    const lines = parseSurveyLinesGeoJson(gj);
    expect(lines.map((l) => l.id)).toEqual(["NE-4", "2#1", "2#2"]);
    expect(() => parseSurveyLinesGeoJson(JSON.stringify({ type: "Point", coordinates: [1, 2] }))).toThrow(/is a Point/);
  });
});
