/**
 * The Priority-Flood kernel shared by the spill elevation (flooding.ts, 4-connected) and depression
 * filling (fill.ts, 8-connected): raises every cell to the lowest level at which water from the seeds
 * reaches it (the minimax path elevation from the seeds).
 */
import type { Ticker } from "./grid";

/**
 * A binary min-heap of cell indices keyed by level, in typed arrays. No tie-break: the flood's result
 * does not depend on the order in which cells of equal level leave the heap.
 */
class LevelHeap {
  keys: Float64Array;
  cells: Int32Array;
  size = 0;
  constructor(capacity: number) {
    const c = Math.max(16, capacity);
    this.keys = new Float64Array(c);
    this.cells = new Int32Array(c);
  }
  push(cell: number, key: number): void {
    if (this.size === this.keys.length) {
      const k = new Float64Array(this.keys.length * 2);
      k.set(this.keys);
      const e = new Int32Array(this.cells.length * 2);
      e.set(this.cells);
      this.keys = k;
      this.cells = e;
    }
    const keys = this.keys;
    const cells = this.cells;
    let i = this.size++;
    while (i > 0) {
      const p = (i - 1) >> 1;
      const pk = keys[p];
      if (pk <= key) break;
      keys[i] = pk;
      cells[i] = cells[p];
      i = p;
    }
    keys[i] = key;
    cells[i] = cell;
  }
  pop(): number {
    const keys = this.keys;
    const cells = this.cells;
    const top = cells[0];
    const n = --this.size;
    if (n > 0) {
      const k = keys[n];
      const c = cells[n];
      let i = 0;
      for (;;) {
        let m = 2 * i + 1;
        if (m >= n) break;
        if (m + 1 < n && keys[m + 1] < keys[m]) m++;
        if (keys[m] >= k) break;
        keys[i] = keys[m];
        cells[i] = cells[m];
        i = m;
      }
      keys[i] = k;
      cells[i] = c;
    }
    return top;
  }
}

/** A growable stack of cell indices. */
function grown(a: Int32Array): Int32Array {
  const b = new Int32Array(a.length * 2);
  b.set(a);
  return b;
}

/** A full FIFO ring (items head..tail-1, positions masked by its power-of-two length) laid out from 0 in one twice as long. */
function unwrap(a: Int32Array, head: number, tail: number): Int32Array {
  const mask = a.length - 1;
  const b = new Int32Array(a.length * 2);
  for (let i = head, j = 0; i < tail; i++, j++) b[j] = a[i & mask];
  return b;
}

/** Seeds and working state of one flood; `flood` may be called again after adding more seeds. */
export class PriorityFlood {
  private readonly heap: LevelHeap;
  private pit: Int32Array;
  private slope: Int32Array;
  /** Cells reached so far (seeds included). */
  reached = 0;
  /** Cells raised above their own elevation. */
  raised = 0;

  /**
   * @param level elevation on entry (valid cells), the flooded level on return; cells never reached
   *   keep their elevation
   * @param done 1 on cells that take no part (nodata) and on seeds; 1 on every cell reached on return
   * @param connectivity 4 (edge neighbours) or 8 (edge and corner neighbours)
   */
  constructor(
    private readonly level: Float32Array,
    private readonly done: Uint8Array,
    private readonly width: number,
    private readonly height: number,
    private readonly connectivity: 4 | 8,
    private readonly ticker?: Ticker,
  ) {
    this.heap = new LevelHeap(4 * (width + height));
    this.pit = new Int32Array(1024);
    this.slope = new Int32Array(1024);
  }

  /** Adds a seed (its `done` flag must already be set): water enters here at the cell's own level. */
  seed(cell: number): void {
    this.heap.push(cell, this.level[cell]);
    this.reached++;
  }

  /**
   * Floods from the seeds until no undone cell can be reached.
   *
   * Barnes, R., Lehman, C. & Mulla, D. (2014) "Priority-Flood: An optimal depression-filling and
   * watershed-labeling algorithm for digital elevation models", Computers & Geosciences 62: 117–127,
   * doi:10.1016/j.cageo.2013.04.024, Algorithm 2 (improved Priority-Flood: a cell reached at or below
   * the current level lies in a depression, takes that level and goes to a plain stack, not the heap),
   * with the variant of Zhou, G., Sun, Z. & Fu, S. (2016) "An efficient variant of the Priority-Flood
   * algorithm for filling depressions in raster digital elevation models", Computers & Geosciences
   * 90(A): 87–96, doi:10.1016/j.cageo.2016.02.021: a cell reached from below keeps its own elevation
   * (final at once), and so does every undone neighbour at or above it, so slopes are traced upwards
   * through a FIFO queue; a traced cell enters the heap (keyed by its level) only when it has a lower
   * undone neighbour that no done cell below that neighbour will reach anyway (Zhou et al.'s "true
   * border" test). Both queues are emptied before each heap pop, so depression cells still take their
   * levels in level order. The levels are the unique minimax path elevations from the seeds, whatever
   * the order of cells in the queues (priority-flood.test.ts holds them to a brute-force relaxation).
   * Complexity O(n log n) worst case, O(n + h log h) for h cells that enter the heap (about 1–3 % on
   * the benchmark shelf).
   */
  flood(): void {
    const level = this.level;
    const done = this.done;
    const heap = this.heap;
    const w = this.width;
    const h = this.height;
    const eight = this.connectivity === 8;
    const nk = eight ? 8 : 4;
    // neighbour offsets and their row/column steps, 8-connected in D8 order, 4-connected E S W N
    const dr = eight ? [0, 1, 1, 1, 0, -1, -1, -1] : [0, 1, 0, -1];
    const dc = eight ? [1, 1, 0, -1, -1, -1, 0, 1] : [1, 0, -1, 0];
    const off = new Int32Array(nk);
    for (let k = 0; k < nk; k++) off[k] = dr[k] * w + dc[k];
    const DR = Int32Array.from(dr);
    const DC = Int32Array.from(dc);
    let pit = this.pit;
    let slope = this.slope;
    let np = 0;
    // the trace queue: a FIFO ring (power-of-two length) with running head and tail counters
    let sh = 0;
    let st = 0;
    let mask = slope.length - 1;
    let reached = this.reached;
    let raised = this.raised;
    const ticker = this.ticker;
    for (;;) {
      let c: number;
      let traced: boolean;
      if (np > 0) {
        c = pit[--np];
        traced = false;
      } else if (st !== sh) {
        c = slope[sh++ & mask];
        traced = true;
      } else if (heap.size > 0) {
        c = heap.pop();
        traced = false;
      } else break;
      const L = level[c];
      const r = (c / w) | 0;
      const col = c - r * w;
      const inside = r > 0 && r < h - 1 && col > 0 && col < w - 1;
      if (traced) {
        // c keeps its own elevation L: neighbours at or above it are final at their own elevation
        let inHeap = false;
        // two cells or more from every edge: c's neighbours and theirs are all inside the grid
        const deep = r > 1 && r < h - 2 && col > 1 && col < w - 2;
        for (let k = 0; k < nk; k++) {
          let rr = 0;
          let cc = 0;
          if (!deep) {
            rr = r + DR[k];
            cc = col + DC[k];
            if (!inside && (rr < 0 || rr >= h || cc < 0 || cc >= w)) continue;
          }
          const m = c + off[k];
          if (done[m] !== 0) continue;
          const zm = level[m];
          if (zm >= L) {
            done[m] = 1;
            reached++;
            slope[st++ & mask] = m;
            if (st - sh > mask) {
              slope = unwrap(slope, sh, st);
              st -= sh;
              sh = 0;
              mask = slope.length - 1;
            }
          } else if (!inHeap) {
            // a lower neighbour that a done cell below it will reach anyway needs nothing from c
            const inner = deep || (rr > 0 && rr < h - 1 && cc > 0 && cc < w - 1);
            let covered = false;
            for (let q = 0; q < nk; q++) {
              if (!inner) {
                const r2 = rr + DR[q];
                const c2 = cc + DC[q];
                if (r2 < 0 || r2 >= h || c2 < 0 || c2 >= w) continue;
              }
              const x = m + off[q];
              if (done[x] !== 0 && level[x] < zm) {
                covered = true;
                break;
              }
            }
            if (!covered) {
              heap.push(c, L);
              inHeap = true;
            }
          }
        }
      } else {
        for (let k = 0; k < nk; k++) {
          if (!inside) {
            const rr = r + DR[k];
            const cc = col + DC[k];
            if (rr < 0 || rr >= h || cc < 0 || cc >= w) continue;
          }
          const m = c + off[k];
          if (done[m] !== 0) continue;
          done[m] = 1;
          reached++;
          const zm = level[m];
          if (zm <= L) {
            if (zm < L) {
              raised++;
              level[m] = L;
            }
            if (np === pit.length) pit = grown(pit);
            pit[np++] = m;
          } else {
            slope[st++ & mask] = m;
            if (st - sh > mask) {
              slope = unwrap(slope, sh, st);
              st -= sh;
              sh = 0;
              mask = slope.length - 1;
            }
          }
        }
      }
      ticker?.tick(reached);
    }
    this.pit = pit;
    this.slope = slope;
    this.reached = reached;
    this.raised = raised;
  }
}
