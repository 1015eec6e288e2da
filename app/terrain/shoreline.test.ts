import { describe, expect, it } from "vitest";
import { fillDepressions } from "./fill";
import { resolveFlats } from "./flats";
import { CLASS_LAKE, CLASS_LAND, CLASS_SEA, classifyAtAge, oceanBoundaryMask, outletMask, spillElevation } from "./flooding";
import { flowAccumulation } from "./flow-accumulation";
import { downstreamIndex, flowDirectionD8 } from "./flow-direction";
import { lakeMargins, riverMouths, seaAtTidalLevel, shorelineMask, waterMask } from "./shoreline";
import { streamMask } from "./streams";
import { gridFromRows, randomTerrain } from "./test-utils";
import { burnChannels, rasterizeChannels } from "./burn-in";

describe("shoreline, river mouths and lake margins", () => {
  // a valley running south to the sea, with a closed hollow (below sea level) on its west side
  const g = gridFromRows([
    [30, 28, 26, 20, 26, 28, 30],
    [28, 9, 12, 15, 24, 26, 28],
    [26, -8, 10, 10, 20, 24, 26],
    [24, 9, 12, 5, 18, 20, 24],
    [20, 16, 8, 2, 8, 16, 20],
    [6, 4, 1, -1, 1, 4, 6],
    [-5, -5, -5, -6, -5, -5, -5],
  ]);
  const n = 49;
  const boundary = oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: ["south"] });
  const spill = spillElevation(g, boundary);
  const sl = new Float32Array(n).fill(0);

  it("draws the shoreline at a chosen tidal level on the land side of the water line", () => {
    const lowWater = seaAtTidalLevel(spill.spillM, sl, 2, -1); // level −1
    const highWater = seaAtTidalLevel(spill.spillM, sl, 2, 1); // level +1
    expect(lowWater[5 * 7 + 3]).toBe(1); // −1 ≤ −1
    expect(lowWater[5 * 7 + 2]).toBe(0);
    expect(highWater[5 * 7 + 2]).toBe(1);
    const shoreLow = shorelineMask(g, lowWater);
    expect(shoreLow[4 * 7 + 3]).toBe(1); // the 2 above the −1
    expect(shoreLow[5 * 7 + 2]).toBe(1);
    expect(shoreLow[6 * 7 + 0]).toBe(0); // sea
    expect(() => seaAtTidalLevel(spill.spillM, sl, 2, 2)).toThrow(/between −1/);
  });

  it("finds the river mouth where the stream meets the sea, and the lake margin", () => {
    const { classes, lakeLevelM } = classifyAtAge(g, spill, sl, 0);
    // (formula) the −8 hollow spills east over the 10s into the valley: a lake at 10 m that also covers
    // the 9s north and south of it
    expect(classes[2 * 7 + 1]).toBe(CLASS_LAKE);
    expect(lakeLevelM[2 * 7 + 1]).toBe(10);
    expect(classes[1 * 7 + 1]).toBe(CLASS_LAKE);
    expect(classes[3 * 7 + 1]).toBe(CLASS_LAKE);
    expect(classes[2 * 7 + 2]).toBe(CLASS_LAND); // the 10 at the spill point is not below it
    const outlets = outletMask(classes, boundary);
    const fill = fillDepressions(g, outlets);
    const surf = { ...g, data: fill.filledM };
    const dirs = resolveFlats(surf, flowDirectionD8(surf, fill.outlets)).directions;
    const acc = flowAccumulation(g.spec, dirs, g.nodata);
    const water = waterMask(classes);
    const streams = streamMask(g.spec, acc.upstreamCells, 0.0004, water); // ≥ 4 cells of 100 m²
    const sea = seaAtTidalLevel(spill.spillM, sl, 0, 0);
    const mouths = riverMouths(g, dirs, streams, sea);
    const mouthCells = Array.from(mouths).flatMap((v, i) => (v ? [i] : []));
    expect(mouthCells.length).toBeGreaterThanOrEqual(1);
    for (const m of mouthCells) {
      expect(streams[m]).toBe(1);
      expect(sea[downstreamIndex(7, m, dirs[m])]).toBe(1);
    }
    expect(mouths[4 * 7 + 3]).toBe(1); // the valley's 2 drains into the −1 bay
    const margins = lakeMargins(g, classes);
    expect(margins[0 * 7 + 1]).toBe(1);
    expect(margins[4 * 7 + 1]).toBe(1);
    expect(margins[2 * 7 + 2]).toBe(1);
    expect(margins[2 * 7 + 1]).toBe(0); // the lake itself
    expect(margins[1 * 7 + 1]).toBe(0);
    expect(margins.reduce((a, b) => a + b, 0)).toBe(8); // (formula) the 8 land cells edge-adjacent to the lake
  });
});

describe("every land cell drains to the sea or a lake (random grids, whole per-age chain)", () => {
  it("holds for sea levels across the range, with lakes as outlets", () => {
    for (let seed = 1; seed <= 20; seed++) {
      const g = randomTerrain(seed, 19, 15, { nodataFraction: seed % 5 === 0 ? 0.05 : 0, cellSizeX: 50, cellSizeY: 40 });
      let boundary: Uint8Array;
      try {
        boundary = oceanBoundaryMask(g.spec, g.nodata, { kind: "sides", sides: ["south"] });
      } catch {
        continue;
      }
      const spill = spillElevation(g, boundary);
      for (const L of [-50, -30, -10]) {
        const { classes } = classifyAtAge(g, spill, new Float32Array(g.data.length).fill(L), 1);
        const outlets = outletMask(classes, boundary);
        const fill = fillDepressions(g, outlets);
        const surf = { ...g, data: fill.filledM };
        const res = resolveFlats(surf, flowDirectionD8(surf, fill.outlets));
        expect(res.unresolvedCount).toBe(0);
        const w = g.spec.width;
        for (let i = 0; i < g.data.length; i++) {
          if (g.nodata[i]) continue;
          let c = i;
          for (let steps = 0; ; steps++) {
            expect(steps).toBeLessThan(g.data.length);
            const d = downstreamIndex(w, c, res.directions[c]);
            if (d < 0) break;
            c = d;
          }
          // the end of every flow path is the sea, a lake, the open-ocean boundary, or (for parts cut
          // off by nodata) a cell on the data edge that fillDepressions made an outlet
          expect(fill.outlets[c]).toBe(1);
          if (!outlets[c]) expect(fill.addedOutletCount).toBeGreaterThan(0);
          else expect([CLASS_SEA, CLASS_LAKE].includes(classes[c]) || boundary[c] === 1).toBe(true);
        }
        // accumulation is conserved: Σ over outlets of (upstream + 1) = valid cells
        const acc = flowAccumulation(g.spec, res.directions, g.nodata);
        let sum = 0;
        for (let i = 0; i < g.data.length; i++) if (!g.nodata[i] && downstreamIndex(w, i, res.directions[i]) < 0) sum += acc.upstreamCells[i] + 1;
        expect(sum).toBe(acc.validCount);
      }
    }
  });
});

describe("burn-in of mapped palaeochannels", () => {
  it("lowers the cells a mapped channel crosses and leaves the rest", () => {
    const g = randomTerrain(7, 10, 8);
    const { originX: x, originY: y } = g.spec;
    const mask = rasterizeChannels(g.spec, [[[x + 5, y - 35], [x + 95, y - 35]]]);
    expect(Array.from(mask.slice(30, 40))).toEqual(new Array(10).fill(1));
    expect(mask.reduce((a, b) => a + b, 0)).toBe(10);
    const burnt = burnChannels(g, mask, 3);
    for (let i = 0; i < 80; i++) expect(burnt.data[i]).toBe(mask[i] ? Math.fround(g.data[i] - 3) : g.data[i]);
    expect(() => burnChannels(g, mask, 0)).toThrow(/positive/);
  });
});
