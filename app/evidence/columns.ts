/**
 * Column names and allowed words for every tabular kind (see README.md). Names are matched after
 * normaliseName (lower case, "_" for spaces and punctuation); the first name is the documented one.
 */
import type { ColumnSpec } from "./csv";
import { words } from "./csv";

export const X: ColumnSpec = { key: "x", names: ["x", "easting", "east", "e", "x_m", "easting_m"] };
export const Y: ColumnSpec = { key: "y", names: ["y", "northing", "north", "n", "y_m", "northing_m"] };
export const LON: ColumnSpec = { key: "lon", names: ["lon", "longitude", "long", "lng", "lon_deg", "longitude_deg"] };
export const LAT: ColumnSpec = { key: "lat", names: ["lat", "latitude", "lat_deg", "latitude_deg"] };

export const SITE_COLUMNS: ColumnSpec[] = [
  { key: "siteId", names: ["site_id", "id", "site", "name", "site_name"] },
  { key: "precisionM", names: ["precision_m", "precision", "position_precision_m", "uncertainty_m", "accuracy_m"] },
  { key: "kind", names: ["kind", "type", "site_type", "site_kind"] },
  { key: "context", names: ["context", "find_context"] },
  { key: "discoveryMethod", names: ["discovery_method", "discovery", "method", "found_by"] },
  { key: "calBpFrom", names: ["cal_bp_from", "cal_from", "cal_bp_older", "from_cal_bp"] },
  { key: "calBpTo", names: ["cal_bp_to", "cal_to", "cal_bp_younger", "to_cal_bp"] },
  { key: "confidence", names: ["confidence"] },
  { key: "sensitivity", names: ["sensitivity", "sensitive", "restricted"] },
  { key: "community", names: ["community", "contributed_by", "contributor_community"] },
];
export const CONTEXTS = words(["in_situ", "derived", "trawled", "dredged", "unknown"] as const, {
  "in situ": "in_situ",
  insitu: "in_situ",
  primary: "in_situ",
  secondary: "derived",
  reworked: "derived",
  trawl: "trawled",
  dredge: "dredged",
});
export const CONFIDENCE = words(["high", "medium", "low"] as const, { h: "high", m: "medium", l: "low", moderate: "medium" });
export const SENSITIVITY = words(["normal", "restricted"] as const, {
  no: "normal",
  false: "normal",
  "0": "normal",
  yes: "restricted",
  true: "restricted",
  "1": "restricted",
  confidential: "restricted",
  sensitive: "restricted",
});

export const PICK_COLUMNS: ColumnSpec[] = [
  { key: "lineId", names: ["line_id", "line", "line_name"], required: true },
  { key: "fixId", names: ["fix_id", "fix", "shot", "shotpoint", "sp", "trace"] },
  { key: "depthBelowSeabedM", names: ["depth_below_seabed_m", "depth_m", "depth_bsb_m", "depth_below_seabed", "depth"] },
  { key: "twtMs", names: ["twt_ms", "twt", "twt_below_seabed_ms"] },
  { key: "velocityMps", names: ["velocity_m_s", "velocity_mps", "velocity", "v_m_s"] },
  { key: "horizon", names: ["horizon", "horizon_name", "surface"] },
];

export const LINE_COLUMNS: ColumnSpec[] = [
  { key: "lineId", names: ["line_id", "line", "line_name"], required: true },
  { key: "fixId", names: ["fix_id", "fix_ids", "fix", "fixes", "shot", "shotpoint", "sp", "fix_number"] },
  { key: "system", names: ["system", "sub_bottom_system", "profiler"] },
  { key: "verticalResolutionM", names: ["vertical_resolution_m", "vertical_resolution", "resolution_m"] },
];

export const CURVE_COLUMNS: ColumnSpec[] = [
  { key: "ageKa", names: ["age_ka", "age_ka_bp", "age_kyr", "age"] },
  { key: "ageYears", names: ["age_bp", "age_cal_bp", "age_yr_bp", "age_years"] },
  { key: "rslM", names: ["rsl_m", "rsl", "sea_level_m", "level_m", "esl_m"], required: true },
  { key: "sigmaM", names: ["sigma_m", "rsl_sigma_m", "sigma", "error_m", "esl_sigma_m"] },
];

export const INDEX_POINT_COLUMNS: ColumnSpec[] = [
  { key: "pointId", names: ["id", "point_id", "sample_id", "name"] },
  { key: "ageKa", names: ["age_ka", "age_ka_bp", "age"], required: true },
  { key: "ageSigmaKa", names: ["age_sigma_ka", "age_error_ka", "age_sigma"], required: true },
  { key: "heightM", names: ["height_m", "rsl_m", "elevation_m", "height"], required: true },
  { key: "heightSigmaM", names: ["height_sigma_m", "rsl_sigma_m", "height_error_m", "height_sigma"], required: true },
  { key: "kind", names: ["kind", "type", "limiting", "indicator_type"], required: true },
  { key: "labCode", names: ["lab_code", "lab_id"] },
  { key: "indicator", names: ["indicator", "material", "sample"] },
];
export const INDEX_KINDS = words(["index_point", "terrestrial_limiting", "marine_limiting"] as const, {
  index: "index_point",
  sea_level_index_point: "index_point",
  slip: "index_point",
  terrestrial: "terrestrial_limiting",
  terrestrial_limiting_point: "terrestrial_limiting",
  upper_limiting: "terrestrial_limiting",
  marine: "marine_limiting",
  marine_limiting_point: "marine_limiting",
  lower_limiting: "marine_limiting",
});

export const CORE_COLUMNS: ColumnSpec[] = [
  { key: "coreId", names: ["core_id", "core", "id", "station", "borehole_id"], required: true },
  { key: "waterDepthM", names: ["water_depth_m", "water_depth", "depth_m"] },
  { key: "penetrationM", names: ["penetration_m", "penetration"] },
  { key: "recoveryM", names: ["recovery_m", "recovery"] },
  { key: "horizonReached", names: ["horizon_reached", "reached_horizon"] },
  { key: "preservedLandSurface", names: ["preserved_land_surface", "land_surface", "preserved_surface"] },
  { key: "archaeologicalIndicators", names: ["archaeological_indicators", "indicators", "archaeology"] },
  { key: "unitTopM", names: ["unit_top_m", "top_m"] },
  { key: "unitBaseM", names: ["unit_base_m", "base_m"] },
  { key: "unitDescription", names: ["unit_description", "unit", "description", "lithology"] },
  { key: "labCode", names: ["lab_code", "lab_id"] },
  { key: "c14Age", names: ["c14_age", "c14_age_bp", "radiocarbon_age"] },
  { key: "c14Sigma", names: ["c14_sigma", "c14_error", "radiocarbon_sigma"] },
  { key: "calFrom", names: ["cal_from", "cal_bp_from"] },
  { key: "calTo", names: ["cal_to", "cal_bp_to"] },
  { key: "material", names: ["material", "dated_material"] },
  { key: "sampleDepthM", names: ["sample_depth_m", "date_depth_m"] },
];
export const HORIZON_REACHED = words(["yes", "no", "refused"] as const, {
  y: "yes",
  true: "yes",
  reached: "yes",
  n: "no",
  false: "no",
  not_reached: "no",
  refusal: "refused",
  refused_early: "refused",
});
export const YES_NO_UNKNOWN = words(["yes", "no", "unknown"] as const, { y: "yes", true: "yes", n: "no", false: "no", "?": "unknown", unclear: "unknown" });

export const TIDAL_COLUMNS: ColumnSpec[] = [
  { key: "rangeM", names: ["tidal_range_m", "tidal_range", "range_m", "range"], required: true },
  { key: "ageKa", names: ["age_ka", "age"] },
];
