import { describe, expect, it } from "vitest";
import { areaM2, blockFigures, maskedSummary, pointInArea, rasterisePolygon, type AreaGeometry, type PlacedGrid } from "./block-figures";
import { fixedClassification } from "./classification";
import { Mulberry32 } from "./random";

const mulberry32 = (seed: number) => { const g = new Mulberry32(seed); return () => g.next(); };

const grid: PlacedGrid = { width: 10, height: 8, originX: 1000, originY: 5000, cellSizeX: 100, cellSizeY: 50 };
const centre = (c: number, r: number) => [grid.originX + (c + 0.5) * grid.cellSizeX, grid.originY - (r + 0.5) * grid.cellSizeY];
/** cells (c, r) marked in a mask, as "c,r" strings */
const marked = (mask: Uint8Array) => [...mask.keys()].filter((i) => mask[i]).map((i) => `${i % grid.width},${Math.floor(i / grid.width)}`);
const rect = (x0: number, y0: number, x1: number, y1: number) => [[x0, y0], [x1, y0], [x1, y1], [x0, y1], [x0, y0]];

/** The direct computation: every cell centre tested on its own by ray casting. */
function direct(g: AreaGeometry) {
  const m = new Uint8Array(grid.width * grid.height);
  for (let r = 0; r < grid.height; r++) for (let c = 0; c < grid.width; c++) m[r * grid.width + c] = pointInArea(g, centre(c, r)[0], centre(c, r)[1]) ? 1 : 0;
  return m;
}

describe("rasterising a polygon by cell centre (even–odd)", () => {
  it("marks exactly the cells whose centres fall in a square", () => {
    // columns 2..4 (x 1200–1500), rows 1..3 (y 4950–4800)
    const sq: AreaGeometry = { type: "Polygon", coordinates: [rect(1200, 4800, 1500, 4950)] };
    const m = rasterisePolygon(sq, grid);
    const want: string[] = [];
    for (let r = 1; r <= 3; r++) for (let c = 2; c <= 4; c++) want.push(`${c},${r}`);
    expect(marked(m)).toEqual(want);
  });

  it("leaves a hole out, whatever the rings' orientation", () => {
    const outer = rect(1000, 4600, 2000, 5000); // the whole grid
    const hole = rect(1300, 4700, 1600, 4850).reverse(); // columns 3..5, rows 3..5
    const m = rasterisePolygon({ type: "Polygon", coordinates: [outer, hole] }, grid);
    expect(m.reduce((s, v) => s + v, 0)).toBe(80 - 9);
    for (let r = 3; r <= 5; r++) for (let c = 3; c <= 5; c++) expect(m[r * 10 + c], `${c},${r}`).toBe(0);
    const same = rasterisePolygon({ type: "Polygon", coordinates: [outer, rect(1300, 4700, 1600, 4850)] }, grid);
    expect(same).toEqual(m);
  });

  it("combines the polygons of a MultiPolygon, and agrees with ray casting on a slanted shape", () => {
    const multi: AreaGeometry = {
      type: "MultiPolygon",
      coordinates: [
        [rect(1000, 4900, 1200, 5000)], // cells 0..1, row 0..1
        [[[1510, 4610], [1990, 4700], [1700, 4990], [1510, 4610]]], // a triangle
      ],
    };
    const m = rasterisePolygon(multi, grid);
    expect(marked(m)).toContain("0,0");
    expect(marked(m)).toContain("1,1");
    expect(m).toEqual(direct(multi));
    expect(marked(m).length).toBeGreaterThan(4 + 5);
  });

  it("agrees with ray casting on random polygons with holes", () => {
    const rnd = mulberry32(7);
    for (let t = 0; t < 30; t++) {
      const ring = (cx: number, cy: number, rad: number) => {
        const pts: number[][] = [];
        for (let k = 0; k < 9; k++) {
          const a = (2 * Math.PI * k) / 9;
          const rr = rad * (0.5 + rnd());
          pts.push([cx + rr * Math.cos(a), cy + rr * Math.sin(a)]);
        }
        return pts;
      };
      const g: AreaGeometry = { type: "Polygon", coordinates: [ring(1500, 4800, 300), ring(1500, 4800, 60)] };
      expect(rasterisePolygon(g, grid)).toEqual(direct(g));
    }
  });

  it("clips to the grid and marks nothing for a polygon outside it", () => {
    expect(marked(rasterisePolygon({ type: "Polygon", coordinates: [rect(0, 0, 10, 10)] }, grid))).toEqual([]);
    const big = rasterisePolygon({ type: "Polygon", coordinates: [rect(-1e6, -1e6, 1e6, 1e7)] }, grid);
    expect(big.every((v) => v === 1)).toBe(true);
  });
});

describe("block figures", () => {
  it("equal a direct computation on a small grid", () => {
    const n = grid.width * grid.height;
    const rnd = mulberry32(42);
    const potential = new Float32Array(n);
    const unassessed = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      potential[i] = rnd() < 0.15 ? NaN : Math.fround(rnd());
      if (rnd() < 0.1) {
        unassessed[i] = 1;
        potential[i] = NaN;
      }
    }
    const lc12 = Uint8Array.from({ length: n }, (_, i) => (i % grid.width < 6 ? 0 : 1));
    const lc10 = Uint8Array.from({ length: n }, (_, i) => (i % grid.width < 2 ? 0 : i % grid.width === 2 ? 2 : 1));
    const classification = fixedClassification([0.75, 0.5, 0.25], ["very high", "high", "medium", "low"]);
    const block: AreaGeometry = { type: "Polygon", coordinates: [[[1050, 4620], [1720, 4640], [1800, 4980], [1150, 4930], [1050, 4620]]] };
    const mask = rasterisePolygon(block, grid);
    const f = blockFigures({ grid, potential, unassessed, classification, landClassByAge: [{ ageKa: 10, landClass: lc10 }, { ageKa: 12, landClass: lc12 }] }, mask);

    // direct: each cell centre tested on its own, each class by plain comparisons
    let cells = 0, un = 0, none = 0, sum = 0, max = -Infinity, scored = 0;
    const byClass = [0, 0, 0, 0];
    const land12 = { land: 0 }, land10 = { land: 0, inter: 0 };
    for (let r = 0; r < grid.height; r++)
      for (let c = 0; c < grid.width; c++) {
        const [x, y] = centre(c, r);
        if (!pointInArea(block, x, y)) continue;
        const i = r * grid.width + c;
        cells++;
        if (lc12[i] === 0) land12.land++;
        if (lc10[i] === 0) land10.land++;
        if (lc10[i] === 2) land10.inter++;
        if (unassessed[i]) { un++; continue; }
        const p = potential[i];
        if (Number.isNaN(p)) { none++; continue; }
        scored++;
        sum += p;
        max = Math.max(max, p);
        byClass[p >= 0.75 ? 0 : p >= 0.5 ? 1 : p >= 0.25 ? 2 : 3]++;
      }
    expect(cells).toBeGreaterThan(20);
    expect(f.cells).toBe(cells);
    expect(f.gridAreaKm2).toBeCloseTo((cells * 100 * 50) / 1e6, 12);
    expect(f.classes.map((c) => c.cells)).toEqual(byClass);
    expect(f.classes.map((c) => c.label)).toEqual(["very high", "high", "medium", "low"]);
    expect(f.classes[0].share).toBeCloseTo(byClass[0] / cells, 12);
    expect(f.unassessed.cells).toBe(un);
    expect(f.notScored.cells).toBe(none);
    expect(f.classes.reduce((s, c) => s + c.share, 0) + f.unassessed.share + f.notScored.share).toBeCloseTo(1, 12);
    expect(f.meanPotential).toBeCloseTo(sum / scored, 6);
    expect(f.maxPotential).toBe(max);
    expect(f.ages.map((a) => a.ageKa)).toEqual([12, 10]); // oldest first
    expect(f.ages[0].land).toBeCloseTo(land12.land / cells, 12);
    expect(f.ages[1].land).toBeCloseTo(land10.land / cells, 12);
    expect(f.ages[1].intertidal).toBeCloseTo(land10.inter / cells, 12);
    expect(f.landAgesKa).toEqual(land12.land / cells >= 0.5 ? [12] : []);
    expect(f.partlyLandAgesKa).toContain(10);
  });

  it("counts a cell exactly on a threshold in the class above it (Float32 rule of classification.ts)", () => {
    const g1: PlacedGrid = { width: 2, height: 1, originX: 0, originY: 10, cellSizeX: 10, cellSizeY: 10 };
    const f = blockFigures(
      { grid: g1, potential: Float32Array.from([0.7, 0.2]), unassessed: null, classification: fixedClassification([0.7], ["high", "low"]), landClassByAge: [] },
      Uint8Array.from([1, 1]),
    );
    expect(f.classes.map((c) => c.cells)).toEqual([1, 1]);
  });
});

describe("areas and summaries", () => {
  it("a square with a hole has the shoelace area; a MultiPolygon sums its parts", () => {
    expect(areaM2({ type: "Polygon", coordinates: [rect(0, 0, 100, 100), rect(10, 10, 20, 20)] })).toBe(10_000 - 100);
    expect(areaM2({ type: "MultiPolygon", coordinates: [[rect(0, 0, 10, 10)], [rect(20, 0, 30, 20).reverse()]] })).toBe(100 + 200);
  });

  it("summarises the cover under a mask (NaN skipped)", () => {
    const s = maskedSummary(Float32Array.from([5, NaN, 1, 3, 9]), Uint8Array.from([1, 1, 1, 1, 0]));
    expect(s).toEqual({ cells: 4, valued: 3, min: 1, median: 3, max: 5 });
    expect(maskedSummary(Float32Array.from([NaN]), Uint8Array.from([1]))).toEqual({ cells: 1, valued: 0, min: null, median: null, max: null });
  });
});
