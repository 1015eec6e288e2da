import { describe, expect, it } from "vitest";
import { sampleIndices, targetGroupBackground } from "./background.ts";
import { ScoringInputError } from "./errors.ts";

describe("target-group background (Phillips et al. 2009)", () => {
  const n = 400;
  const effort = new Uint8Array(n);
  for (let i = 0; i < n; i++) if (i % 20 < 6) effort[i] = 1; // survey corridors: columns 0–5 of a 20-wide grid
  const landOld = new Uint8Array(n).fill(1);
  const landYoung = new Uint8Array(n);
  for (let i = 0; i < n; i++) if (i % 20 < 3) landYoung[i] = 1; // the coast has moved west

  it("draws only searched cells that were land at the age, without repeats", () => {
    const draws = targetGroupBackground({ effort, landByAge: [{ ageKa: 12, land: landOld }, { ageKa: 10, land: landYoung }], presencesPerAge: [3, 1], count: 40, seed: 5 });
    for (const d of draws) {
      const land = d.ageKa === 12 ? landOld : landYoung;
      expect(new Set(d.cells).size).toBe(d.cells.length);
      for (const c of d.cells) {
        expect(effort[c]).toBe(1);
        expect(land[c]).toBe(1);
      }
      for (let j = 1; j < d.cells.length; j++) expect(d.cells[j]).toBeGreaterThan(d.cells[j - 1]);
    }
    // shared in proportion to the presences at each age (3 : 1 of 40)
    expect(draws.map((d) => d.requested)).toEqual([30, 10]);
    expect(draws.map((d) => d.cells.length)).toEqual([30, 10]);
    expect(draws.map((d) => d.available)).toEqual([120, 60]);
  });

  it("shares the remainder by largest remainder, lower age index first on a tie", () => {
    const draws = targetGroupBackground({ effort, landByAge: [{ ageKa: 12, land: landOld }, { ageKa: 10, land: landYoung }], presencesPerAge: [3, 1], count: 10, seed: 5 });
    // 7.5 and 2.5 → 8 and 2
    expect(draws.map((d) => d.requested)).toEqual([8, 2]);
  });

  it("gives every searched land cell when fewer exist than wanted, and says so", () => {
    const draws = targetGroupBackground({ effort, landByAge: [{ ageKa: 10, land: landYoung }], presencesPerAge: [5], count: 100, seed: 1 });
    expect(draws[0].requested).toBe(100);
    expect(draws[0].available).toBe(60);
    expect(draws[0].cells.length).toBe(60);
  });

  it("is reproducible from its seed and differs between seeds", () => {
    const go = (seed: number) => Array.from(targetGroupBackground({ effort, landByAge: [{ ageKa: 12, land: landOld }], presencesPerAge: [1], count: 20, seed })[0].cells);
    expect(go(3)).toEqual(go(3));
    expect(go(3)).not.toEqual(go(4));
  });

  it("draws every eligible cell equally often (selection sampling, Knuth Algorithm S)", () => {
    const hits = new Float64Array(n);
    const runs = 2000;
    for (let s = 0; s < runs; s++) {
      const d = targetGroupBackground({ effort, landByAge: [{ ageKa: 10, land: landYoung }], presencesPerAge: [1], count: 6, seed: s })[0];
      for (const c of d.cells) hits[c]++;
    }
    // each of the 60 cells: expected 2000 · 6/60 = 200 draws; binomial SD ≈ 13.4 (formula) — allow 5 SD
    for (let i = 0; i < n; i++) {
      if (effort[i] && landYoung[i]) expect(Math.abs(hits[i] - 200)).toBeLessThan(67);
      else expect(hits[i]).toBe(0);
    }
  });

  it("refuses masks of another grid, no presences, and a bad count", () => {
    const base = { effort, landByAge: [{ ageKa: 12, land: landOld }], presencesPerAge: [1], count: 5, seed: 1 };
    expect(() => targetGroupBackground({ ...base, landByAge: [{ ageKa: 12, land: new Uint8Array(10) }] })).toThrow(/same grid/);
    expect(() => targetGroupBackground({ ...base, presencesPerAge: [0] })).toThrow(/there are none/);
    expect(() => targetGroupBackground({ ...base, count: 0 })).toThrow(ScoringInputError);
    expect(() => targetGroupBackground({ ...base, presencesPerAge: [1, 2] })).toThrow(/one presence count per age/);
  });
});

describe("sampleIndices", () => {
  it("chooses m distinct indices in order", () => {
    const s = sampleIndices(100, 30, 2);
    expect(s.length).toBe(30);
    expect(new Set(s).size).toBe(30);
    for (let j = 1; j < s.length; j++) expect(s[j]).toBeGreaterThan(s[j - 1]);
    expect(Array.from(sampleIndices(5, 5, 1))).toEqual([0, 1, 2, 3, 4]);
    expect(() => sampleIndices(5, 6, 1)).toThrow(/Cannot choose/);
  });
});
