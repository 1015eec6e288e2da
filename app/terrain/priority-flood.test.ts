import { describe, expect, it } from "vitest";
import { PriorityFlood } from "./priority-flood";
import { fillDepressions } from "./fill";
import { oceanBoundaryMask, spillElevation } from "./flooding";
import { prng, randomTerrain } from "./test-utils";

/**
 * Brute force: level(c) = max(z(c), min over neighbours level(n)), seeds at their own elevation,
 * relaxed until nothing changes (Bellman-Ford on the minimax path problem); Infinity where no seed
 * reaches. Float32 values throughout, as the engine stores them.
 */
function bruteForce(z: Float32Array, nodata: Uint8Array, seeds: Uint8Array, w: number, h: number, conn: 4 | 8): Float32Array {
  const n = w * h;
  const lv = new Float32Array(n).fill(Infinity);
  for (let i = 0; i < n; i++) if (seeds[i] && !nodata[i]) lv[i] = z[i];
  const dr = conn === 8 ? [0, 1, 1, 1, 0, -1, -1, -1] : [0, 1, 0, -1];
  const dc = conn === 8 ? [1, 1, 0, -1, -1, -1, 0, 1] : [1, 0, -1, 0];
  for (let changed = true; changed; ) {
    changed = false;
    for (let r = 0; r < h; r++) {
      for (let c = 0; c < w; c++) {
        const i = r * w + c;
        if (nodata[i] || seeds[i]) continue;
        let best = Infinity;
        for (let k = 0; k < dr.length; k++) {
          const rr = r + dr[k];
          const cc = c + dc[k];
          if (rr < 0 || rr >= h || cc < 0 || cc >= w || nodata[rr * w + cc]) continue;
          best = Math.min(best, lv[rr * w + cc]);
        }
        const v = Math.max(z[i], best);
        if (v < lv[i]) {
          lv[i] = v;
          changed = true;
        }
      }
    }
  }
  return lv;
}

/** Random terrains of every kind the floods meet: rough, quantised (flats and ties), with nodata holes. */
function cases(): { z: Float32Array; nodata: Uint8Array; seeds: Uint8Array; w: number; h: number; name: string }[] {
  const out = [];
  for (let seed = 1; seed <= 40; seed++) {
    const rnd = prng(1000 + seed);
    const w = 3 + Math.floor(rnd() * 30);
    const h = 3 + Math.floor(rnd() * 30);
    const g = randomTerrain(seed, w, h, { nodataFraction: seed % 3 === 0 ? 0.15 : seed % 3 === 1 ? 0.02 : 0, quantum: seed % 2 ? 0.5 : 3 });
    const seeds = new Uint8Array(w * h);
    // seeds: a side, a few scattered cells, or both
    for (let i = 0; i < w * h; i++) {
      const r = Math.floor(i / w);
      const c = i % w;
      if (seed % 4 !== 3 && ((seed % 2 === 0 && r === h - 1) || (seed % 2 === 1 && c === w - 1))) seeds[i] = 1;
      if (seed % 4 >= 2 && rnd() < 0.03) seeds[i] = 1;
    }
    for (let i = 0; i < w * h; i++) if (g.nodata[i]) seeds[i] = 0;
    if (!seeds.some((x) => x === 1)) seeds[g.nodata.indexOf(0)] = 1;
    out.push({ z: g.data, nodata: g.nodata, seeds, w, h, name: `seed ${seed} (${w}×${h})` });
  }
  return out;
}

describe("PriorityFlood — Barnes et al. (2014) with the slope tracing of Zhou, Sun & Fu (2016)", () => {
  for (const conn of [4, 8] as const) {
    it(`equals the brute-force minimax path elevation on random grids, ${conn}-connected (formula)`, () => {
      for (const t of cases()) {
        const n = t.w * t.h;
        const level = new Float32Array(t.z);
        const done = new Uint8Array(n);
        const pf = new PriorityFlood(level, done, t.w, t.h, conn);
        for (let i = 0; i < n; i++) {
          if (t.nodata[i]) done[i] = 1;
          else if (t.seeds[i]) {
            done[i] = 1;
            pf.seed(i);
          }
        }
        pf.flood();
        const ref = bruteForce(t.z, t.nodata, t.seeds, t.w, t.h, conn);
        let raised = 0;
        let reached = 0;
        for (let i = 0; i < n; i++) {
          if (t.nodata[i]) continue;
          if (ref[i] === Infinity) {
            expect(done[i], t.name).toBe(0);
            expect(level[i], t.name).toBe(t.z[i]);
            continue;
          }
          reached++;
          expect(done[i], t.name).toBe(1);
          expect(level[i], `${t.name} cell ${i}`).toBe(ref[i]);
          if (ref[i] > t.z[i]) raised++;
        }
        expect(pf.raised, t.name).toBe(raised);
        expect(pf.reached, t.name).toBe(reached);
      }
    });
  }

  it("gives spillElevation and fillDepressions the brute-force levels on random grids (formula)", () => {
    for (const t of cases()) {
      const g = { spec: { width: t.w, height: t.h, originX: 0, originY: 0, cellSizeX: 10, cellSizeY: 10, crs: null }, data: t.z, nodata: t.nodata };
      const spill = spillElevation(g, oceanBoundaryMask(g.spec, g.nodata, { kind: "mask", mask: t.seeds })).spillM;
      const ref4 = bruteForce(t.z, t.nodata, t.seeds, t.w, t.h, 4);
      const fill = fillDepressions(g, t.seeds);
      // fill's cut-off parts drain at their cells on the edge or next to nodata: add those as seeds
      const seeds8 = fill.outlets;
      const ref8 = bruteForce(t.z, t.nodata, seeds8, t.w, t.h, 8);
      let raised = 0;
      for (let i = 0; i < t.w * t.h; i++) {
        if (t.nodata[i]) {
          expect(spill[i]).toBeNaN();
          expect(fill.filledM[i]).toBeNaN();
          continue;
        }
        expect(spill[i], `${t.name} cell ${i}`).toBe(ref4[i]);
        expect(fill.filledM[i], `${t.name} cell ${i}`).toBe(ref8[i]);
        if (ref8[i] > t.z[i]) raised++;
      }
      expect(fill.raisedCount, t.name).toBe(raised);
    }
  });
});
