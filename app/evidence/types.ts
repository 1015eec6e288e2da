/**
 * The evidence readers' contract: what every upload is parsed into, and the error a user can act on.
 *
 * Pure TypeScript: bytes in, data out. No database, network, file system or React (conventions.md).
 */
import type { Grid } from "../terrain/grid";

/** Where in the upload a problem lies, when known. `row` is the line of the file where the record starts (header = 1). */
export interface EvidenceWhere {
  row?: number;
  column?: string;
  feature?: number;
  byte?: number;
}

/** A problem with the uploaded file that the user can fix. The message names the problem and where it lies. */
export class EvidenceError extends Error {
  constructor(
    message: string,
    readonly where?: EvidenceWhere,
  ) {
    super(message);
    this.name = "EvidenceError";
  }
}

export const EVIDENCE_KINDS = [
  "bathymetry",
  "horizon_picks",
  "horizon_grid",
  "survey_lines",
  "interpretations",
  "sea_level_curve",
  "sea_level_index_points",
  "tidal_range",
  "known_sites",
  "cores",
  "lease_blocks",
  "survey_area",
  "dredging_areas",
  "ocean_boundary",
  "exclusions",
  "development_footprint",
] as const;
export type EvidenceKind = (typeof EVIDENCE_KINDS)[number];

/** Formats each kind accepts (design §2), in the order they are suggested to the user. */
export const KIND_FORMATS: Record<EvidenceKind, EvidenceFormat[]> = {
  bathymetry: ["geotiff", "esri-ascii", "xyz"],
  horizon_picks: ["csv"],
  horizon_grid: ["geotiff", "esri-ascii", "xyz"],
  survey_lines: ["csv", "geojson", "gpkg", "shapefile-zip"],
  interpretations: ["geojson", "gpkg", "shapefile-zip"],
  sea_level_curve: ["csv"],
  sea_level_index_points: ["csv"],
  tidal_range: ["csv", "geotiff", "esri-ascii"],
  known_sites: ["csv", "geojson", "gpkg", "shapefile-zip"],
  cores: ["csv", "ags4"],
  lease_blocks: ["geojson", "gpkg", "shapefile-zip"],
  survey_area: ["geojson", "gpkg", "shapefile-zip"],
  dredging_areas: ["geojson", "gpkg", "shapefile-zip"],
  ocean_boundary: ["geojson", "gpkg", "shapefile-zip"],
  exclusions: ["geojson", "gpkg", "shapefile-zip"],
  development_footprint: ["geojson", "gpkg", "shapefile-zip"],
};

export type EvidenceFormat = "geotiff" | "esri-ascii" | "xyz" | "csv" | "geojson" | "gpkg" | "shapefile-zip" | "ags4";

export interface EvidenceLimits {
  /** cells of a grid (declared in a header, or made by gridding XYZ points) */
  maxCells: number;
  /** rows of a CSV, records of an AGS4 file (a CSV row costs far more memory than an XYZ point) */
  maxRows: number;
  /** points of an XYZ file (held in typed arrays: 24 bytes each) */
  maxPoints?: number;
  /** vertices over all features of a vector file */
  maxVertices: number;
  /** features of a vector file */
  maxFeatures: number;
}

/** 8192² cells (6.7e7: 268 MB as Float32); 2 million CSV rows; 20 million XYZ points; 5 million vertices; 200 000 features. */
export const DEFAULT_LIMITS: Required<EvidenceLimits> = {
  maxCells: 8192 * 8192,
  maxRows: 2_000_000,
  maxPoints: 20_000_000,
  maxVertices: 5_000_000,
  maxFeatures: 200_000,
};

/**
 * The user's declaration of a vertical value's sign and datum.
 * `offsetToMslM` is the height of the declared datum ABOVE present mean sea level, in metres: negative
 * for chart datum / lowest astronomical tide (which lie below MSL), 0 for MSL. Then
 * elevation (m, MSL, positive up) = (depth ? −value : value) + offsetToMslM.
 */
export interface VerticalDeclaration {
  sign: "depth_positive_down" | "elevation_positive_up";
  /** e.g. "LAT", "MSL", "chart datum", "ellipsoid", a national datum name; "seabed" for a horizon grid given as depth below seabed */
  datum: string;
  offsetToMslM: number;
}

/** Survey system details for survey lines, when not given as columns/properties. */
export interface SurveyDeclaration {
  system?: string;
  verticalResolutionM?: number;
}

export interface ParseOptions {
  fileName: string;
  /** the project's projected CRS in metres; everything returned is in it */
  projectEpsg: number;
  vertical?: VerticalDeclaration;
  /** CRS of CRS-less grids, XYZ points, CSV x/y columns and AGS4 coordinates (default for CSV x/y: the project CRS) */
  declaredEpsg?: number;
  limits?: Partial<EvidenceLimits>;
  /** cell size (m) for gridding XYZ points; required for XYZ */
  analysisCellSizeM?: number;
  /** known sites without a precision_m get this (m), with a warning */
  sitePrecisionDefaultM?: number;
  /** picks, sites and cores outside this box (project CRS) are refused: usually the bathymetry grid's extent */
  withinExtent?: [number, number, number, number];
  survey?: SurveyDeclaration;
}

export interface EvidenceFeature {
  type: "Feature";
  geometry: any; // eslint-disable-line @typescript-eslint/no-explicit-any -- GeoJSON geometry in the project CRS
  properties: Record<string, unknown>;
}

export interface ParsedEvidence {
  kind: EvidenceKind;
  format: EvidenceFormat;
  /** everything returned is in the project CRS */
  crsEpsg: number;
  /** minX, minY, maxX, maxY in the project CRS */
  extent: [number, number, number, number] | null;
  /** cells (grids), rows or features */
  count: number;
  /** kind-specific metadata for the datasets page (see app/evidence/README.md) */
  summary: Record<string, unknown>;
  /** grids: elevation in m relative to present MSL after datum and sign (see README for horizon_grid below seabed and tidal_range) */
  grid?: Grid<Float32Array>;
  features?: { type: "FeatureCollection"; features: EvidenceFeature[] };
  rows?: Record<string, unknown>[];
  warnings: string[];
}

export function resolveLimits(l?: Partial<EvidenceLimits>): Required<EvidenceLimits> {
  return { ...DEFAULT_LIMITS, ...(l ?? {}) };
}
