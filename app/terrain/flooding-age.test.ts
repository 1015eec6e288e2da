import { describe, expect, it } from "vitest";
import {
  FLOOD_DROWNED_IN_WINDOW,
  FLOOD_LAND_AT_END,
  FLOOD_SEA_THROUGHOUT,
  floodingHistory,
  SortedLookup,
  countBelow,
} from "./flooding-age";
import { CLASS_LAND, CLASS_SEA, classifyAtAge, oceanBoundaryMask, spillElevation } from "./flooding";
import type { Grid } from "./grid";
import { type SeaLevelCurve, defaultGlobalCurve, parseSeaLevelCsv, seaLevelAt } from "./sea-level";
import { prng, spec } from "./test-utils";
import { surfaceBelowCover } from "./vertical-datum";

/** A 1-row "grid" of cells whose spill elevations we choose directly (elevation = spill). */
function cells(spills: number[]): { grid: Grid<Float32Array>; spill: Float32Array } {
  const n = spills.length;
  const grid = { spec: spec(n, 1), data: Float32Array.from(spills), nodata: new Uint8Array(n) };
  return { grid, spill: Float32Array.from(spills) };
}

/** Brute force over the curve's segments, forward in time (old → young): sea when L ≥ s. */
function bruteForce(curve: SeaLevelCurve, s: number) {
  const a = curve.ageKa;
  const L = curve.levelM;
  const k = a.length;
  let first = NaN;
  let final = NaN;
  let rate = NaN;
  let downs = 0;
  let sea = L[k - 1] >= s;
  if (sea) first = a[k - 1];
  for (let j = k - 2; j >= 0; j--) {
    // segment from a[j+1] (older) to a[j] (younger)
    const l0 = L[j + 1];
    const l1 = L[j];
    const seaEnd = l1 >= s;
    if (!sea && seaEnd) {
      const t = a[j + 1] + ((s - l0) / (l1 - l0)) * (a[j] - a[j + 1]);
      if (Number.isNaN(first)) first = t;
      final = t;
      rate = (l1 - l0) / (a[j + 1] - a[j]);
    }
    if (sea && !seaEnd) downs++;
    sea = seaEnd;
  }
  if (!sea) final = NaN;
  else if (Number.isNaN(final)) final = a[k - 1];
  return { first, final, rate, downs, seaAtEnd: sea, seaAtStart: L[k - 1] >= s };
}

describe("floodingHistory — flooding age against the sea-level curve", () => {
  const curve = defaultGlobalCurve();
  const model = { kind: "curve" as const, curve };

  it("a cell floods exactly when the sea level first reaches its spill elevation and re-emerges where the curve falls (random spills, brute force)", () => {
    const rnd = prng(42);
    const spills: number[] = [];
    for (let i = 0; i < 400; i++) spills.push(-140 + rnd() * 150);
    // spills inside the two falling stretches, where re-exposure happens
    for (let i = 0; i < 50; i++) spills.push(-117.2 + rnd() * 1.0, -90.5 + rnd() * 3.0);
    const { grid, spill } = cells(spills);
    const h = floodingHistory(grid, spill, model);
    let reexposed = 0;
    for (let i = 0; i < spills.length; i++) {
      const s = spill[i];
      const b = bruteForce(curve, s);
      if (Number.isNaN(b.first)) expect(Number.isNaN(h.firstFloodingAgeKa[i])).toBe(true);
      else expect(h.firstFloodingAgeKa[i]).toBeCloseTo(b.first, 4);
      expect(h.reexposures[i]).toBe(b.downs);
      if (b.downs > 0) reexposed++;
      if (!b.seaAtEnd) {
        expect(h.status[i]).toBe(FLOOD_LAND_AT_END);
        expect(Number.isNaN(h.floodingAgeKa[i])).toBe(true);
      } else if (b.seaAtStart && b.downs === 0) {
        expect(h.status[i]).toBe(FLOOD_SEA_THROUGHOUT);
      } else {
        expect(h.status[i]).toBe(FLOOD_DROWNED_IN_WINDOW);
        expect(h.floodingAgeKa[i]).toBeCloseTo(b.final, 4);
        expect(h.riseRateMPerKa[i]).toBeCloseTo(b.rate, 3);
        expect(h.riseRateMPerKa[i]).toBeGreaterThan(0);
        // (paper) the curve at the flooding age equals the spill elevation
        expect(seaLevelAt(curve, h.floodingAgeKa[i])).toBeCloseTo(s, 3);
      }
    }
    expect(reexposed).toBeGreaterThan(20); // (paper) the curve falls twice: those cells were re-exposed
  });

  it("floods, re-exposes and drowns a cell on a hand-made curve (formula)", () => {
    // rises −60 → −40 m (14 → 12 ka), falls to −50 m (10 ka), rises to 0 (present)
    const c = parseSeaLevelCsv("age_ka,rsl_m\n0,0\n10,-50\n12,-40\n14,-60\n", { name: "invented" });
    const { grid, spill } = cells([-45, -55, -35, -65]);
    const h = floodingHistory(grid, spill, { kind: "curve", curve: c }, { coastBandM: 2 });
    // (formula) spill −45: first reached at 14 − 2·15/20 = 12.5 ka, exposed again at 12 − 2·5/10 = 11 ka,
    // drowned for good at 10 − 10·5/50 = 9 ka while rising 5 m/ka
    expect(h.firstFloodingAgeKa[0]).toBeCloseTo(12.5, 6);
    expect(h.reexposures[0]).toBe(1);
    expect(h.floodingAgeKa[0]).toBeCloseTo(9, 6);
    expect(h.riseRateMPerKa[0]).toBeCloseTo(5, 6);
    expect(h.status[0]).toBe(FLOOD_DROWNED_IN_WINDOW);
    // (formula) within ±2 m of −45: 4 m at 10 m/ka on the first rise (0.4 ka), 4 m at 5 m/ka on the fall
    // (0.8 ka) and on the last rise (0.8 ka)
    expect(h.timeNearCoastKa[0]).toBeCloseTo(2.0, 6);
    // spill −55: never exposed again (the fall stops at −50): drowned at 14 − 2·5/20 = 13.5 ka
    expect(h.floodingAgeKa[1]).toBeCloseTo(13.5, 6);
    expect(h.reexposures[1]).toBe(0);
    // spill −35: only the final rise reaches it, at 10 − 10·15/50 = 7 ka
    expect(h.firstFloodingAgeKa[2]).toBeCloseTo(7, 6);
    expect(h.floodingAgeKa[2]).toBeCloseTo(7, 6);
    // spill −65: sea throughout the curve
    expect(h.status[3]).toBe(FLOOD_SEA_THROUGHOUT);
    expect(h.floodingAgeKa[3]).toBe(14);
  });

  it("time near the coast and in the intertidal band match a fine numerical integration", () => {
    const { grid, spill } = cells([-120, -60, -30, -5, -134, 0.5]);
    const h = floodingHistory(grid, spill, model, { coastBandM: 5, tidalRange: 4 });
    const dt = 0.0005;
    for (let i = 0; i < spill.length; i++) {
      let near = 0;
      let inter = 0;
      for (let t = dt / 2; t < 34.783; t += dt) {
        const L = seaLevelAt(curve, t);
        if (Math.abs(L - spill[i]) <= 5) near += dt;
        if (L >= spill[i] - 2 && L <= spill[i] + 2) inter += dt;
      }
      expect(Math.abs(h.timeNearCoastKa[i] - near)).toBeLessThan(0.01);
      expect(Math.abs(h.timeIntertidalKa[i] - inter)).toBeLessThan(0.01);
    }
    expect(h.timeNearCoastKa[5]).toBeGreaterThan(0); // the present coast
  });

  it("a seabed at −40.0 m under 2.0 m of sediment is a palaeo-surface at −42.0 m: sea at 10 ka, land at 11 ka", () => {
    // (formula) check-values.md
    const seabed = { spec: spec(3, 3), data: new Float32Array(9).fill(-40), nodata: new Uint8Array(9) };
    const surface = surfaceBelowCover(seabed, new Float32Array(9).fill(2));
    expect(surface.data[4]).toBe(-42);
    const b = oceanBoundaryMask(surface.spec, surface.nodata, { kind: "sides", sides: ["west"] });
    const sp = spillElevation(surface, b);
    const at = (age: number) => classifyAtAge(surface, sp, new Float32Array(9).fill(seaLevelAt(curve, age))).classes[4];
    expect(at(10)).toBe(CLASS_SEA);
    expect(at(11)).toBe(CLASS_LAND);
    const h = floodingHistory(surface, sp.spillM, model);
    expect(h.floodingAgeKa[4]).toBeGreaterThan(10);
    expect(h.floodingAgeKa[4]).toBeLessThan(11);
  });

  it("handles a window, spills never reached (+∞), regional curves and RSL grids", () => {
    const c2 = parseSeaLevelCsv("age_ka,rsl_m\n0,0\n10,-50\n20,-100\n", { name: "invented" });
    const { grid, spill } = cells([-75, -75, Infinity]);
    const zone = Uint8Array.from([0, 1, 1]);
    const h = floodingHistory(grid, spill, { kind: "regional", curves: [curve, c2], zone }, { windowKa: [0, 20] });
    expect(h.floodingAgeKa[1]).toBeCloseTo(15, 6); // (formula) −75 m on a straight 5 m/ka line
    expect(h.riseRateMPerKa[1]).toBeCloseTo(5, 6);
    expect(h.status[2]).toBe(FLOOD_LAND_AT_END);
    expect(h.timeNearCoastKa[2]).toBe(0);
    const grids = {
      kind: "grids" as const,
      label: "invented",
      citation: "",
      agesKa: Float64Array.of(0, 10, 20),
      levels: [new Float32Array(3).fill(0), new Float32Array(3).fill(-50), new Float32Array(3).fill(-100)],
    };
    const hg = floodingHistory(grid, spill, grids);
    expect(hg.floodingAgeKa[0]).toBeCloseTo(15, 5);
    expect(() => floodingHistory(grid, spill, model, { windowKa: [0, 40] })).toThrow(/outside the sea-level model/);
  });
});

describe("SortedLookup — bucketed countBelow", () => {
  it("gives the binary search's counts (below, at or below) for every kind of value (formula)", () => {
    const rnd = prng(4242);
    for (let t = 0; t < 60; t++) {
      const m = Math.floor(rnd() * 40);
      const vals: number[] = [];
      for (let k = 0; k < m; k++) vals.push(t % 3 === 0 ? Math.round(rnd() * 10) - 5 : (rnd() - 0.5) * 300); // ties when rounded
      if (t % 7 === 0 && m > 3) vals.push(vals[0], vals[0], vals[1]); // repeated entries
      const a = Float64Array.from(vals.sort((x, y) => x - y));
      const lk = new SortedLookup(a, t % 5 === 0 ? 0 : 1 + Math.floor(rnd() * 4 * (m + 1)));
      const probes = [NaN, Infinity, -Infinity, 0, -0, ...a, ...Array.from(a, (x) => x + 1e-9), ...Array.from(a, (x) => x - 1e-9)];
      for (let k = 0; k < 200; k++) probes.push((rnd() - 0.5) * 400);
      for (const x of probes) {
        expect(lk.countBelow(x), `table ${t}, x = ${x}`).toBe(countBelow(a, x));
        expect(lk.countAtOrBelow(x), `table ${t}, x = ${x}`).toBe(a.filter((y) => y <= x).length);
      }
    }
  });
});
