import { describe, expect, it } from "vitest";
import {
  assetMitigation,
  DEFAULT_EXCLUSION_BUFFERS_M,
  exclusionZone,
  impactReach,
  mitigationForClass,
  mitigationZones,
  MITIGATION_MEASURES,
  planarBuffer,
  traceCellPolygons,
  type AreaOut,
  type Position,
} from "./zones";
import { areaM2, rasterisePolygon, type PlacedGrid } from "./block-figures";
import { classifyRaster, fixedClassification } from "./classification";

const X0 = 487_200;
const Y0 = 5_020_200;
const ringsOf = (g: AreaOut): Position[][] => (g.type === "Polygon" ? g.coordinates : g.coordinates.flat());

describe("planar buffers in the project CRS", () => {
  it("puts every vertex of a point buffered by 100 m at 100 m, and its area within 1 % of π r²", () => {
    const z = planarBuffer({ type: "Point", coordinates: [X0, Y0] }, 100);
    expect(z.type).toBe("Polygon");
    const ring = ringsOf(z)[0];
    expect(ring.length).toBeGreaterThanOrEqual(64);
    for (const [x, y] of ring) expect(Math.hypot(x - X0, y - Y0)).toBeCloseTo(100, 3); // the local frame is exact to 1e-5 (zones.ts)
    const a = areaM2(z);
    // formula: a regular 64-gon inscribed in radius r has area 32 r² sin(2π/64) = 0.99839 π r²
    expect(Math.abs(a / (Math.PI * 100 * 100) - 1)).toBeLessThan(0.01);
    expect(a).toBeCloseTo(32 * 100 * 100 * Math.sin((2 * Math.PI) / 64), -1);
  });

  it("grows a line into a capsule: points along it and at its ends at the distance", () => {
    const z = planarBuffer({ type: "LineString", coordinates: [[X0, Y0], [X0 + 1000, Y0]] }, 25);
    // formula: a capsule is the rectangle plus a circle (the circle here a 64-gon)
    expect(areaM2(z)).toBeCloseTo(1000 * 50 + 32 * 25 * 25 * Math.sin((2 * Math.PI) / 64), -1);
    for (const [x, y] of ringsOf(z)[0]) {
      const t = Math.min(1000, Math.max(0, x - X0));
      expect(Math.hypot(x - (X0 + t), y - Y0)).toBeCloseTo(25, 2);
    }
  });

  it("grows a square outward by the distance, keeping its hole narrowed", () => {
    const sq = [[X0, Y0], [X0 + 200, Y0], [X0 + 200, Y0 + 200], [X0, Y0 + 200], [X0, Y0]];
    const hole = [[X0 + 50, Y0 + 50], [X0 + 50, Y0 + 150], [X0 + 150, Y0 + 150], [X0 + 150, Y0 + 50], [X0 + 50, Y0 + 50]];
    const z = planarBuffer({ type: "Polygon", coordinates: [sq, hole] }, 10);
    // formula: square grown by d = side² + 4·side·d + (64-gon of radius d); hole shrunk to (100 − 2d)²
    expect(areaM2(z)).toBeCloseTo(200 * 200 + 4 * 200 * 10 + 32 * 100 * Math.sin((2 * Math.PI) / 64) - 80 * 80, -1);
  });

  it("refuses a negative buffer, and a point with no buffer", () => {
    expect(() => planarBuffer({ type: "Point", coordinates: [X0, Y0] }, -1)).toThrow(/≥ 0/);
    expect(() => planarBuffer({ type: "Point", coordinates: [X0, Y0] }, 0)).toThrow(/no area/);
  });
});

describe("exclusion zones", () => {
  it("take the mapped extent plus position uncertainty plus the reviewer's buffer for the kind", () => {
    // practice (check-values.md): 100 m or more around wrecks, commonly 50 m otherwise
    expect(DEFAULT_EXCLUSION_BUFFERS_M).toEqual({ wreck: 100, anomaly: 50, find_spot: 50 });
    const wreck = exclusionZone({ kind: "wreck", source: "Known wreck", label: "Unnamed steel wreck", geometry: { type: "Point", coordinates: [X0, Y0] }, positionUncertaintyM: 20, dataBufferM: 100 }, DEFAULT_EXCLUSION_BUFFERS_M);
    expect(wreck.distanceM).toBe(120);
    for (const [x, y] of ringsOf(wreck.geometry)[0]) expect(Math.hypot(x - X0, y - Y0)).toBeCloseTo(120, 3);
    const site = exclusionZone({ kind: "find_spot", source: "known sites", label: "VEL-003", geometry: { type: "Point", coordinates: [X0, Y0] }, positionUncertaintyM: 5 }, { ...DEFAULT_EXCLUSION_BUFFERS_M, find_spot: 250 });
    expect(site).toMatchObject({ reviewerBufferM: 250, bufferM: 250, distanceM: 255 });
  });

  it("never shrink the buffer the data came with", () => {
    const z = exclusionZone({ kind: "anomaly", source: "x", label: "a", geometry: { type: "Point", coordinates: [X0, Y0] }, positionUncertaintyM: 0, dataBufferM: 80 }, DEFAULT_EXCLUSION_BUFFERS_M);
    expect(z).toMatchObject({ reviewerBufferM: 50, bufferM: 80, distanceM: 80 });
  });
});

describe("mitigation", () => {
  it("grades potential classes from targeted survey down to the finds protocol, never exclusion", () => {
    expect([0, 1, 2, 3].map((c) => mitigationForClass(c, 4))).toEqual(["targeted_survey", "coring", "watching_brief", "finds_protocol"]);
    expect([0, 1, 2].map((c) => mitigationForClass(c, 3))).toEqual(["targeted_survey", "watching_brief", "finds_protocol"]);
    expect([0, 1].map((c) => mitigationForClass(c, 2))).toEqual(["targeted_survey", "finds_protocol"]);
    // practice (check-values.md): modelled potential leads to graded mitigation, not exclusion
    for (const m of MITIGATION_MEASURES) expect(`${m.id} ${m.label}`).not.toMatch(/exclu/i);
  });

  it("says whether works reach the horizon, and grades an asset's mitigation by class and reach", () => {
    expect(impactReach(32, 2.1, 0)).toBe("reaches");
    expect(impactReach(2.5, 3.2, 0)).toBe("may_reach"); // within the 1 m margin
    expect(impactReach(1, 3.2, 0)).toBe("stays_above");
    expect(impactReach(1, 3.2, 0.2)).toBe("may_reach"); // part of the footprint unassessed
    expect(impactReach(5, null, 1)).toBe("unassessed");
    expect(assetMitigation("reaches", 0, 4)).toBe("targeted_survey");
    expect(assetMitigation("may_reach", 0, 4)).toBe("coring");
    expect(assetMitigation("reaches", 3, 4)).toBe("finds_protocol");
    expect(assetMitigation("may_reach", 3, 4)).toBe("finds_protocol");
    expect(assetMitigation("reaches", null, 4)).toBe("watching_brief");
    expect(assetMitigation("stays_above", 0, 4)).toBe("finds_protocol");
    expect(assetMitigation("unassessed", 3, 4)).toBe("targeted_survey");
  });
});

describe("tracing class regions into polygons", () => {
  const grid: PlacedGrid = { width: 6, height: 5, originX: 1000, originY: 2000, cellSizeX: 10, cellSizeY: 20 };
  const mask = (rows: string[]) => Uint8Array.from(rows.join("").split(""), (ch) => (ch === "#" ? 1 : 0));

  it("traces a block with a hole: one exterior counter-clockwise, one hole, the cells' area", () => {
    const m = mask(["......", ".####.", ".#..#.", ".####.", "......"]);
    const polys = traceCellPolygons(m, 6, 5);
    expect(polys).toHaveLength(1);
    expect(polys[0].outer).toEqual(expect.any(Array));
    expect(polys[0].outer.length / 2).toBe(4); // collinear vertices dropped: a rectangle
    expect(polys[0].holes).toHaveLength(1);
    expect(polys[0].areaCells).toBe(10);
  });

  it("keeps corner-touching cells apart and an island inside a hole as its own polygon", () => {
    expect(traceCellPolygons(mask(["#.....", ".#....", "......", "......", "......"]), 6, 5)).toHaveLength(2);
    const polys = traceCellPolygons(mask(["#####.", "#...#.", "#.#.#.", "#...#.", "#####."]), 6, 5);
    expect(polys).toHaveLength(2);
    expect(polys.map((p) => p.areaCells).sort((a, b) => a - b)).toEqual([1, 16]);
    expect(polys.find((p) => p.areaCells === 16)!.holes).toHaveLength(1);
  });

  it("rasterises back to the same cells (the polygons are the union of the cells)", () => {
    const m = mask(["##..#.", "#.#.##", "###..#", "..#.##", "#.##.."]);
    const zones = mitigationZones(Uint8Array.from(m, (v) => (v ? 0 : 1)), null, fixedClassification([0.5], ["high", "low"]), grid);
    const high = zones.find((z) => z.measure === "targeted_survey")!;
    const back = rasterisePolygon({ type: "MultiPolygon", coordinates: high.coordinates }, grid);
    expect(back).toEqual(m);
    expect(high.areaKm2).toBeCloseTo((m.reduce((s, v) => s + v, 0) * 200) / 1e6, 12);
    const low = zones.find((z) => z.measure === "finds_protocol")!;
    expect(rasterisePolygon({ type: "MultiPolygon", coordinates: low.coordinates }, grid)).toEqual(Uint8Array.from(m, (v) => 1 - v));
  });

  it("makes a zone per grade and one for unassessed ground, leaving unscored cells out", () => {
    const potential = Float32Array.from([0.9, 0.6, 0.3, 0.1, NaN, NaN, ...new Array(24).fill(0.95)]);
    const unassessed = new Uint8Array(30);
    unassessed[5] = 1;
    const cls = fixedClassification([0.75, 0.5, 0.25], ["very high", "high", "medium", "low"]);
    const zones = mitigationZones(classifyRaster(cls, potential), unassessed, cls, grid);
    expect(zones.map((z) => [z.measure, z.cells, z.classes.join("/")])).toEqual([
      ["targeted_survey", 25, "very high"],
      ["coring", 1, "high"],
      ["watching_brief", 1, "medium"],
      ["finds_protocol", 1, "low"],
      ["targeted_survey", 1, ""],
    ]);
    expect(zones[4].basis).toMatch(/unassessed/);
  });
});
