import { describe, expect, it } from "vitest";
import {
  applyCurve,
  controlPointNames,
  curveLookupTable,
  evaluateCurve,
  lookupCurve,
  quantisedCurveTable,
  validateCurve,
  type FactorCurve,
} from "./factor-curves.ts";
import { ScoringInputError } from "./errors.ts";

// check-values.md "Factor curves": decreasing curves, c = 500 m, d = 2000 m, at 750 / 1000 / 1500 m.
const linDown: FactorCurve = { kind: "linear", direction: "decreasing", fullUntil: 500, zeroAt: 2000 };
const sigDown: FactorCurve = { kind: "sigmoid", direction: "decreasing", fullUntil: 500, zeroAt: 2000 };
const jDown: FactorCurve = { kind: "j-shaped", direction: "decreasing", fullUntil: 500, halfAt: 2000 };

describe("factor curves: check values", () => {
  it("linear decreasing at 750 / 1000 / 1500 m", () => {
    // (formula) check-values.md, Eastman et al. 1995 / Malczewski 1999, curve definitions from memory
    expect(evaluateCurve(linDown, 750)).toBeCloseTo(0.8333, 4);
    expect(evaluateCurve(linDown, 1000)).toBeCloseTo(0.6667, 4);
    expect(evaluateCurve(linDown, 1500)).toBeCloseTo(0.3333, 4);
    // (formula) 1 up to c, 0 from d on
    expect(evaluateCurve(linDown, 400)).toBe(1);
    expect(evaluateCurve(linDown, 2000)).toBe(0);
    expect(evaluateCurve(linDown, 5000)).toBe(0);
  });

  it("sigmoid (cos²) decreasing at 750 / 1000 / 1500 m", () => {
    // (formula) check-values.md
    expect(evaluateCurve(sigDown, 750)).toBeCloseTo(0.933, 4);
    expect(evaluateCurve(sigDown, 1000)).toBeCloseTo(0.75, 4);
    expect(evaluateCurve(sigDown, 1500)).toBeCloseTo(0.25, 4);
    expect(evaluateCurve(sigDown, 2000)).toBeCloseTo(0, 12);
  });

  it("J-shaped decreasing: 0.9730 / 0.9000 / 0.6923, 0.5 at d, 0.2 at c + 2(d − c), never 0", () => {
    // (formula) check-values.md: 1 / (1 + ((x − c)/(d − c))²)
    expect(evaluateCurve(jDown, 750)).toBeCloseTo(0.973, 4);
    expect(evaluateCurve(jDown, 1000)).toBeCloseTo(0.9, 4);
    expect(evaluateCurve(jDown, 1500)).toBeCloseTo(0.6923, 4);
    expect(evaluateCurve(jDown, 2000)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(jDown, 500 + 2 * 1500)).toBeCloseTo(0.2, 12);
    expect(evaluateCurve(jDown, 1e7)).toBeGreaterThan(0);
  });

  it("increasing forms mirror the decreasing ones", () => {
    // (formula) mirror image about the midpoint: an increasing curve on [a, b] at a + b − x equals the
    // decreasing curve on [a, b] at x
    const pairs: [FactorCurve, FactorCurve][] = [
      [{ kind: "linear", direction: "increasing", zeroUntil: 500, fullAt: 2000 }, linDown],
      [{ kind: "sigmoid", direction: "increasing", zeroUntil: 500, fullAt: 2000 }, sigDown],
    ];
    for (const [up, down] of pairs)
      for (const x of [400, 750, 1000, 1500, 1999, 2500])
        expect(evaluateCurve(up, 2500 - x)).toBeCloseTo(evaluateCurve(down, x), 12);
    // (formula) increasing J-shaped: 0.5 at halfAt, 1 from fullAt, 0.2 at fullAt − 2(fullAt − halfAt)
    const jUp: FactorCurve = { kind: "j-shaped", direction: "increasing", halfAt: 10, fullAt: 20 };
    expect(evaluateCurve(jUp, 10)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(jUp, 20)).toBe(1);
    expect(evaluateCurve(jUp, 0)).toBeCloseTo(0.2, 12);
  });

  it("band: rising, plateau, falling", () => {
    const band: FactorCurve = { kind: "band", shape: "linear", zeroUntil: 0, fullAt: 10, fullUntil: 20, zeroAt: 40 };
    // (formula) linear flanks: 0.5 halfway up (5) and halfway down (30); 1 on the plateau; 0 outside
    expect(evaluateCurve(band, -1)).toBe(0);
    expect(evaluateCurve(band, 5)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(band, 15)).toBe(1);
    expect(evaluateCurve(band, 30)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(band, 35)).toBeCloseTo(0.25, 12);
    expect(evaluateCurve(band, 45)).toBe(0);
    const sig: FactorCurve = { ...band, shape: "sigmoid" };
    // (formula) sin²(π/4) = 0.5 halfway up; cos²(π/8) = 0.853553 a quarter of the way down
    expect(evaluateCurve(sig, 5)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(sig, 25)).toBeCloseTo(0.853553, 6);
    // a plateau of zero width is allowed
    expect(evaluateCurve({ ...band, fullUntil: 10 }, 10)).toBe(1);
  });

  it("aspect preference is circular, and flats get the stated value", () => {
    const south: FactorCurve = { kind: "aspect", preferredDeg: 180, widthDeg: 90, flatValue: 0.4 };
    // (formula) cos²(π/2 · δ/width): δ = 0 → 1, δ = 45 → 0.5, δ ≥ 90 → 0
    expect(evaluateCurve(south, 180)).toBeCloseTo(1, 12);
    expect(evaluateCurve(south, 135)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(south, 225)).toBeCloseTo(0.5, 12);
    expect(evaluateCurve(south, 0)).toBe(0);
    expect(evaluateCurve(south, NaN)).toBe(0.4);
    const north: FactorCurve = { kind: "aspect", preferredDeg: 0, widthDeg: 60, flatValue: 0 };
    // (formula) 350° and 10° are both 10° from north, across the 0/360 seam
    expect(evaluateCurve(north, 350)).toBeCloseTo(evaluateCurve(north, 10), 12);
    expect(evaluateCurve(north, 350)).toBeCloseTo(Math.cos((Math.PI / 2) * (10 / 60)) ** 2, 12);
    expect(evaluateCurve({ ...north, preferredDeg: 360 }, 359.5)).toBeCloseTo(evaluateCurve(north, 0.5), 12);
  });

  it("NaN stays NaN for every curve except aspect", () => {
    for (const c of [linDown, sigDown, jDown]) expect(evaluateCurve(c, NaN)).toBeNaN();
    const out = applyCurve(linDown, Float32Array.from([NaN, 750, 3000]));
    expect(out[0]).toBeNaN();
    expect(out[1]).toBeCloseTo(0.8333, 4); // (formula) check-values.md
    expect(out[2]).toBe(0);
  });
});

describe("factor curves: bad control points", () => {
  function message(curve: unknown): string {
    try {
      validateCurve(curve as FactorCurve);
    } catch (e) {
      expect(e).toBeInstanceOf(ScoringInputError);
      return (e as Error).message;
    }
    throw new Error("expected a ScoringInputError");
  }

  it("names the point out of order", () => {
    expect(message({ ...linDown, zeroAt: 400 })).toMatch(/"zeroAt" \(400\) must be greater than "fullUntil" \(500\)/);
    expect(message({ ...jDown, halfAt: 500 })).toMatch(/"halfAt"/);
    expect(message({ kind: "band", shape: "linear", zeroUntil: 0, fullAt: 10, fullUntil: 5, zeroAt: 40 })).toMatch(
      /"fullUntil" \(5\) must be at least "fullAt" \(10\)/,
    );
  });

  it("names a NaN or missing point", () => {
    expect(message({ ...sigDown, fullUntil: NaN })).toMatch(/"fullUntil" must be a finite number/);
    expect(message({ kind: "linear", direction: "increasing", zeroUntil: 1 })).toMatch(/"fullAt"/);
    expect(message({ kind: "aspect", preferredDeg: 90, widthDeg: 0, flatValue: 0.5 })).toMatch(/"widthDeg"/);
    expect(message({ kind: "aspect", preferredDeg: 90, widthDeg: 45, flatValue: 2 })).toMatch(/"flatValue"/);
    expect(message({ kind: "cubic" })).toMatch(/Unknown factor curve type "cubic"/);
  });

  it("every public function refuses a bad curve", () => {
    const bad = { ...linDown, zeroAt: 100 } as FactorCurve;
    expect(() => evaluateCurve(bad, 1)).toThrow(ScoringInputError);
    expect(() => applyCurve(bad, new Float32Array(1))).toThrow(ScoringInputError);
    expect(() => curveLookupTable(bad, 0, 1, 4)).toThrow(ScoringInputError);
  });

  it("control point names follow the curve type", () => {
    expect(controlPointNames(linDown)).toEqual(["fullUntil", "zeroAt"]);
    expect(controlPointNames(jDown)).toEqual(["fullUntil", "halfAt"]);
    expect(controlPointNames({ kind: "j-shaped", direction: "increasing", halfAt: 1, fullAt: 2 })).toEqual(["halfAt", "fullAt"]);
  });
});

describe("lookup tables", () => {
  const curves: { curve: FactorCurve; min: number; max: number; bound: (h: number) => number }[] = [
    // bounds from curveLookupTable's doc comment: flank length L = 1500 m, aspect width 90°
    { curve: linDown, min: 0, max: 3000, bound: (h) => h / (4 * 1500) },
    { curve: sigDown, min: 0, max: 3000, bound: (h) => (Math.PI ** 2 / 16) * (h / 1500) ** 2 },
    { curve: jDown, min: 0, max: 3000, bound: (h) => (h / 1500) ** 2 / 4 },
    { curve: { kind: "aspect", preferredDeg: 200, widthDeg: 90, flatValue: 0.5 }, min: 0, max: 360, bound: (h) => (Math.PI ** 2 / 16) * (h / 90) ** 2 },
  ];

  it("agrees with direct evaluation at the nodes (Float32 rounding)", () => {
    for (const { curve, min, max } of curves) {
      const n = 256;
      const t = curveLookupTable(curve, min, max, n);
      expect(t.length).toBe(n);
      for (let k = 0; k < n; k++) {
        const x = min + (k * (max - min)) / (n - 1);
        expect(Math.abs(t[k] - evaluateCurve(curve, x))).toBeLessThan(1e-7);
      }
    }
  });

  it("agrees with direct evaluation between nodes within the stated bound", () => {
    for (const { curve, min, max, bound } of curves) {
      const n = 256;
      const t = curveLookupTable(curve, min, max, n);
      const tol = bound((max - min) / (n - 1)) + 1e-7;
      expect(tol).toBeLessThan(2.5e-3);
      let worst = 0;
      for (let j = 0; j <= 10000; j++) {
        const x = min + ((max - min) * j) / 10000;
        worst = Math.max(worst, Math.abs(lookupCurve(t, min, max, x) - evaluateCurve(curve, x)));
      }
      expect(worst).toBeLessThanOrEqual(tol);
    }
  });

  it("quantised tables decode codes and keep nodata (or give flats their value)", () => {
    const q = { scale: 3000 / 254, offset: 0, nodataCode: 255 };
    const t = quantisedCurveTable(linDown, q);
    expect(t.length).toBe(256);
    for (let c = 0; c < 255; c++) expect(Math.abs(t[c] - evaluateCurve(linDown, c * q.scale))).toBeLessThan(1e-7);
    expect(t[255]).toBeNaN();
    const aspect: FactorCurve = { kind: "aspect", preferredDeg: 180, widthDeg: 90, flatValue: 0.3 };
    const ta = quantisedCurveTable(aspect, { scale: 360 / 65534, offset: 0, nodataCode: 65535 });
    expect(ta[65535]).toBeCloseTo(0.3, 6);
    expect(ta[Math.round(180 / (360 / 65534))]).toBeCloseTo(1, 6);
  });

  it("refuses a table it cannot build", () => {
    expect(() => curveLookupTable(linDown, 5, 5, 10)).toThrow(/min < max/);
    expect(() => curveLookupTable(linDown, 0, 5, 1)).toThrow(/at least 2/);
    expect(() => quantisedCurveTable(linDown, { scale: 0, offset: 0, nodataCode: 255 })).toThrow(ScoringInputError);
  });
});
