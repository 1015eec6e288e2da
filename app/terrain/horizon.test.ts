import { describe, expect, it } from "vitest";
import { delaunayTriangles, gridHorizon, horizonFromGrid, parsePicksCsv, twtToThicknessM, type HorizonPicks } from "./horizon.ts";
import { TerrainCancelled, TerrainInputError, type GridSpec } from "./grid.ts";
import { prng } from "./test-utils.ts";

const spec = (w: number, h: number, dx: number, dy = dx): GridSpec => ({
  width: w, height: h, originX: 400000, originY: 7000000, cellSizeX: dx, cellSizeY: dy, crs: null,
});

/** picks every `step` metres along north–south lines at the given eastings */
function linePicks(s: GridSpec, eastings: number[], step: number, value: (x: number, y: number) => number) {
  const lineId: string[] = [], x: number[] = [], y: number[] = [], v: number[] = [];
  const yTop = s.originY, yBot = s.originY - s.height * s.cellSizeY;
  eastings.forEach((e, li) => {
    for (let yy = yTop - step / 2; yy > yBot; yy -= step) {
      lineId.push(`L${li + 1}`); x.push(e); y.push(yy); v.push(value(e, yy));
    }
  });
  return { lineId, x, y, v };
}

function circumcircleContains(X: number[], Y: number[], a: number, b: number, c: number, d: number): number {
  const adx = X[a] - X[d], ady = Y[a] - Y[d], bdx = X[b] - X[d], bdy = Y[b] - Y[d], cdx = X[c] - X[d], cdy = Y[c] - Y[d];
  return (adx * adx + ady * ady) * (bdx * cdy - cdx * bdy) - (bdx * bdx + bdy * bdy) * (adx * cdy - cdx * ady) + (cdx * cdx + cdy * cdy) * (adx * bdy - bdx * ady);
}

describe("twtToThicknessM", () => {
  it("converts two-way travel time with v·TWT/2", () => {
    // (formula) 1600 · 0.0025 / 2 = 2.0 m
    expect(twtToThicknessM(2.5)).toBeCloseTo(2.0, 12);
    // (formula) 10 ms at 1500 / 1600 / 1700 m/s → 7.5 / 8.0 / 8.5 m
    expect(twtToThicknessM(10, 1500)).toBeCloseTo(7.5, 12);
    expect(twtToThicknessM(10, 1600)).toBeCloseTo(8.0, 12);
    expect(twtToThicknessM(10, 1700)).toBeCloseTo(8.5, 12);
  });
});

describe("delaunayTriangles", () => {
  it("leaves every circumcircle empty on random points (brute-force check)", () => {
    const rnd = prng(1934);
    for (const m of [3, 10, 200]) {
      const X: number[] = [], Y: number[] = [];
      for (let i = 0; i < m; i++) { X.push(rnd() * 1000); Y.push(rnd() * 700); }
      const t = delaunayTriangles(X, Y);
      expect(t.length).toBeGreaterThan(0);
      for (let k = 0; k < t.length; k += 3) {
        const [a, b, c] = [t[k], t[k + 1], t[k + 2]];
        // counter-clockwise, positive area
        expect((X[b] - X[a]) * (Y[c] - Y[a]) - (Y[b] - Y[a]) * (X[c] - X[a])).toBeGreaterThan(0);
        for (let d = 0; d < m; d++) {
          if (d === a || d === b || d === c) continue;
          // (formula) Delaunay (1934): no point strictly inside a triangle's circumcircle
          expect(circumcircleContains(X, Y, a, b, c, d)).toBeLessThanOrEqual(1e-6);
        }
      }
    }
  });

  it("tiles a lattice of cocircular points without overlap (areas sum to the rectangle)", () => {
    const X: number[] = [], Y: number[] = [];
    for (let r = 0; r < 12; r++) for (let c = 0; c < 17; c++) { X.push(500 + c * 25); Y.push(900 + r * 40); }
    const t = delaunayTriangles(X, Y);
    let area = 0;
    for (let k = 0; k < t.length; k += 3) {
      const [a, b, c] = [t[k], t[k + 1], t[k + 2]];
      const ar = ((X[b] - X[a]) * (Y[c] - Y[a]) - (Y[b] - Y[a]) * (X[c] - X[a])) / 2;
      expect(ar).toBeGreaterThan(0);
      area += ar;
    }
    // (formula) 16·25 m by 11·40 m = 176 000 m², and Euler: 2·16·11 = 352 triangles
    expect(area).toBeCloseTo(176000, 3);
    expect(t.length / 3).toBe(352);
  });

  it("handles collinear runs of points along lines", () => {
    const X: number[] = [], Y: number[] = [];
    for (const e of [0, 100, 200]) for (let k = 0; k < 50; k++) { X.push(e); Y.push(k * 2); }
    const t = delaunayTriangles(X, Y);
    let area = 0;
    for (let k = 0; k < t.length; k += 3) {
      const [a, b, c] = [t[k], t[k + 1], t[k + 2]];
      area += ((X[b] - X[a]) * (Y[c] - Y[a]) - (Y[b] - Y[a]) * (X[c] - X[a])) / 2;
    }
    // (formula) hull 200 m × 98 m
    expect(area).toBeCloseTo(19600, 3);
  });
});

describe("gridHorizon", () => {
  it("puts the palaeo-surface at −42.0 m under 2.0 m of sediment on a −40.0 m seabed", () => {
    const s = spec(30, 30, 10);
    const seabed = new Float32Array(900).fill(-40);
    const p = linePicks(s, [400055, 400155, 400255], 1, () => 2.0);
    const res = gridHorizon(seabed, s, { lineId: p.lineId, x: p.x, y: p.y, depthBelowSeabedM: p.v }, { unassessedBeyondM: 60, verticalResolutionM: 0.2 });
    // (formula) −40.0 − 2.0 = −42.0 m at every assessed cell
    let assessed = 0;
    for (let i = 0; i < 900; i++) if (!res.unassessed[i]) { expect(res.elevationM[i]).toBeCloseTo(-42.0, 5); expect(res.thicknessM[i]).toBeCloseTo(2.0, 5); assessed++; }
    expect(assessed).toBe(res.assessedCells);
    expect(assessed).toBeGreaterThan(600);
  });

  it("reproduces a plane exactly between lines (TIN is linear) and marks far cells unassessed, not zero", () => {
    const s = spec(60, 40, 25, 20);
    const seabed = new Float32Array(60 * 40);
    const seabedAt = (x: number, y: number) => -30 - 0.001 * (x - 400000) + 0.0005 * (7000000 - y);
    const horizonAt = (x: number, y: number) => -45 - 0.003 * (x - 400000) + 0.002 * (7000000 - y);
    for (let r = 0; r < 40; r++) for (let c = 0; c < 60; c++) seabed[r * 60 + c] = seabedAt(400000 + (c + 0.5) * 25, 7000000 - (r + 0.5) * 20);
    // lines only in the western two thirds; the eastern third is far from any line
    const p = linePicks(s, [400110, 400410, 400710, 401010], 3, (x, y) => seabedAt(x, y) - horizonAt(x, y));
    const res = gridHorizon(seabed, s, { lineId: p.lineId, x: p.x, y: p.y, depthBelowSeabedM: p.v }, { unassessedBeyondM: 200, verticalResolutionM: 0.1 });
    let assessed = 0;
    let between = 0;
    for (let r = 0; r < 40; r++)
      for (let c = 0; c < 60; c++) {
        const i = r * 60 + c;
        const x = 400000 + (c + 0.5) * 25, y = 7000000 - (r + 0.5) * 20;
        if (res.unassessed[i]) {
          expect(Number.isNaN(res.elevationM[i])).toBe(true);
          expect(Number.isNaN(res.thicknessM[i])).toBe(true);
          continue;
        }
        assessed++;
        const holdsPicks = [4, 16, 28, 40].includes(c);
        if (!holdsPicks) {
          // (formula) a cell between lines is interpolated in a triangle: linear interpolation of a
          // plane is the plane (bilinear seabed sampling of a plane is exact too); Float32 → 1e-3 m
          expect(Math.abs(res.elevationM[i] - horizonAt(x, y))).toBeLessThan(1e-3);
          between++;
        } else {
          // (formula) a cell holding picks but outside the triangulation of the per-cell means (the
          // outer half of the first row, the last line's column) takes its picks' mean, placed at
          // the picks, not the centre: error ≤ |∇z| · half the cell diagonal = 0.0036 · 16.0 m
          expect(Math.abs(res.elevationM[i] - horizonAt(x, y))).toBeLessThan(0.0036 * Math.hypot(12.5, 10));
        }
      }
    expect(between).toBeGreaterThan(1000);
    expect(assessed).toBeGreaterThan(1000);
    // a cell 400 m east of the last line is unassessed; a cell midway between lines is assessed
    expect(res.unassessed[20 * 60 + 57]).toBe(1);
    expect(res.distanceToLineM![20 * 60 + 57]).toBeGreaterThan(200);
    expect(res.unassessed[20 * 60 + 10]).toBe(0);
  });

  it("reproduces a known curved horizon from dense-along-line, sparse-between-line picks within 0.05 m", () => {
    const s = spec(80, 80, 20);
    const seabed = new Float32Array(6400);
    const seabedAt = (x: number, y: number) => -35 + 2 * Math.sin((x - 400000) / 300) * Math.cos((7000000 - y) / 250);
    const horizonAt = (x: number, y: number) => -48 + 0.002 * (x - 400000) + 3 * Math.sin((x - 400000) / 800) * Math.cos((7000000 - y) / 600);
    for (let r = 0; r < 80; r++) for (let c = 0; c < 80; c++) seabed[r * 80 + c] = seabedAt(400000 + (c + 0.5) * 20, 7000000 - (r + 0.5) * 20);
    const eastings = Array.from({ length: 16 }, (_, k) => 400000 + 5 + k * 100);
    // picks every 2 m along each line, lines 100 m apart; TWT at 1600 m/s
    const p = linePicks(s, eastings, 2, (x, y) => ((seabedAt(x, y) - horizonAt(x, y)) * 2000) / 1600);
    const res = gridHorizon(seabed, s, { lineId: p.lineId, x: p.x, y: p.y, twtMs: p.v }, { unassessedBeyondM: 60, verticalResolutionM: 0.1 });
    let worst = 0;
    for (let r = 0; r < 80; r++)
      for (let c = 0; c < 80; c++) {
        const i = r * 80 + c;
        if (res.unassessed[i]) continue;
        const e = Math.abs(res.elevationM[i] - horizonAt(400000 + (c + 0.5) * 20, 7000000 - (r + 0.5) * 20));
        if (e > worst) worst = e;
      }
    // (formula) linear interpolation across h = 100 m errs by at most h²/8 · max|∂²z/∂x²|
    // = 1250 · 3/800² ≈ 0.006 m between lines; along lines picks are merged per 20 m cell and the
    // seabed is sampled bilinearly (seabed curvature 2/250² over a 20 m cell: ≤ 0.003 m each way) →
    // 0.05 m is a safe bound that a smoothed or nearest-pick gridding would exceed
    expect(worst).toBeLessThan(0.05);
    // cells east of the last line (x = 1505 m) are outside the triangulation except column 75,
    // which holds that line's picks: 80 × 80 − 4 × 80 = 6080
    expect(res.assessedCells).toBe(6080);
    expect(res.pointCount).toBeLessThan(res.pickCount / 5); // merged per cell
  });

  it("uses each pick's own velocity for TWT", () => {
    const s = spec(10, 10, 10);
    const seabed = new Float32Array(100).fill(-20);
    const lineId: string[] = [], x: number[] = [], y: number[] = [], twt: number[] = [], vel: number[] = [];
    for (let yy = 6999999; yy > 6999900; yy -= 1) { lineId.push("A"); x.push(400045); y.push(yy); twt.push(10); vel.push(1700); }
    const res = gridHorizon(seabed, s, { lineId, x, y, twtMs: twt, velocityMps: vel }, { unassessedBeyondM: 5, verticalResolutionM: 0.1 });
    // (formula) 10 ms at 1700 m/s → 8.5 m below −20 m → −28.5 m
    expect(res.elevationM[5 * 10 + 4]).toBeCloseTo(-28.5, 4);
  });

  it("flags cover thinner than the vertical resolution and clamps a horizon above the seabed", () => {
    const s = spec(20, 20, 10);
    const seabed = new Float32Array(400).fill(-40);
    seabed[10 * 20 + 9] = -43; // a scour hole deeper than the horizon
    const p = linePicks(s, [400085, 400115], 1, () => 0.3);
    const res = gridHorizon(seabed, s, { lineId: p.lineId, x: p.x, y: p.y, depthBelowSeabedM: p.v }, { unassessedBeyondM: 30, verticalResolutionM: 0.5 });
    expect(res.belowResolution[5 * 20 + 10]).toBe(1);
    expect(res.thicknessM[5 * 20 + 10]).toBeCloseTo(0.3, 4);
    expect(res.clampedCells).toBeGreaterThanOrEqual(1);
    expect(res.thicknessM[10 * 20 + 9]).toBe(0);
    expect(res.elevationM[10 * 20 + 9]).toBe(-43);
    const thick = gridHorizon(seabed, s, { lineId: p.lineId, x: p.x, y: p.y, depthBelowSeabedM: p.v.map(() => 3) }, { unassessedBeyondM: 30, verticalResolutionM: 0.5 });
    expect(thick.belowResolution[5 * 20 + 10]).toBe(0);
  });

  it("breaks a line at a gap in the picks, leaving the gap unassessed", () => {
    const s = spec(10, 60, 10);
    const seabed = new Float32Array(600).fill(-30);
    const lineId: string[] = [], x: number[] = [], y: number[] = [], d: number[] = [];
    for (let yy = 6999998; yy > 6999400; yy -= 2) {
      if (yy < 6999800 && yy > 6999600) continue; // 200 m without picks (gas blanking)
      lineId.push("G"); x.push(400045); y.push(yy); d.push(1.5);
    }
    const res = gridHorizon(seabed, s, { lineId, x, y, depthBelowSeabedM: d }, { unassessedBeyondM: 40, verticalResolutionM: 0.1, maxPickGapM: 50 });
    expect(res.unassessed[30 * 10 + 4]).toBe(1); // 700 m north of the bottom: in the gap
    expect(res.unassessed[5 * 10 + 4]).toBe(0);
  });

  it("refuses bad picks with the pick named", () => {
    const s = spec(5, 5, 10);
    const seabed = new Float32Array(25).fill(-10);
    const bad: HorizonPicks = { lineId: ["A", "A"], x: [400010, 400020], y: [6999990, 6999980], depthBelowSeabedM: [1, -2] };
    expect(() => gridHorizon(seabed, s, bad, { unassessedBeyondM: 20, verticalResolutionM: 0.1 })).toThrow(TerrainInputError);
    expect(() => gridHorizon(seabed, s, bad, { unassessedBeyondM: 20, verticalResolutionM: 0.1 })).toThrow(/pick 2 \(line A\)/);
    const both: HorizonPicks = { ...bad, depthBelowSeabedM: [1, 1], twtMs: [1, 1] };
    expect(() => gridHorizon(seabed, s, both, { unassessedBeyondM: 20, verticalResolutionM: 0.1 })).toThrow(/either the depth/);
  });
});

describe("horizonFromGrid", () => {
  it("keeps nodata as unassessed (never zero cover), clamps above the seabed and flags thin cover", () => {
    const seabed = Float32Array.of(-40, -40, -40, NaN);
    const hz = Float32Array.of(-42, NaN, -39, -50);
    const r = horizonFromGrid(seabed, hz, 0.5);
    // (formula) −40.0 m seabed over a −42.0 m horizon: 2.0 m cover
    expect(r.thicknessM[0]).toBeCloseTo(2.0, 6);
    expect(Array.from(r.unassessed)).toEqual([0, 1, 0, 1]);
    expect(Number.isNaN(r.thicknessM[1])).toBe(true);
    expect(r.elevationM[2]).toBe(-40);
    expect(r.clampedCells).toBe(1);
    expect(Array.from(r.belowResolution)).toEqual([0, 0, 1, 0]);
    expect(r.distanceToLineM).toBeNull();
    expect(() => horizonFromGrid(seabed, new Float32Array(3), 0.5)).toThrow(/same grid/);
  });
});

describe("gridHorizon progress and cancellation", () => {
  it("reports its stages in order and stops with TerrainCancelled when asked", () => {
    const s = spec(20, 20, 10);
    const seabed = new Float32Array(400).fill(-30);
    const p = linePicks(s, [400055, 400145], 2, () => 1);
    const picks = { lineId: p.lineId, x: p.x, y: p.y, depthBelowSeabedM: p.v };
    const seen: number[] = [];
    gridHorizon(seabed, s, picks, { unassessedBeyondM: 50, verticalResolutionM: 0.1 }, { onProgress: (f) => seen.push(f) });
    expect(seen[0]).toBe(0);
    expect(seen.at(-1)).toBe(1);
    expect(seen.length).toBeGreaterThanOrEqual(4);
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeGreaterThanOrEqual(seen[i - 1]);
    let calls = 0;
    expect(() => gridHorizon(seabed, s, picks, { unassessedBeyondM: 50, verticalResolutionM: 0.1 }, { shouldCancel: () => ++calls > 2 })).toThrow(TerrainCancelled);
  });
});

describe("parsePicksCsv", () => {
  it("reads depth or TWT picks and names the row and column of a bad value", () => {
    const d = parsePicksCsv("line,fix,x,y,depth_m\nNW-01,1,400010,6999990,2.5\nNW-01,2,400012,6999988,2.6\n");
    expect(d.lineId).toEqual(["NW-01", "NW-01"]);
    expect(Array.from(d.depthBelowSeabedM!)).toEqual([2.5, 2.6]);
    const t = parsePicksCsv("X,Y,LINE,TWT_MS,velocity_mps\n1,2,A,3.5,\n1,3,A,4,1700\n");
    expect(Array.from(t.twtMs!)).toEqual([3.5, 4]);
    expect(Number.isNaN(t.velocityMps![0])).toBe(true);
    expect(t.velocityMps![1]).toBe(1700);
    expect(() => parsePicksCsv("line,x,y,depth_m\nA,1,2,abc\n")).toThrow(/row 2, column "depth_m"/);
    expect(() => parsePicksCsv("line,x,depth_m\nA,1,2\n")).toThrow(/no "y" column/);
    expect(() => parsePicksCsv("line,x,y,depth_m,twt_ms\nA,1,2,3,4\n")).toThrow(/exactly one/);
  });
});
