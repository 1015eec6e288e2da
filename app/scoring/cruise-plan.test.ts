import { describe, expect, it } from "vitest";
import { METRES_PER_SECOND_PER_KNOT, nearestNeighbourOrder, planCruise, type PlanPoint, routeLengthM, twoOpt } from "./cruise-plan.ts";
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";

function randomStations(rng: Mulberry32, k: number, size = 50_000): PlanPoint[] {
  return Array.from({ length: k }, () => ({ x: rng.next() * size, y: rng.next() * size }));
}

/** Every permutation's length, for the optimum on tiny cases. */
function bestByBruteForce(port: PlanPoint, s: PlanPoint[]): number {
  let best = Infinity;
  const perm = (rest: number[], acc: number[]) => {
    if (rest.length === 0) {
      best = Math.min(best, routeLengthM(port, s, acc));
      return;
    }
    rest.forEach((r, i) => perm([...rest.slice(0, i), ...rest.slice(i + 1)], [...acc, r]));
  };
  perm([...s.keys()], []);
  return best;
}

describe("route ordering", () => {
  it("converts knots with the international nautical mile", () => {
    // formula: 1 kn = 1852 m/h = 0.514444 m/s; 10 kn for 1 h = 18 520 m
    expect(METRES_PER_SECOND_PER_KNOT).toBeCloseTo(0.514444, 6);
  });

  it("visits a row of stations in order from the nearest", () => {
    const port = { x: 0, y: 0 };
    const s = [{ x: 3000, y: 0 }, { x: 1000, y: 0 }, { x: 2000, y: 0 }];
    expect(nearestNeighbourOrder(port, s)).toEqual([1, 2, 0]);
    // formula: out 3 km and back 3 km
    expect(routeLengthM(port, s, [1, 2, 0])).toBe(6000);
    expect(routeLengthM(port, s, [])).toBe(0);
  });

  it("untangles a crossing: 2-opt finds the square's perimeter", () => {
    // formula: port at a corner of a 1 km square, stations on the others; the crossing order is 2 + 2√2 km
    // (two sides, two diagonals), the perimeter 4 km
    const port = { x: 0, y: 0 };
    const s = [{ x: 1000, y: 1000 }, { x: 1000, y: 0 }, { x: 0, y: 1000 }];
    const crossing = [1, 2, 0];
    expect(routeLengthM(port, s, crossing)).toBeCloseTo(2000 + 2000 * Math.SQRT2, 6);
    expect(routeLengthM(port, s, twoOpt(port, s, crossing))).toBeCloseTo(4000, 6);
  });

  it("2-opt never lengthens a route, whatever order it starts from (property)", () => {
    // Croes (1958): every accepted move strictly shortens; summation order may differ by rounding (1e-9 relative)
    const rng = new Mulberry32(99);
    for (let t = 0; t < 80; t++) {
      const k = 1 + rng.nextInt(40);
      const s = randomStations(rng, k);
      const port = { x: rng.next() * 50_000, y: rng.next() * 50_000 };
      const start = [...s.keys()];
      for (let i = k - 1; i > 0; i--) {
        const j = rng.nextInt(i + 1);
        [start[i], start[j]] = [start[j], start[i]];
      }
      for (const order of [start, nearestNeighbourOrder(port, s)]) {
        const before = routeLengthM(port, s, order);
        const after = twoOpt(port, s, order);
        expect([...after].sort((a, b) => a - b)).toEqual([...s.keys()]);
        expect(routeLengthM(port, s, after)).toBeLessThanOrEqual(before * (1 + 1e-9));
      }
    }
  });

  it("reaches the optimum on small cases often and never falls below it", () => {
    // common practice, no source: 2-opt is a local optimum, so it can only equal or exceed the brute-force optimum
    const rng = new Mulberry32(5);
    let optimal = 0;
    for (let t = 0; t < 30; t++) {
      const s = randomStations(rng, 6);
      const port = { x: 0, y: 0 };
      const best = bestByBruteForce(port, s);
      const got = routeLengthM(port, s, twoOpt(port, s, nearestNeighbourOrder(port, s)));
      expect(got).toBeGreaterThanOrEqual(best - 1e-6);
      if (got <= best + 1e-6) optimal++;
    }
    expect(optimal).toBeGreaterThan(20);
  });
});

describe("planCruise", () => {
  const settings = { speedKnots: 10, stationHours: 1, shipDays: 10, hoursPerDay: 24 };

  it("times transit at the speed and station time per core", () => {
    // formula: port → 18 520 m → back = 37 040 m at 10 kn (18 520 m/h) = 2 h, plus 1 h on station
    const plan = planCruise({ x: 0, y: 0 }, [{ x: 18_520, y: 0 }], settings);
    expect(plan.order).toEqual([0]);
    expect(plan.transitHours).toBeCloseTo(2, 9);
    expect(plan.totalHours).toBeCloseTo(3, 9);
    expect(plan.legs).toEqual([
      { from: -1, to: 0, distanceM: 18_520, hours: expect.closeTo(1, 9) },
      { from: 0, to: -1, distanceM: 18_520, hours: expect.closeTo(1, 9) },
    ]);
    expect(plan.fits).toBe(true);
  });

  it("keeps only the cores the ship days allow, and the plan always fits (property)", () => {
    const rng = new Mulberry32(123);
    for (let t = 0; t < 40; t++) {
      const k = 5 + rng.nextInt(40);
      const s = randomStations(rng, k, 100_000);
      const port = { x: -20_000, y: rng.next() * 100_000 };
      const st = { speedKnots: 6 + rng.next() * 6, stationHours: 0.5 + rng.next() * 2, shipDays: rng.next() * 3, hoursPerDay: rng.next() < 0.5 ? 24 : 12 };
      const plan = planCruise(port, s, st);
      const available = st.shipDays * st.hoursPerDay;
      expect(plan.availableHours).toBeCloseTo(available, 9);
      expect(plan.fits).toBe(true);
      expect(plan.totalHours).toBeLessThanOrEqual(available + 1e-9);
      expect([...plan.order, ...plan.dropped].sort((a, b) => a - b)).toEqual([...s.keys()]);
      // the hours add up: transit at the speed plus station time per kept core
      const len = routeLengthM(port, s, plan.order);
      expect(plan.totalDistanceM).toBeCloseTo(len, 6);
      expect(plan.totalHours).toBeCloseTo(len / (st.speedKnots * 1852) + plan.order.length * st.stationHours, 9);
      // no dropped core fits at its cheapest insertion into the final route
      for (const j of plan.dropped) {
        let cheapest = Infinity;
        for (let p = 0; p <= plan.order.length; p++) {
          const o = [...plan.order.slice(0, p), j, ...plan.order.slice(p)];
          cheapest = Math.min(cheapest, routeLengthM(port, s, o));
        }
        const hours = cheapest / (st.speedKnots * 1852) + (plan.order.length + 1) * st.stationHours;
        expect(hours).toBeGreaterThan(available - 1e-9);
      }
    }
  });

  it("drops cores when the days are short, and keeps all when they are long", () => {
    const s = Array.from({ length: 10 }, (_, i) => ({ x: 10_000 * (i + 1), y: 0 }));
    const long = planCruise({ x: 0, y: 0 }, s, settings);
    expect(long.order).toHaveLength(10);
    // formula: 12 h (half a day) at 10 kn (18.52 km/h) with 1 h per core along a line of stations 10 km apart:
    // 5 cores = 100 km out and back (5.40 h) + 5 h = 10.40 h fits; 6 cores = 120 km (6.48 h) + 6 h = 12.48 h does not
    const short = planCruise({ x: 0, y: 0 }, s, { ...settings, shipDays: 0.5 });
    expect(short.order.slice().sort((a, b) => a - b)).toEqual([0, 1, 2, 3, 4]);
    expect(short.dropped).toEqual([5, 6, 7, 8, 9]);
    const none = planCruise({ x: 0, y: 0 }, s, { ...settings, shipDays: 0 });
    expect(none.order).toEqual([]);
    expect(none.legs).toEqual([]);
  });

  it("refuses impossible settings with the field", () => {
    expect(() => planCruise({ x: 0, y: 0 }, [], { ...settings, speedKnots: 0 })).toThrow(ScoringInputError);
    expect(() => planCruise({ x: 0, y: 0 }, [], { ...settings, hoursPerDay: 30 })).toThrow(/between 0 and 24/);
    expect(() => planCruise({ x: 0, y: NaN }, [], settings)).toThrow(/port/);
  });
});
