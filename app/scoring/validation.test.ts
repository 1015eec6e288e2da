import { describe, expect, it } from "vitest";
import {
  bootstrapAuc,
  bootstrapGain,
  classTallies,
  gainByClass,
  hanleyMcNeilStandardError,
  kvammeGain,
  rocAuc,
  rocAucFromCounts,
  siteCaptureCurve,
} from "./validation.ts";
import { Mulberry32 } from "./random.ts";
import { ScoringInputError } from "./errors.ts";

const SITES = [0.9, 0.8, 0.7, 0.6, 0.35];
const BACKGROUND = [0.75, 0.5, 0.4, 0.3, 0.2, 0.1, 0.65, 0.55, 0.25, 0.15];

/** the definition, pair by pair: O(n_p·n_b) */
function bruteAuc(p: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < p.length; i++) for (let j = 0; j < b.length; j++) s += p[i] > b[j] ? 1 : p[i] === b[j] ? 0.5 : 0;
  return s / (p.length * b.length);
}

describe("Kvamme's gain", () => {
  it("single class check values", () => {
    expect(kvammeGain(0.2, 0.6)).toBeCloseTo(0.6667, 4); // (formula) check-values.md
    expect(kvammeGain(0.3, 0.3)).toBe(0); // (formula) equal shares → 0
    expect(kvammeGain(0.5, 0.25)).toBeCloseTo(-1, 12); // (formula) check-values.md
    expect(kvammeGain(0.2, 0)).toBe(-Infinity);
    expect(kvammeGain(0, 0)).toBeNaN();
    expect(() => kvammeGain(1.2, 0.5)).toThrow(ScoringInputError);
  });

  it("three zones 0.10 / 0.30 / 0.60 holding 24 / 12 / 4 of 40 sites", () => {
    const t = gainByClass([0.1, 0.3, 0.6], [24, 12, 4]);
    // (formula) check-values.md: per zone 0.8333 / 0 / −5.0; cumulative 0.8333 / 0.5556 / 0
    expect(t.gain[0]).toBeCloseTo(0.8333, 4);
    expect(t.gain[1]).toBeCloseTo(0, 12);
    expect(t.gain[2]).toBeCloseTo(-5, 12);
    expect(t.cumulativeGain[0]).toBeCloseTo(0.8333, 4);
    expect(t.cumulativeGain[1]).toBeCloseTo(0.5556, 4);
    expect(t.cumulativeGain[2]).toBe(0);
    expect(t.sites).toBe(40);
    // areas in cells give the same shares
    const cells = gainByClass([1000, 3000, 6000], [24, 12, 4]);
    expect(cells.cumulativeGain[1]).toBeCloseTo(0.5556, 4); // (formula) check-values.md
  });

  it("refuses empty or impossible inputs with a message", () => {
    expect(() => gainByClass([1, 2], [0, 0])).toThrow(/at least one site/);
    expect(() => gainByClass([0, 0], [1, 0])).toThrow(/none of the cells has a score/);
    expect(() => gainByClass([1, -2], [1, 0])).toThrow(/class 2/);
    expect(() => gainByClass([1, 2], [1])).toThrow(/one site count per class/);
  });

  it("tallies cells and sites under fixed thresholds", () => {
    const cells = Float32Array.from([0.95, 0.8, 0.7, 0.5, 0.2, NaN, 0.1, 0.69]);
    // thresholds 0.7 and 0.4: high ≥ 0.7, medium 0.4–0.7, low < 0.4; the Float32 cell 0.7 counts as high
    const t = classTallies(cells, [0.9, 0.45, 0.1, NaN], [0.7, 0.4]);
    expect(Array.from(t.cells)).toEqual([3, 2, 2]);
    expect(Array.from(t.sites)).toEqual([1, 1, 1]);
    expect(t.unscoredSites).toBe(1);
    expect(() => classTallies(cells, [], [0.4, 0.7])).toThrow(/must decrease/);
  });
});

describe("site-capture curve", () => {
  it("steps at each distinct site score (hand-worked)", () => {
    // 10 cells 0.1…1.0; sites at 0.9, 0.9, 0.5, 0.2
    const cells = Float32Array.from({ length: 10 }, (_, i) => (i + 1) / 10);
    const c = siteCaptureCurve(cells, [0.5, 0.9, 0.2, 0.9]); // doubles, met as Float32 like the cells
    // (formula) ≥ 0.9: 2 of 10 cells, 2 of 4 sites; ≥ 0.5: 6 cells, 3 sites; ≥ 0.2: 9 cells, 4 sites
    expect(Array.from(c.areaShare)).toEqual([0, 0.2, 0.6, 0.9, 1]);
    expect(Array.from(c.siteShare)).toEqual([0, 0.5, 0.75, 1, 1]);
    expect(c.thresholds[0]).toBe(Infinity);
  });

  it("lies on or above the diagonal at the thresholds when sites score above the cells", () => {
    const rng = new Mulberry32(3);
    const cells = Float32Array.from({ length: 500 }, () => rng.next());
    const sites = Array.from({ length: 30 }, () => Math.fround(0.5 + 0.5 * rng.next()));
    const c = siteCaptureCurve(cells, sites);
    for (let k = 1; k < c.areaShare.length; k++) {
      expect(c.areaShare[k]).toBeGreaterThanOrEqual(c.areaShare[k - 1]);
      expect(c.siteShare[k]).toBeGreaterThanOrEqual(c.siteShare[k - 1]);
    }
    // (formula) every site ≥ 0.5, so all sites are captured within the cells ≥ 0.5 (about half)
    const all = Array.from(c.siteShare).indexOf(1);
    expect(c.areaShare[all]).toBeLessThan(0.6);
  });
});

describe("ROC AUC", () => {
  it("the check-values example → 0.84", () => {
    expect(rocAuc(SITES, BACKGROUND)).toBeCloseTo(0.84, 12); // (formula) check-values.md, Hanley & McNeil 1982
  });

  it("ties count ½ (hand-worked) and equals the pairwise definition on tied random data", () => {
    // (formula) sites {1, 0.5} vs background {0.5, 0}: pairs 1>0.5, 1>0, 0.5=0.5 (½), 0.5>0 → 3.5/4
    expect(rocAuc([1, 0.5], [0.5, 0])).toBeCloseTo(0.875, 12);
    expect(rocAuc([0.5], [0.5])).toBe(0.5);
    const rng = new Mulberry32(9);
    for (let trial = 0; trial < 20; trial++) {
      const p = Array.from({ length: 1 + rng.nextInt(40) }, () => rng.nextInt(8) / 8);
      const b = Array.from({ length: 1 + rng.nextInt(200) }, () => rng.nextInt(8) / 8);
      expect(rocAuc(p, b)).toBeCloseTo(bruteAuc(p, b), 12); // (formula) the definition
    }
  });

  it("from counts equals the expanded samples", () => {
    const pv = Float64Array.from([0.2, 0.5, 0.9]);
    const pc = Uint32Array.from([1, 0, 3]);
    const bv = Float64Array.from([0.1, 0.5, 0.9, 1]);
    const bc = Uint32Array.from([4, 2, 1, 1]);
    const expand = (v: Float64Array, c: Uint32Array) => Array.from(v).flatMap((x, i) => new Array<number>(c[i]).fill(x));
    expect(rocAucFromCounts(pv, pc, bv, bc)).toBeCloseTo(bruteAuc(expand(pv, pc), expand(bv, bc)), 12); // (formula)
    expect(() => rocAucFromCounts(Float64Array.from([0.5, 0.2]), Uint32Array.from([1, 1]), bv, bc)).toThrow(/ascending/);
  });

  it("refuses samples without scores", () => {
    expect(() => rocAuc([0.5, NaN], [0.1])).toThrow(/Site 2 has no score/);
    expect(() => rocAuc([], [0.1])).toThrow(ScoringInputError);
  });
});

describe("bootstrap intervals", () => {
  it("AUC: reproducible for a seed, containing the estimate, with an SE close to Hanley & McNeil's", () => {
    const rng = new Mulberry32(21);
    // presences shifted up by 0.25 against uniform background
    const p = Array.from({ length: 60 }, () => 0.25 + rng.next());
    const b = Array.from({ length: 240 }, () => rng.next());
    const a = bootstrapAuc(p, b, { seed: 5, replicates: 2000 });
    const again = bootstrapAuc(p, b, { seed: 5, replicates: 2000 });
    expect(again).toEqual(a);
    expect(a.estimate).toBeCloseTo(rocAuc(p, b), 12);
    expect(a.lower).toBeLessThan(a.estimate);
    expect(a.upper).toBeGreaterThan(a.estimate);
    // (formula, approximate) Hanley & McNeil 1982 SE; the bootstrap SE should be within 20 %
    const se = hanleyMcNeilStandardError(a.estimate, 60, 240);
    expect(a.standardError / se).toBeGreaterThan(0.8);
    expect(a.standardError / se).toBeLessThan(1.2);
    // (formula) a 95 % percentile interval spans about ±1.96 SE
    expect((a.upper - a.lower) / (2 * 1.96 * se)).toBeGreaterThan(0.75);
    expect((a.upper - a.lower) / (2 * 1.96 * se)).toBeLessThan(1.25);
  });

  it("gain: intervals around the three-zone check values narrow with more sites", () => {
    const classes = (mult: number) => [
      ...new Array<number>(24 * mult).fill(0),
      ...new Array<number>(12 * mult).fill(1),
      ...new Array<number>(4 * mult).fill(2),
    ];
    const small = bootstrapGain(classes(1), [0.1, 0.3, 0.6], { seed: 1, replicates: 1000 });
    const large = bootstrapGain(classes(25), [0.1, 0.3, 0.6], { seed: 1, replicates: 1000 });
    expect(small.cumulativeGain[0].estimate).toBeCloseTo(0.8333, 4); // (formula) check-values.md
    expect(small.cumulativeGain[1].estimate).toBeCloseTo(0.5556, 4); // (formula) check-values.md
    for (const g of [small, large]) {
      expect(g.cumulativeGain[0].lower).toBeLessThanOrEqual(0.8334);
      expect(g.cumulativeGain[0].upper).toBeGreaterThanOrEqual(0.8333);
      expect(g.cumulativeGain[2].lower).toBe(0); // all area, all sites
    }
    const width = (g: typeof small) => g.cumulativeGain[1].upper - g.cumulativeGain[1].lower;
    // (formula) the spread shrinks about as 1/√n: 25 × the sites → about a fifth of the width
    expect(width(large) / width(small)).toBeGreaterThan(0.1);
    expect(width(large) / width(small)).toBeLessThan(0.35);
    expect(() => bootstrapGain([0, 3], [0.5, 0.5], { seed: 1 })).toThrow(/Site 2 is in class 3/);
    expect(() => bootstrapAuc([1], [0], { seed: 1, replicates: 2 })).toThrow(/10 to 100 000 replicates/);
  });
});
