/**
 * The factor catalogue (design §4): every landscape factor a weight set can weigh, the
 * reconstruction layer it is read from (docs/layers.md), its units, and a starting curve and weight.
 * Pure data, shared by the scoring job, the browser worker and the pages.
 *
 * The starting curves encode the trade's general expectation (check-values.md, "facts of the
 * trade": estuaries, river mouths, confluences, lake margins and low gradients near fresh water are
 * favoured settings for coastal hunter-gatherer sites) — practice, no single source. They are a
 * starting point a team is expected to change, never a finding.
 */
import type { FactorCurve } from "./factor-curves.ts";

export type FactorId =
  | "dist_stream"
  | "dist_shoreline"
  | "dist_intertidal"
  | "dist_river_mouth"
  | "dist_confluence"
  | "dist_lake_margin"
  | "dist_palaeochannel"
  | "shelter"
  | "slope"
  | "aspect"
  | "tpi"
  | "height_above_sea"
  | "flooding_age"
  | "time_near_coast";

export interface FactorDef {
  id: FactorId;
  /** plain words for the screen */
  label: string;
  /**
   * the reconstruction layer the values come from (docs/layers.md); `shelter` is derived in
   * scoring from `land_class` (app/scoring/shelter.ts), so its source layer is `land_class`
   */
  layer: string;
  /** true when the layer is made per age */
  perAge: boolean;
  units: string;
  /** what a high score means, one line */
  description: string;
  defaultCurve: FactorCurve;
  /** relative weight in the starting weight set (0 = listed but off) */
  defaultWeight: number;
}

export const FACTORS: readonly FactorDef[] = [
  {
    id: "dist_stream", label: "Distance to a stream", layer: "dist_stream", perAge: true, units: "m",
    description: "Fresh water close by.",
    defaultCurve: { kind: "j-shaped", direction: "decreasing", fullUntil: 100, halfAt: 800 }, defaultWeight: 3,
  },
  {
    id: "dist_shoreline", label: "Distance to the shoreline", layer: "dist_shoreline", perAge: true, units: "m",
    description: "Near the coast of the time (shellfish, fish, sea mammals).",
    defaultCurve: { kind: "sigmoid", direction: "decreasing", fullUntil: 200, zeroAt: 3000 }, defaultWeight: 3,
  },
  {
    id: "dist_intertidal", label: "Distance to the intertidal band", layer: "dist_intertidal", perAge: true, units: "m",
    description: "Fish weirs and foreshore gathering.",
    defaultCurve: { kind: "linear", direction: "decreasing", fullUntil: 0, zeroAt: 2000 }, defaultWeight: 0,
  },
  {
    id: "dist_river_mouth", label: "Distance to a river mouth", layer: "dist_river_mouth", perAge: true, units: "m",
    description: "Estuaries: the richest coastal settings.",
    defaultCurve: { kind: "j-shaped", direction: "decreasing", fullUntil: 250, halfAt: 1500 }, defaultWeight: 2,
  },
  {
    id: "dist_confluence", label: "Distance to a confluence", layer: "dist_confluence", perAge: true, units: "m",
    description: "Where streams meet.",
    defaultCurve: { kind: "j-shaped", direction: "decreasing", fullUntil: 100, halfAt: 1000 }, defaultWeight: 1,
  },
  {
    id: "dist_lake_margin", label: "Distance to a lake margin", layer: "dist_lake_margin", perAge: true, units: "m",
    description: "Lake shores and springs.",
    defaultCurve: { kind: "sigmoid", direction: "decreasing", fullUntil: 100, zeroAt: 1500 }, defaultWeight: 1,
  },
  {
    id: "dist_palaeochannel", label: "Distance to a mapped palaeochannel", layer: "dist_palaeochannel", perAge: false, units: "m",
    description: "Channels seen in the sub-bottom data.",
    defaultCurve: { kind: "j-shaped", direction: "decreasing", fullUntil: 100, halfAt: 1000 }, defaultWeight: 0,
  },
  {
    id: "shelter", label: "Coastal shelter", layer: "land_class", perAge: true, units: "share of land around",
    description: "Bays and inlets rather than open coast.",
    defaultCurve: { kind: "linear", direction: "increasing", zeroUntil: 0.4, fullAt: 0.8 }, defaultWeight: 1,
  },
  {
    id: "slope", label: "Slope", layer: "slope", perAge: false, units: "°",
    description: "Level ground to camp on.",
    defaultCurve: { kind: "linear", direction: "decreasing", fullUntil: 2, zeroAt: 15 }, defaultWeight: 2,
  },
  {
    id: "aspect", label: "Aspect", layer: "aspect", perAge: false, units: "° from north",
    description: "Facing the sun (north in the southern hemisphere).",
    defaultCurve: { kind: "aspect", preferredDeg: 0, widthDeg: 135, flatValue: 0.7 }, defaultWeight: 0,
  },
  {
    id: "tpi", label: "Topographic position", layer: "tpi", perAge: false, units: "m",
    description: "Low rises and terrace edges rather than valley floors or ridges.",
    defaultCurve: { kind: "band", shape: "linear", zeroUntil: -8, fullAt: -1, fullUntil: 3, zeroAt: 10 }, defaultWeight: 1,
  },
  {
    id: "height_above_sea", label: "Height above sea level", layer: "height_above_sea", perAge: true, units: "m",
    description: "Low coastal ground.",
    defaultCurve: { kind: "linear", direction: "decreasing", fullUntil: 5, zeroAt: 60 }, defaultWeight: 1,
  },
  {
    id: "flooding_age", label: "Flooding age", layer: "flooding_age", perAge: false, units: "ka BP",
    description: "Land that stayed dry longer (drowned later).",
    defaultCurve: { kind: "linear", direction: "increasing", zeroUntil: 8, fullAt: 14 }, defaultWeight: 0,
  },
  {
    id: "time_near_coast", label: "Time near the coast", layer: "time_near_coast", perAge: false, units: "ka",
    description: "Ground that lay near a shoreline for long.",
    defaultCurve: { kind: "linear", direction: "increasing", zeroUntil: 0, fullAt: 2 }, defaultWeight: 0,
  },
];

export const FACTOR_IDS: readonly FactorId[] = FACTORS.map((f) => f.id);

const BY_ID = new Map<string, FactorDef>(FACTORS.map((f) => [f.id, f]));

/** The catalogue entry, or undefined for an unknown id. O(1). */
export function factorDef(id: string): FactorDef | undefined {
  return BY_ID.get(id);
}
