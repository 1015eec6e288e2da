/**
 * A target-group background for the trained model (design §4, issue 10): background cells are drawn
 * only from where searches actually happened — the union of survey-line corridors, dredging areas
 * and cored areas, given as one search-effort mask — so the background carries the same search bias
 * as the presences, and only from cells that were land at the age each presence is compared at.
 *
 * Phillips, S.J., Dudík, M., Elith, J., Graham, C.H., Lehmann, A., Leathwick, J. & Ferrier, S. (2009)
 * "Sample selection bias and presence-only distribution models: implications for background and
 * pseudo-absence data", Ecological Applications 19(1), 181–197.
 * Knuth, D.E. (1997) The Art of Computer Programming, vol. 2, 3rd ed., §3.4.2, Algorithm S
 * (selection sampling: m of N without replacement, in one pass, in order).
 */
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";

/**
 * Knuth (1997) TAOCP vol. 2 §3.4.2, Algorithm S.
 *
 * Chooses m of the N items whose `eligible(i)` is true, without replacement, each m-subset equally
 * likely; returns their indices ascending. `n` is how many items are eligible (counted beforehand).
 * Preconditions: 0 ≤ m ≤ n. O(length) time, O(m) memory.
 */
function selectionSample(length: number, n: number, m: number, eligible: (i: number) => boolean, rng: Mulberry32): Uint32Array {
  const out = new Uint32Array(m);
  let seen = 0;
  let chosen = 0;
  for (let i = 0; i < length && chosen < m; i++) {
    if (!eligible(i)) continue;
    if ((n - seen) * rng.next() < m - chosen) out[chosen++] = i;
    seen++;
  }
  return out;
}

/**
 * Knuth (1997) TAOCP vol. 2 §3.4.2, Algorithm S; common practice, no source, for its use here.
 *
 * m of the indices 0 … n − 1 without replacement, ascending, seeded — e.g. to cap a sample.
 * Preconditions: integers 0 ≤ m ≤ n, else {@link ScoringInputError}. O(n) time, O(m) memory.
 */
export function sampleIndices(n: number, m: number, seed: number): Uint32Array {
  if (!Number.isInteger(n) || !Number.isInteger(m) || m < 0 || m > n) throw new ScoringInputError(`Cannot choose ${m} of ${n} items.`);
  return selectionSample(n, n, m, () => true, new Mulberry32(seed));
}

export interface AgeLandMask {
  ageKa: number;
  /** 1 where the cell was land (as the caller defines it, e.g. land and intertidal) at this age */
  land: Uint8Array;
}

export interface BackgroundDraw {
  ageKa: number;
  /** background cells wanted at this age (share of the total in proportion to its presences) */
  requested: number;
  /** cells searched and land at this age — the pool the draw is taken from */
  available: number;
  /** chosen cell indices, ascending, without repetition */
  cells: Uint32Array;
}

/**
 * Phillips et al. (2009), Ecological Applications 19(1) (target-group background); Knuth (1997)
 * Algorithm S (sampling without replacement).
 *
 * Draws background cells from the search-effort mask, per age: the total `count` is shared among the
 * ages in proportion to the presences compared at each age (largest remainder; `presencesPerAge[a]`
 * sites at `landByAge[a].ageKa`), and each age's cells are drawn from cells with effort ≠ 0 AND land ≠ 0
 * at that age, without replacement. An age with fewer such cells than its share gives all it has
 * (`requested` vs `cells.length` shows the shortfall; nothing is moved to other ages).
 * A cell with a presence may be drawn as background, as in the paper's background (it is not an
 * absence). Cores without archaeological material play no part here: their cored areas are
 * searched ground inside the effort mask, nothing more.
 * Preconditions: every mask the same length; ages distinct; presence counts non-negative integers,
 * one per age, with a positive total; count a positive integer — else {@link ScoringInputError}.
 * Deterministic for a seed. Complexity O(n) per age (two passes), O(count) memory.
 */
export function targetGroupBackground(input: {
  effort: Uint8Array;
  landByAge: readonly AgeLandMask[];
  presencesPerAge: readonly number[];
  count: number;
  seed: number;
}): BackgroundDraw[] {
  const { effort, landByAge, presencesPerAge, count, seed } = input;
  if (!Number.isInteger(count) || count < 1) throw new ScoringInputError(`The background needs a positive whole number of cells (got ${count}).`, "background");
  if (landByAge.length === 0) throw new ScoringInputError("The background needs the land mask of at least one age.");
  if (presencesPerAge.length !== landByAge.length)
    throw new ScoringInputError(`Give one presence count per age (${landByAge.length} ages, ${presencesPerAge.length} counts).`);
  const seen = new Set<number>();
  let totalPresences = 0;
  for (let a = 0; a < landByAge.length; a++) {
    const { ageKa, land } = landByAge[a];
    if (land.length !== effort.length)
      throw new ScoringInputError(`The land mask at ${ageKa} ka covers ${land.length} cells but the search-effort mask ${effort.length}: they must come from the same grid.`);
    if (seen.has(ageKa)) throw new ScoringInputError(`The age ${ageKa} ka is given twice.`);
    seen.add(ageKa);
    const p = presencesPerAge[a];
    if (!Number.isInteger(p) || p < 0) throw new ScoringInputError(`The presence count at ${ageKa} ka must be a whole number ≥ 0 (got ${p}).`);
    totalPresences += p;
  }
  if (totalPresences === 0) throw new ScoringInputError("The background is drawn in proportion to the presences, and there are none.");
  // largest remainder
  const requested = presencesPerAge.map((p) => Math.floor((count * p) / totalPresences));
  let left = count - requested.reduce((s, x) => s + x, 0);
  const order = presencesPerAge
    .map((p, a) => ({ a, r: (count * p) / totalPresences - requested[a] }))
    .sort((x, y) => y.r - x.r || x.a - y.a);
  for (let j = 0; left > 0; j = (j + 1) % order.length, left--) requested[order[j].a]++;
  const rng = new Mulberry32(seed);
  const out: BackgroundDraw[] = [];
  for (let a = 0; a < landByAge.length; a++) {
    const { ageKa, land } = landByAge[a];
    let available = 0;
    for (let i = 0; i < effort.length; i++) if (effort[i] !== 0 && land[i] !== 0) available++;
    if (requested[a] === 0) {
      out.push({ ageKa, requested: 0, available, cells: new Uint32Array(0) });
      continue;
    }
    const m = Math.min(requested[a], available);
    const cells = selectionSample(effort.length, available, m, (i) => effort[i] !== 0 && land[i] !== 0, rng);
    out.push({ ageKa, requested: requested[a], available, cells });
  }
  return out;
}
