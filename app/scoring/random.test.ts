import { describe, expect, it } from "vitest";
import { Mulberry32 } from "./random.ts";
import { prng } from "../terrain/test-utils.ts";

describe("Mulberry32", () => {
  it("matches the terrain tests' independent mulberry32 for the same seed", () => {
    // (practice) mulberry32 is a fixed published-in-code algorithm: two copies must agree draw by draw
    for (const seed of [0, 1, 42, 0xdeadbeef]) {
      const a = new Mulberry32(seed);
      const b = prng(seed);
      for (let k = 0; k < 100; k++) expect(a.next()).toBe(b());
    }
  });

  it("draws integers evenly in [0, n)", () => {
    const r = new Mulberry32(7);
    const counts = new Array<number>(10).fill(0);
    for (let k = 0; k < 100_000; k++) counts[r.nextInt(10)]++;
    // (formula) binomial SD √(10⁵·0.1·0.9) ≈ 95: every count within 5 SD of 10 000
    for (const c of counts) expect(Math.abs(c - 10_000)).toBeLessThan(475);
  });
});
