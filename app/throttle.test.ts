import { describe, expect, it } from "vitest";
import { THROTTLE, requiredWaitSeconds } from "./throttle";

const now = new Date("2026-12-01T12:00:00Z");
const ago = (s: number) => new Date(now.getTime() - s * 1000);

describe("requiredWaitSeconds", () => {
  it("asks nothing below the free allowance", () => {
    expect(requiredWaitSeconds(4, ago(0), now, 5)).toBe(0);
  });
  it("doubles the wait with each further failure, counted from the latest one", () => {
    expect(requiredWaitSeconds(5, ago(0), now, 5)).toBe(1);
    expect(requiredWaitSeconds(8, ago(0), now, 5)).toBe(8);
    expect(requiredWaitSeconds(8, ago(3), now, 5)).toBe(5);
    expect(requiredWaitSeconds(8, ago(9), now, 5)).toBe(0);
  });
  it("never asks more than the cap: slowed down, not locked out", () => {
    expect(requiredWaitSeconds(1000, ago(0), now, 5)).toBe(THROTTLE.maxWaitSeconds);
  });
});
