import { describe, expect, it } from "vitest";
import { resolveFlats } from "./flats";
import { flowAccumulation } from "./flow-accumulation";
import { downstreamIndex, flowDirectionD8 } from "./flow-direction";
import { fillDepressions } from "./fill";
import { CellQueue, D8_DCOL, D8_DROW, D8_PIT, type Grid, d8Distances } from "./grid";
import { gridFromRows, prng, randomTerrain } from "./test-utils";

describe("resolveFlats — Barnes, Lehman & Mulla (2014) flats", () => {
  // A flat valley floor 9 rows × 21 columns at 1 m, ridges of 5 m on north and south, a wall of 5 m at
  // the west end, and one outlet cell (0 m) in the middle of the east end.
  const W = 23;
  const Hh = 11;
  const rows: number[][] = [];
  for (let r = 0; r < Hh; r++) {
    const row: number[] = [];
    for (let c = 0; c < W; c++) row.push(r === 0 || r === Hh - 1 || c === 0 || c === W - 1 ? 5 : 1);
    rows.push(row);
  }
  rows[5][W - 1] = 0;
  const g = gridFromRows(rows);
  const outlets = new Uint8Array(W * Hh);
  outlets[5 * W + W - 1] = 1;

  it("gives every flat cell a direction and drains the whole flat to the outlet without cycles", () => {
    const d8 = flowDirectionD8(g, outlets);
    const flatCells = Array.from(d8).filter((d) => d === D8_PIT).length;
    expect(flatCells).toBeGreaterThan(9 * 21 - 5); // the floor is flat: almost no cell has a lower neighbour
    const res = resolveFlats(g, d8);
    expect(res.unresolvedCount).toBe(0);
    expect(res.resolvedCount).toBe(flatCells);
    const acc = flowAccumulation(g.spec, res.directions, g.nodata).upstreamCells;
    // (formula) every cell of the valley, floor and ridges alike, ends at the single outlet
    expect(acc[5 * W + W - 1] + 1).toBe(W * Hh);
  });

  it("drains away from higher terrain: floor cells beside a ridge flow away from it, the main channel runs down the middle", () => {
    const res = resolveFlats(g, flowDirectionD8(g, outlets));
    const dirs = res.directions;
    // cells next to the northern ridge (row 1) step south or stay; none steps north into row 0
    let awaySteps = 0;
    let total = 0;
    for (let c = 2; c < W - 4; c++) {
      const i = 1 * W + c;
      const dr = D8_DROW[dirs[i]];
      total++;
      if (dr > 0) awaySteps++;
      expect(dr).toBeGreaterThanOrEqual(0);
    }
    expect(awaySteps).toBe(total); // (paper) the away-from-higher gradient pushes them off the ridge
    const acc = flowAccumulation(g.spec, dirs, g.nodata).upstreamCells;
    // the centre row carries the flow: the cell before the outlet gathers nearly the whole floor
    const beforeOutlet = 5 * W + W - 2;
    expect(downstreamIndex(W, beforeOutlet, dirs[beforeOutlet])).toBe(5 * W + W - 1);
    expect(acc[beforeOutlet]).toBeGreaterThan(0.8 * 9 * 21);
  });
});

/**
 * The first implementation of resolveFlats, which looked for flat edges by visiting every cell of the
 * grid; kept here as the reference for the one that visits only flat cells.
 */
function referenceResolveFlats(surface: Grid<Float32Array>, directions: Uint8Array) {
  const { spec, data: z, nodata } = surface;
  const { width: w, height: h } = spec;
  const n = w * h;
  const dirs = directions.slice();

  // 1. Label flats (8-connected equal-elevation D8_PIT cells).
  const label = new Int32Array(n);
  const q = new CellQueue(1024);
  let flatCount = 0;
  for (let i = 0; i < n; i++) {
    if (dirs[i] !== D8_PIT || label[i]) continue;
    flatCount++;
    label[i] = flatCount;
    q.push(i);
    const zi = z[i];
    while (q.size > 0) {
      const c = q.shift();
      const r = (c / w) | 0;
      const col = c - r * w;
      for (let k = 0; k < 8; k++) {
        const rr = r + D8_DROW[k];
        const cc = col + D8_DCOL[k];
        if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
        const m = rr * w + cc;
        if (label[m] || dirs[m] !== D8_PIT || z[m] !== zi) continue;
        label[m] = flatCount;
        q.push(m);
      }
    }
  }
  if (flatCount === 0) {
    return { directions: dirs, resolvedCount: 0, flatCount: 0, unresolvedCount: 0 };
  }

  // 2. Low edges (cells with a direction or outlets, next to a flat cell of equal elevation) and high
  //    edges (flat cells next to a higher valid cell).
  const towards = new Int32Array(n); // steps to the nearest low edge (0 = not reached)
  const away = new Int32Array(n); // steps from the nearest high edge (0 = not reached)
  const lowQ = new CellQueue(1024);
  const highQ = new CellQueue(1024);
  const isLowEdge = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    if (nodata[i]) continue;
    const r = (i / w) | 0;
    const col = i - r * w;
    const flat = dirs[i] === D8_PIT;
    let low = false;
    let high = false;
    for (let k = 0; k < 8; k++) {
      const rr = r + D8_DROW[k];
      const cc = col + D8_DCOL[k];
      if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      const m = rr * w + cc;
      if (nodata[m]) continue;
      if (!flat && dirs[m] === D8_PIT && z[m] === z[i]) low = true;
      if (flat && z[m] > z[i]) high = true;
    }
    if (low) {
      isLowEdge[i] = 1;
      lowQ.push(i);
    }
    if (high) {
      away[i] = 1;
      highQ.push(i);
    }
  }

  // 3. Towards lower terrain: BFS from low edges into flat cells of the same elevation.
  while (lowQ.size > 0) {
    const c = lowQ.shift();
    const r = (c / w) | 0;
    const col = c - r * w;
    const d = towards[c];
    for (let k = 0; k < 8; k++) {
      const rr = r + D8_DROW[k];
      const cc = col + D8_DCOL[k];
      if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      const m = rr * w + cc;
      if (dirs[m] !== D8_PIT || towards[m] || z[m] !== z[c]) continue;
      towards[m] = d + 1;
      lowQ.push(m);
    }
  }
  // 4. Away from higher terrain: BFS from high edges within each flat.
  const maxAway = new Int32Array(flatCount + 1);
  while (highQ.size > 0) {
    const c = highQ.shift();
    const lc = label[c];
    const d = away[c];
    if (d > maxAway[lc]) maxAway[lc] = d;
    const r = (c / w) | 0;
    const col = c - r * w;
    for (let k = 0; k < 8; k++) {
      const rr = r + D8_DROW[k];
      const cc = col + D8_DCOL[k];
      if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      const m = rr * w + cc;
      if (label[m] !== lc || away[m]) continue;
      away[m] = d + 1;
      highQ.push(m);
    }
  }
  // 5. Combined gradient, then D8 on it within each flat.
  const mask = new Int32Array(n); // 0 on low edges (and elsewhere, unused)
  for (let i = 0; i < n; i++) {
    if (!label[i] || !towards[i]) continue;
    const inv = away[i] ? maxAway[label[i]] - away[i] : 0;
    mask[i] = 2 * towards[i] + inv;
  }
  const dist = d8Distances(spec);
  let resolved = 0;
  let unresolved = 0;
  for (let i = 0; i < n; i++) {
    const lc = label[i];
    if (!lc) continue;
    if (!towards[i]) {
      unresolved++;
      continue;
    }
    const r = (i / w) | 0;
    const col = i - r * w;
    let best = 0;
    let bestK = D8_PIT;
    for (let k = 0; k < 8; k++) {
      const rr = r + D8_DROW[k];
      const cc = col + D8_DCOL[k];
      if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      const m = rr * w + cc;
      let mm: number;
      if (label[m] === lc) mm = mask[m];
      else if (isLowEdge[m] && z[m] === z[i]) mm = 0;
      else continue;
      const g = (mask[i] - mm) / dist[k];
      if (g > best) {
        best = g;
        bestK = k;
      }
    }
    dirs[i] = bestK;
    if (bestK === D8_PIT) unresolved++;
    else resolved++;
  }
  return { directions: dirs, resolvedCount: resolved, flatCount, unresolvedCount: unresolved };
}

describe("resolveFlats — equal to the reference on random grids", () => {
  it("gives the same directions and counts as the first implementation on filled random terrain (formula)", () => {
    for (let seed = 1; seed <= 25; seed++) {
      const rnd = prng(700 + seed);
      const w = 4 + Math.floor(rnd() * 30);
      const h = 4 + Math.floor(rnd() * 30);
      const g = randomTerrain(seed, w, h, { nodataFraction: seed % 3 ? 0.08 : 0, quantum: seed % 2 ? 1 : 4, cellSizeY: seed % 2 ? 10 : 7 });
      const outlets = new Uint8Array(w * h);
      for (let c = 0; c < w; c++) if (!g.nodata[(h - 1) * w + c]) outlets[(h - 1) * w + c] = 1;
      if (!outlets.some((x) => x === 1)) continue;
      const fill = fillDepressions(g, outlets);
      const surface = { ...g, data: fill.filledM };
      const d8 = flowDirectionD8(surface, fill.outlets);
      const got = resolveFlats(surface, d8);
      const want = referenceResolveFlats(surface, d8);
      expect(got.flatCount, `seed ${seed}`).toBe(want.flatCount);
      expect(got.resolvedCount, `seed ${seed}`).toBe(want.resolvedCount);
      expect(got.unresolvedCount, `seed ${seed}`).toBe(want.unresolvedCount);
      expect(Array.from(got.directions), `seed ${seed}`).toEqual(Array.from(want.directions));
    }
  });
});
