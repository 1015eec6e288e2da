// Lines traced from rasters for the map (design §8: path layers for shorelines and streams).
// Pure: typed arrays and sizes in, coordinates out (in cell units; the caller scales them).

/**
 * Boundary lines of a binary field by marching squares (Lorensen & Cline 1987, "Marching cubes",
 * SIGGRAPH '87 — its 2-D form): contours at 0.5 of the field sampled at cell centres, so the line
 * runs midway between an inside cell and an outside one. Saddles are split so that inside cells
 * connect diagonally (matching 8-connected regions). Segments are joined into polylines.
 *
 * Preconditions: `inside[i]` is 1 or 0 for cell i (row-major, row 0 north); cells outside the grid
 * count as outside, so regions touching the edge are closed along it. Returns polylines as flat
 * [col0, row0, col1, row1, …] arrays in cell-index coordinates, where (col, row) is the centre of
 * that cell and a vertex lies half a cell from the two centres it separates. O(width·height).
 */
export function traceBoundaries(inside: Uint8Array, width: number, height: number): number[][] {
  const at = (c: number, r: number) => (c >= 0 && r >= 0 && c < width && r < height ? inside[r * width + c] : 0);
  // Segment end points are edge midpoints of the dual grid; key them as integers for joining.
  // An edge midpoint between (c,r) and (c+1,r) is (c+0.5, r); between (c,r) and (c,r+1) is (c, r+0.5).
  const W = width + 2;
  const keyH = (c: number, r: number) => ((r + 1) * W + (c + 1)) * 2; // horizontal edge from (c,r) to (c+1,r)
  const keyV = (c: number, r: number) => ((r + 1) * W + (c + 1)) * 2 + 1; // vertical edge from (c,r) to (c,r+1)
  const pointOf = (k: number): [number, number] => {
    const cell = k >> 1;
    const c = (cell % W) - 1;
    const r = Math.floor(cell / W) - 1;
    return k & 1 ? [c, r + 0.5] : [c + 0.5, r];
  };
  const next = new Map<number, number[]>();
  const link = (a: number, b: number) => {
    (next.get(a) ?? next.set(a, []).get(a)!).push(b);
    (next.get(b) ?? next.set(b, []).get(b)!).push(a);
  };
  for (let r = -1; r < height; r++) {
    for (let c = -1; c < width; c++) {
      // square with corners tl (c,r), tr (c+1,r), br (c+1,r+1), bl (c,r+1)
      const tl = at(c, r), tr = at(c + 1, r), br = at(c + 1, r + 1), bl = at(c, r + 1);
      const code = (tl << 3) | (tr << 2) | (br << 1) | bl;
      if (code === 0 || code === 15) continue;
      const top = keyH(c, r), right = keyV(c + 1, r), bottom = keyH(c, r + 1), left = keyV(c, r);
      switch (code) {
        case 1: case 14: link(left, bottom); break;
        case 2: case 13: link(bottom, right); break;
        case 3: case 12: link(left, right); break;
        case 4: case 11: link(top, right); break;
        case 6: case 9: link(top, bottom); break;
        case 7: case 8: link(left, top); break;
        case 5: link(left, top); link(bottom, right); break; // tr and bl inside: keep them joined diagonally
        case 10: link(top, right); link(left, bottom); break; // tl and br inside
      }
    }
  }
  const used = new Set<string>();
  const edgeKey = (a: number, b: number) => (a < b ? `${a}|${b}` : `${b}|${a}`);
  const lines: number[][] = [];
  const walk = (start: number) => {
    const pts = [start];
    let prev = -1;
    let cur = start;
    for (;;) {
      const nb = (next.get(cur) ?? []).find((n) => n !== prev && !used.has(edgeKey(cur, n)));
      if (nb === undefined) break;
      used.add(edgeKey(cur, nb));
      pts.push(nb);
      prev = cur;
      cur = nb;
      if (cur === start) break;
    }
    if (pts.length > 1) lines.push(pts.flatMap(pointOf));
  };
  // Open chains first (from points with one neighbour), then closed rings.
  for (const [k, ns] of next) if (ns.length === 1) walk(k);
  for (const [k, ns] of next) if (ns.some((n) => !used.has(edgeKey(k, n)))) walk(k);
  return lines;
}

/**
 * Stream lines from D8 directions and a stream-order layer: each stream cell joins its downstream
 * neighbour's centre; chains of one Strahler order are merged into one polyline, ending where the
 * order changes, at a confluence, or where the stream leaves the stream network (at the sea).
 *
 * Preconditions: D8 codes 0–7 as in flow-direction.ts (E, SE, S, SW, W, NW, N, NE; ≥ 8 none);
 * `order[i]` > 0 on stream cells (255 nodata counts as none). Returns { order, line } with line as
 * flat [col, row, …] of cell centres. O(width·height).
 */
export function traceStreams(direction: ArrayLike<number>, order: ArrayLike<number>, width: number, height: number): Array<{ order: number; line: number[] }> {
  const n = width * height;
  const DROW = [0, 1, 1, 1, 0, -1, -1, -1];
  const DCOL = [1, 1, 0, -1, -1, -1, 0, 1];
  const isStream = (i: number) => order[i] > 0 && order[i] !== 255;
  const down = new Int32Array(n).fill(-1);
  const upstreamCount = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    if (!isStream(i)) continue;
    const d = direction[i];
    if (d > 7) continue;
    const r = Math.floor(i / width) + DROW[d];
    const c = (i % width) + DCOL[d];
    if (r < 0 || c < 0 || r >= height || c >= width) continue;
    const j = r * width + c;
    down[i] = j;
    if (isStream(j)) upstreamCount[j]++;
  }
  const out: Array<{ order: number; line: number[] }> = [];
  const visited = new Uint8Array(n);
  // Follows one chain downstream from `start` while the order holds and no other stream joins.
  const chainFrom = (start: number) => {
    let cur = start;
    const ord = order[start];
    const line = [cur % width, Math.floor(cur / width)];
    visited[cur] = 1;
    for (;;) {
      const j = down[cur];
      if (j < 0) break;
      line.push(j % width, Math.floor(j / width));
      if (!isStream(j) || visited[j] || order[j] !== ord || upstreamCount[j] !== 1) break;
      visited[j] = 1;
      cur = j;
    }
    out.push({ order: ord, line });
  };
  // A chain starts at a head (no upstream stream cell) or below a confluence; any cell not reached
  // from those (where the order changes below a single upstream cell) starts a chain of its own.
  for (let i = 0; i < n; i++) if (isStream(i) && !visited[i] && upstreamCount[i] !== 1) chainFrom(i);
  for (let i = 0; i < n; i++) if (isStream(i) && !visited[i]) chainFrom(i);
  return out;
}
