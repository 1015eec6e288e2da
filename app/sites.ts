// Generalising known-site positions for people who may not see them exactly (design §9): each
// position is snapped to the centre of a grid cell of `cellSizeM` (cells aligned to multiples of
// the cell size in the project CRS, so the grid does not move with the data), counts are taken per
// cell, and cells holding fewer than `minCount` sites are not shown at all (small-count
// suppression). Nothing else about a site goes out with a generalised cell.

export interface GeneralisedCell {
  /** Centre of the cell in the project CRS (m). */
  x: number;
  y: number;
  count: number;
}

export interface Generalised {
  cellSizeM: number;
  minCount: number;
  cells: GeneralisedCell[];
  /** Sites in cells below minCount, left out. */
  suppressed: number;
}

/** O(n) in the number of sites. */
export function generaliseSites(points: ReadonlyArray<{ x: number; y: number }>, cellSizeM: number, minCount: number): Generalised {
  if (!(cellSizeM > 0)) throw new Error("cellSizeM must be positive");
  const counts = new Map<string, GeneralisedCell>();
  for (const p of points) {
    const cx = (Math.floor(p.x / cellSizeM) + 0.5) * cellSizeM;
    const cy = (Math.floor(p.y / cellSizeM) + 0.5) * cellSizeM;
    const k = `${cx}|${cy}`;
    const c = counts.get(k);
    if (c) c.count++;
    else counts.set(k, { x: cx, y: cy, count: 1 });
  }
  const cells: GeneralisedCell[] = [];
  let suppressed = 0;
  for (const c of counts.values()) {
    if (c.count >= minCount) cells.push(c);
    else suppressed += c.count;
  }
  cells.sort((a, b) => b.y - a.y || a.x - b.x);
  return { cellSizeM, minCount, cells, suppressed };
}
