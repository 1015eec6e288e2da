/**
 * Drainage directions across flats left by plain depression filling.
 */
import {
  CellQueue,
  D8_DCOL,
  D8_DROW,
  D8_PIT,
  type Grid,
  type RunControl,
  Ticker,
  assertLayerSize,
  d8Distances,
} from "./grid";

export interface FlatResolution {
  /** Flow directions with flat cells resolved (a new array). */
  directions: Uint8Array;
  /** Number of flat cells given a direction. */
  resolvedCount: number;
  /** Number of flats (connected groups of equal-elevation cells with no lower neighbour). */
  flatCount: number;
  /** Cells left as D8_PIT (flats with no way out; none after Priority-Flood filling). */
  unresolvedCount: number;
}

/**
 * Gives every cell of a drainable flat a D8 direction, draining towards lower terrain and away from
 * higher terrain, so long flats do not get parallel artificial channels.
 *
 * Barnes, R., Lehman, C. & Mulla, D. (2014) "An efficient assignment of drainage direction over flat
 * surfaces in raster digital elevation models", Computers & Geosciences 62: 128–135,
 * doi:10.1016/j.cageo.2013.01.009. As in the paper, two breadth-first gradients are built on each flat:
 * steps towards lower terrain (from the flat's low edges) and steps away from higher terrain (from its
 * high edges, inverted so they grow away from it); their combination 2·towards + away is used as a
 * surface on which the flat cells take the D8 steepest descent (step difference divided by the
 * neighbour distance). The elevations themselves are not changed.
 *
 * Preconditions: `directions` from flowDirectionD8 on the plainly filled `surface` (flat cells are
 * D8_PIT); outlets carry D8_OUTLET and act as low edges when they share a flat's elevation. Flats
 * are 8-connected groups of D8_PIT cells of exactly equal elevation. Complexity O(n) time and memory.
 */
export function resolveFlats(surface: Grid<Float32Array>, directions: Uint8Array, control?: RunControl): FlatResolution {
  const { spec, data: z, nodata } = surface;
  const { width: w, height: h } = spec;
  const n = w * h;
  assertLayerSize(spec, directions, "flow directions");
  const dirs = directions.slice();
  const ticker = new Ticker(control, 4 * n, "flat resolution");
  ticker.start();

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
    ticker.tick(i);
  }
  if (flatCount === 0) {
    ticker.finish();
    return { directions: dirs, resolvedCount: 0, flatCount: 0, unresolvedCount: 0 };
  }

  // 2. Low edges (cells with a direction or outlets, next to a flat cell of equal elevation) and high
  //    edges (flat cells next to a higher valid cell).
  const towards = new Int32Array(n); // steps to the nearest low edge (0 = not reached)
  const away = new Int32Array(n); // steps from the nearest high edge (0 = not reached)
  const lowQ = new CellQueue(1024);
  const highQ = new CellQueue(1024);
  const isLowEdge = new Uint8Array(n);
  // Only flat cells and their neighbours can be edges, so only flat cells are visited: a flat cell is
  // a high edge if a neighbour is higher; a valid non-flat neighbour of equal elevation is a low edge.
  // (Multi-source breadth-first distances do not depend on the order the sources are queued in.)
  for (let i = 0; i < n; i++) {
    if (label[i] === 0) continue;
    const r = (i / w) | 0;
    const col = i - r * w;
    const zi = z[i];
    let high = false;
    for (let k = 0; k < 8; k++) {
      const rr = r + D8_DROW[k];
      const cc = col + D8_DCOL[k];
      if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
      const m = rr * w + cc;
      if (nodata[m]) continue;
      if (z[m] > zi) high = true;
      else if (dirs[m] !== D8_PIT && z[m] === zi && isLowEdge[m] === 0) {
        isLowEdge[m] = 1;
        lowQ.push(m);
      }
    }
    if (high) {
      away[i] = 1;
      highQ.push(i);
    }
    ticker.tick(n + i);
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
    ticker.tick(3 * n + i);
  }
  ticker.finish();
  return { directions: dirs, resolvedCount: resolved, flatCount, unresolvedCount: unresolved };
}

