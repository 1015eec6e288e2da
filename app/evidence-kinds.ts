// Words for the kinds of evidence, shared by server and browser code.
import type { EvidenceKind } from "./evidence/types";

/** The kinds whose values are heights: the upload must declare sign and datum (design §2). */
export const KINDS_WITH_HEIGHTS: ReadonlySet<EvidenceKind> = new Set(["bathymetry", "horizon_grid"]);

export const KIND_LABELS: Record<EvidenceKind, string> = {
  bathymetry: "Bathymetry / elevation grid",
  horizon_picks: "Buried horizon: sub-bottom picks",
  horizon_grid: "Buried horizon: grid",
  survey_lines: "Survey lines",
  interpretations: "Interpretations",
  sea_level_curve: "Relative sea-level curve",
  sea_level_index_points: "Sea-level index points",
  tidal_range: "Palaeo-tidal range",
  known_sites: "Known sites (confidential)",
  cores: "Cores and boreholes",
  lease_blocks: "Lease blocks",
  survey_area: "Survey area",
  dredging_areas: "Dredging and other searched areas",
  ocean_boundary: "Open-ocean boundary",
  exclusions: "Exclusion features",
  development_footprint: "Development footprint",
};

