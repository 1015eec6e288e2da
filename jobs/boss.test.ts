import { describe, expect, it } from "vitest";
import { expiryForWorkSize } from "./boss.server";

describe("expiryForWorkSize", () => {
  it("gives small or unknown work 15 minutes", () => {
    expect(expiryForWorkSize()).toBe(900);
    expect(expiryForWorkSize(0)).toBe(900);
    expect(expiryForWorkSize(512 * 512 * 11)).toBe(900);
  });

  it("grows with the work: four times the time at 100 000 units per second", () => {
    // 4096² cells × 41 ages = 687,865,856 units: 6,879 s at that rate, × 4 = 27,515 s (7.6 h).
    expect(expiryForWorkSize(4096 * 4096 * 41)).toBe(Math.ceil((4 * 4096 * 4096 * 41) / 100_000));
    expect(expiryForWorkSize(2e9)).toBeGreaterThan(expiryForWorkSize(1e9));
  });

  it("stays under pg-boss 10's 24-hour limit", () => {
    expect(expiryForWorkSize(1e15)).toBe(23 * 3600);
  });
});
