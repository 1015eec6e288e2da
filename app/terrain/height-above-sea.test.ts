import { describe, expect, it } from "vitest";
import { heightAboveSea } from "./height-above-sea.ts";

describe("heightAboveSea", () => {
  it("subtracts relative sea level, keeping nodata", () => {
    const z = Float32Array.of(-42, -39.01, 5, NaN);
    // (formula, check-values) esl(10 ka) = −39.01 m: a −42.0 m surface lies 2.99 m below the sea
    const h = heightAboveSea(z, -39.01);
    expect(h[0]).toBeCloseTo(-2.99, 4);
    expect(h[1]).toBeCloseTo(0, 4);
    expect(h[2]).toBeCloseTo(44.01, 4);
    expect(Number.isNaN(h[3])).toBe(true);
  });

  it("takes a per-cell sea-level grid and a nodata mask", () => {
    // (formula, check-values) esl(10 ka) −39.01 with u = −1 mm/yr → RSL −49.01 m
    const h = heightAboveSea(Float32Array.of(-42, -50, 0), Float32Array.of(-49.01, -49.01, -39.01), Uint8Array.of(0, 0, 1));
    expect(h[0]).toBeCloseTo(7.01, 4);
    expect(h[1]).toBeCloseTo(-0.99, 4);
    expect(Number.isNaN(h[2])).toBe(true);
  });
});
