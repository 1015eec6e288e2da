/**
 * The cruise plan (design §6, issue 11): the order in which a vessel visits the core targets, from a
 * port and back, the time it takes (transit at a speed, a station time per core), and how many cores
 * the ship days allow.
 *
 * Distances are straight lines in the project's projected CRS (metres). Over a shelf survey in its
 * own UTM zone the scale error is below about 0.1 % (UTM scale factor 0.9996 at the central
 * meridian, about 1.001 at the zone edge — practice); routes around land or hazards are not modelled.
 */
import { ScoringInputError } from "./errors.ts";

export interface PlanPoint {
  x: number;
  y: number;
}

/** 1 international knot = 1852 m per hour (the international nautical mile, 1929) → m/s. */
export const METRES_PER_SECOND_PER_KNOT = 1852 / 3600;

function d(a: PlanPoint, b: PlanPoint): number {
  return Math.hypot(a.x - b.x, a.y - b.y);
}

/**
 * Common practice, no source.
 *
 * Length of the closed route port → stations in `order` → port, m. O(k).
 */
export function routeLengthM(port: PlanPoint, stations: readonly PlanPoint[], order: readonly number[]): number {
  if (order.length === 0) return 0;
  let total = d(port, stations[order[0]]);
  for (let k = 1; k < order.length; k++) total += d(stations[order[k - 1]], stations[order[k]]);
  return total + d(stations[order[order.length - 1]], port);
}

/**
 * Rosenkrantz, D.J., Stearns, R.E. & Lewis, P.M. (1977) "An analysis of several heuristics for the
 * traveling salesman problem", SIAM J. Computing 6(3), 563–581 (nearest neighbour).
 *
 * From the port, always on to the nearest unvisited station (ties: the lower index). Returns station
 * indices in visiting order. O(k²).
 */
export function nearestNeighbourOrder(port: PlanPoint, stations: readonly PlanPoint[]): number[] {
  const k = stations.length;
  const used = new Uint8Array(k);
  const order: number[] = [];
  let at = port;
  for (let step = 0; step < k; step++) {
    let best = -1;
    let bestD = Infinity;
    for (let j = 0; j < k; j++) {
      if (used[j]) continue;
      const dj = d(at, stations[j]);
      if (dj < bestD) {
        bestD = dj;
        best = j;
      }
    }
    used[best] = 1;
    order.push(best);
    at = stations[best];
  }
  return order;
}

/**
 * Croes, G.A. (1958) "A method for solving traveling-salesman problems", Operations Research 6(6),
 * 791–812 (2-opt).
 *
 * Improves a closed route with the port fixed at both ends: reverses any stretch of the route whose
 * reversal shortens it by more than 1e-9 of the route length, until no reversal does (or `maxPasses`
 * passes). Every accepted move strictly shortens the route, so the result is never longer than the
 * input. Returns a new order. O(passes · k²).
 */
export function twoOpt(port: PlanPoint, stations: readonly PlanPoint[], order: readonly number[], maxPasses = 1000): number[] {
  const r = order.slice();
  const k = r.length;
  if (k < 3) return r;
  // positions 0..k+1: 0 and k+1 are the port
  const at = (p: number): PlanPoint => (p === 0 || p === k + 1 ? port : stations[r[p - 1]]);
  const eps = 1e-9 * Math.max(1, routeLengthM(port, stations, r));
  for (let pass = 0; pass < maxPasses; pass++) {
    let improved = false;
    for (let i = 0; i < k; i++) {
      for (let j = i + 2; j <= k; j++) {
        // edges (i, i+1) and (j, j+1) → (i, j) and (i+1, j+1): reverse positions i+1..j
        const a = at(i);
        const b = at(i + 1);
        const c = at(j);
        const e = at(j + 1);
        const delta = d(a, c) + d(b, e) - d(a, b) - d(c, e);
        if (delta < -eps) {
          for (let lo = i, hi = j - 1; lo < hi; lo++, hi--) {
            const t = r[lo];
            r[lo] = r[hi];
            r[hi] = t;
          }
          improved = true;
        }
      }
    }
    if (!improved) break;
  }
  return r;
}

export interface CruiseSettings {
  /** transit speed, knots */
  speedKnots: number;
  /** time on station per core (positioning, deployment, recovery), hours */
  stationHours: number;
  /** ship days available */
  shipDays: number;
  /** working hours per ship day (24 for round-the-clock operations) */
  hoursPerDay: number;
}

export interface CruiseLeg {
  /** station index, or −1 for the port */
  from: number;
  to: number;
  distanceM: number;
  hours: number;
}

export interface CruisePlan {
  /** station indices in visiting order (only the stations kept) */
  order: number[];
  /** stations left out because the ship days do not allow them, in their input order */
  dropped: number[];
  legs: CruiseLeg[];
  totalDistanceM: number;
  transitHours: number;
  stationHours: number;
  totalHours: number;
  availableHours: number;
  /** true when the whole plan fits in the ship days */
  fits: boolean;
}

function checkSettings(s: CruiseSettings): void {
  const pos = (v: number) => typeof v === "number" && Number.isFinite(v) && v > 0;
  if (!pos(s.speedKnots)) throw new ScoringInputError(`The transit speed must be a positive number of knots (got ${s.speedKnots}).`, "speedKnots");
  if (!(s.stationHours >= 0) || !Number.isFinite(s.stationHours))
    throw new ScoringInputError(`The station time must be zero or more hours (got ${s.stationHours}).`, "stationHours");
  if (!(s.shipDays >= 0) || !Number.isFinite(s.shipDays)) throw new ScoringInputError(`The ship days must be zero or more (got ${s.shipDays}).`, "shipDays");
  if (!pos(s.hoursPerDay) || s.hoursPerDay > 24)
    throw new ScoringInputError(`Working hours per day must lie between 0 and 24 (got ${s.hoursPerDay}).`, "hoursPerDay");
}

function checkPoints(port: PlanPoint, stations: readonly PlanPoint[]): void {
  const ok = (p: PlanPoint) => Number.isFinite(p.x) && Number.isFinite(p.y);
  if (!ok(port)) throw new ScoringInputError("The port needs finite coordinates in the project CRS.", "port");
  stations.forEach((p, k) => {
    if (!ok(p)) throw new ScoringInputError(`Station ${k + 1} needs finite coordinates in the project CRS.`, "stations");
  });
}

function hoursFor(distanceM: number, speedKnots: number): number {
  return distanceM / (speedKnots * METRES_PER_SECOND_PER_KNOT) / 3600;
}

/** Total hours of a closed route: transit + station time per core. O(k). */
function routeHours(port: PlanPoint, stations: readonly PlanPoint[], order: readonly number[], s: CruiseSettings): number {
  return hoursFor(routeLengthM(port, stations, order), s.speedKnots) + order.length * s.stationHours;
}

/**
 * Common practice, no source; nearest neighbour (Rosenkrantz et al. 1977) then 2-opt (Croes 1958).
 *
 * Orders the stations from the port and back, times it, and fits it to the ship days:
 * 1. nearest neighbour, then 2-opt;
 * 2. if it does not fit: walk the route and keep stations while the time so far plus the station
 *    time plus the run home still fits (greedy truncation); 2-opt the kept route (never longer, so it
 *    still fits);
 * 3. then offer each dropped station, in input order (the caller's rank), at its cheapest insertion
 *    point, keeping it when the route still fits; 2-opt again at the end.
 * The plan returned always fits (`fits` is true) unless no station fits at all (then the route is
 * empty). Hours = distance / (knots × 1852/3600 m/s) / 3600 + cores × station hours.
 * Preconditions: finite coordinates; positive speed and hours per day; station hours and ship days
 * ≥ 0 — else {@link ScoringInputError}. O(k² · passes) for k stations.
 */
export function planCruise(port: PlanPoint, stations: readonly PlanPoint[], settings: CruiseSettings): CruisePlan {
  checkSettings(settings);
  checkPoints(port, stations);
  const available = settings.shipDays * settings.hoursPerDay;
  let order = twoOpt(port, stations, nearestNeighbourOrder(port, stations));
  if (routeHours(port, stations, order, settings) > available) {
    const kept: number[] = [];
    let hours = 0;
    let at = port;
    for (const j of order) {
      const leg = hoursFor(d(at, stations[j]), settings.speedKnots);
      const home = hoursFor(d(stations[j], port), settings.speedKnots);
      if (hours + leg + settings.stationHours + home > available) break;
      hours += leg + settings.stationHours;
      kept.push(j);
      at = stations[j];
    }
    order = twoOpt(port, stations, kept);
    const inRoute = new Uint8Array(stations.length);
    for (const j of order) inRoute[j] = 1;
    for (let j = 0; j < stations.length; j++) {
      if (inRoute[j]) continue;
      let bestPos = -1;
      let bestAdd = Infinity;
      for (let p = 0; p <= order.length; p++) {
        const a = p === 0 ? port : stations[order[p - 1]];
        const b = p === order.length ? port : stations[order[p]];
        const add = d(a, stations[j]) + d(stations[j], b) - d(a, b);
        if (add < bestAdd) {
          bestAdd = add;
          bestPos = p;
        }
      }
      const candidate = order.slice(0, bestPos).concat([j], order.slice(bestPos));
      if (routeHours(port, stations, candidate, settings) <= available) {
        order = candidate;
        inRoute[j] = 1;
      }
    }
    order = twoOpt(port, stations, order);
  }
  const inRoute = new Set(order);
  const dropped: number[] = [];
  for (let j = 0; j < stations.length; j++) if (!inRoute.has(j)) dropped.push(j);
  const legs: CruiseLeg[] = [];
  let prev = -1;
  for (const j of [...order, -1]) {
    if (order.length === 0) break;
    const a = prev === -1 ? port : stations[prev];
    const b = j === -1 ? port : stations[j];
    const distanceM = d(a, b);
    legs.push({ from: prev, to: j, distanceM, hours: hoursFor(distanceM, settings.speedKnots) });
    prev = j;
  }
  const totalDistanceM = legs.reduce((s, l) => s + l.distanceM, 0);
  const transitHours = hoursFor(totalDistanceM, settings.speedKnots);
  const stationHours = order.length * settings.stationHours;
  const totalHours = transitHours + stationHours;
  return { order, dropped, legs, totalDistanceM, transitHours, stationHours, totalHours, availableHours: available, fits: totalHours <= available + 1e-9 };
}
