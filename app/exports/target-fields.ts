/**
 * The fields every core-target export carries (CSV columns, GeoJSON properties, GeoPackage columns),
 * in one place so the three formats and app/exports/README.md say the same thing. Pure: no fs, no DB.
 */
import type { CoreTarget } from "../scoring/target-selection.ts";

export type FieldType = "integer" | "real" | "text";

export interface TargetField {
  name: string;
  type: FieldType;
  /** unit or meaning, for the README and the GeoPackage column comments */
  description: string;
}

/** A target as exported: the record of describeTargets plus its tracking status (planned → cored → result). */
export type ExportTarget = CoreTarget & { status?: string };

export type FieldValue = string | number | null;

const round = (v: number | null | undefined, places: number): number | null =>
  v === null || v === undefined || !Number.isFinite(v) ? null : Number(v.toFixed(places));

/** Column order of the exports. */
export const TARGET_FIELDS: readonly TargetField[] = [
  { name: "rank", type: "integer", description: "rank in the list (1 first), in the order the modes chose the targets" },
  { name: "waypoint", type: "text", description: "short waypoint name, e.g. CT01" },
  { name: "status", type: "text", description: "planned, cored or result" },
  { name: "mode", type: "text", description: "best-first, transect, control or learn-most" },
  { name: "mode_detail", type: "text", description: "transect name, number, role and offset; control class; uncertainty" },
  { name: "x_m", type: "real", description: "easting in the project CRS, m (cell centre)" },
  { name: "y_m", type: "real", description: "northing in the project CRS, m (cell centre)" },
  { name: "epsg", type: "integer", description: "EPSG code of the project CRS" },
  { name: "lat", type: "real", description: "latitude WGS 84, decimal degrees (6 places, about 0.1 m)" },
  { name: "lon", type: "real", description: "longitude WGS 84, decimal degrees (6 places)" },
  { name: "lat_ddm", type: "text", description: "latitude WGS 84, degrees and decimal minutes, e.g. 33°30.750′S" },
  { name: "lon_ddm", type: "text", description: "longitude WGS 84, degrees and decimal minutes" },
  { name: "water_depth_m", type: "real", description: "water depth below present mean sea level, m (tide not applied)" },
  { name: "horizon_depth_m", type: "real", description: "expected depth to the horizon below seabed, m; empty where unassessed" },
  { name: "horizon_twt_ms", type: "real", description: "two-way time from the seabed to the horizon, ms (TWT = 2·d/v)" },
  { name: "velocity_mps", type: "real", description: "sediment velocity used for the two-way time, m/s" },
  { name: "cover_type", type: "text", description: "cover type id from the project's cover-type table" },
  { name: "planned_penetration_m", type: "real", description: "horizon depth + required depth into the older unit, m (unassessed: the expected penetration)" },
  { name: "expected_penetration_m", type: "real", description: "expected penetration for the cover type, m (refusal depth or barrel length)" },
  { name: "nearest_line", type: "text", description: "nearest survey line" },
  { name: "line_distance_m", type: "real", description: "distance to that line, m" },
  { name: "nearest_fix", type: "text", description: "nearest navigation fix on that line" },
  { name: "fix_distance_m", type: "real", description: "distance to that fix, m" },
  { name: "nearby_exclusions", type: "text", description: "exclusions near the target: name (kind) distance to the feature / buffer, separated by ;" },
  { name: "land_ages_ka", type: "text", description: "reconstructed ages (ka BP) at which the cell was land or intertidal, separated by ;" },
  { name: "score", type: "real", description: "the score the list ranks by (potential, or occupation where preservation is inactive), 0–1" },
  { name: "occupation", type: "real", description: "occupation score = Σ weight·factor score" },
  { name: "contributions", type: "text", description: "weight·factor score per factor (summing to occupation), separated by ;" },
];

/** One target as a flat record keyed by TARGET_FIELDS names (numbers rounded for the ship). O(fields). */
export function targetRecord(t: ExportTarget): Record<string, FieldValue> {
  return {
    rank: t.rank,
    waypoint: t.waypoint,
    status: t.status ?? "planned",
    mode: t.mode,
    mode_detail: t.modeDetail,
    x_m: round(t.x, 2),
    y_m: round(t.y, 2),
    epsg: t.epsg,
    lat: round(t.lat, 6),
    lon: round(t.lon, 6),
    lat_ddm: t.latDdm,
    lon_ddm: t.lonDdm,
    water_depth_m: round(t.waterDepthM, 2),
    horizon_depth_m: round(t.horizonDepthM, 2),
    horizon_twt_ms: round(t.horizonTwtMs, 2),
    velocity_mps: t.velocityMps,
    cover_type: t.coverTypeId,
    planned_penetration_m: round(t.plannedPenetrationM, 2),
    expected_penetration_m: round(t.expectedPenetrationM, 2),
    nearest_line: t.nearestLine?.line ?? null,
    line_distance_m: round(t.nearestLine?.distanceM, 1),
    nearest_fix: t.nearestLine?.fix ?? null,
    fix_distance_m: round(t.nearestLine?.fixDistanceM, 1),
    nearby_exclusions: t.nearbyExclusions.length
      ? t.nearbyExclusions.map((e) => `${e.name} (${e.kind}) ${Math.round(e.distanceM)} m / buffer ${Math.round(e.bufferM)} m`).join("; ")
      : null,
    land_ages_ka: t.landAgesKa.length ? t.landAgesKa.join("; ") : null,
    score: round(t.score, 4),
    occupation: round(t.occupation, 4),
    contributions: t.contributions.length ? t.contributions.map((c) => `${c.id} ${Number.isFinite(c.contribution) ? c.contribution.toFixed(4) : "unknown"}`).join("; ") : null,
  };
}

/** What every export says about itself: title, CRS, when, and the notes of the selection. */
export interface ExportMeta {
  /** e.g. "Corrastan Shelf — cruise 1 targets (published 2025-05-01)" */
  title: string;
  /** e.g. "EPSG:32630 (WGS 84 / UTM zone 30N)" */
  crsLabel: string;
  /** ISO 8601, given by the caller (exports are pure) */
  generatedAt: string;
  /** free notes: the scoring, the constraint set, what was left out */
  notes?: string[];
}
