// What the map can show, in the trade's words: each raster layer's style and legend, the per-age
// vectors, and how each kind of evidence is drawn. The layer list is built from this and from what
// the reconstruction and the project actually hold.
import type { RasterStyle, ClassEntry } from "./raster";
import type { MapData } from "./types";

export const LAND_CLASSES: ClassEntry[] = [
  { value: 0, label: "land", rgb: [196, 182, 150], alpha: 110 },
  { value: 1, label: "sea", rgb: [63, 106, 140] },
  { value: 2, label: "intertidal", rgb: [127, 157, 180] },
  { value: 3, label: "lake", rgb: [110, 160, 190] },
];

export interface RasterDef {
  kind: "raster";
  id: string;
  /** the layer's name in the reconstruction (docs/layers.md) */
  layer: string;
  label: string;
  group: string;
  style: RasterStyle;
  visible: boolean;
  opacity: number;
  /** draw cells as blocks (classes and masks) rather than smoothed */
  nearest: boolean;
  /** shown in the cursor readout even when hidden */
  alwaysRead?: boolean;
  note?: string;
}

const RASTERS: RasterDef[] = [
  { kind: "raster", id: "potential", layer: "potential", label: "Potential", group: "Potential", style: { kind: "continuous", scale: "viridis" }, visible: true, opacity: 0.75, nearest: false },
  { kind: "raster", id: "land_class", layer: "land_class", label: "Land and water", group: "At this age", style: { kind: "classes", classes: LAND_CLASSES }, visible: true, opacity: 0.7, nearest: true },
  { kind: "raster", id: "flooding_age", layer: "flooding_age", label: "Flooding age", group: "Through time", style: { kind: "continuous", scale: "cividis" }, visible: false, opacity: 0.8, nearest: false, note: "when the sea last reached each cell" },
  { kind: "raster", id: "time_near_coast", layer: "time_near_coast", label: "Time near the coast", group: "Through time", style: { kind: "continuous", scale: "viridis" }, visible: false, opacity: 0.8, nearest: false },
  { kind: "raster", id: "unassessed", layer: "unassessed", label: "No horizon here", group: "Ground", style: { kind: "mask", rgb: [214, 200, 171] }, visible: true, opacity: 0.3, nearest: true, note: "hatched: the buried horizon is unassessed" },
  { kind: "raster", id: "analysis_surface", layer: "analysis_surface", label: "Surface elevation", group: "Ground", style: { kind: "continuous", scale: "cividis" }, visible: false, opacity: 0.6, nearest: false, alwaysRead: true },
  { kind: "raster", id: "hillshade", layer: "hillshade", label: "Hillshade", group: "Ground", style: { kind: "grey" }, visible: true, opacity: 1, nearest: false },
];

export interface VectorDef {
  kind: "vector";
  id: string;
  label: string;
  group: string;
  visible: boolean;
  opacity: number;
  source:
    | { type: "age"; what: "shoreline" | "streams" | "lake_margins" }
    /** cells of a per-age mask layer drawn as points */
    | { type: "mask"; layer: "river_mouths" | "confluences" }
    | { type: "overlay"; datasetId: number; overlayKind: string }
    | { type: "sites" };
  note?: string;
}

export type LayerDef = RasterDef | VectorDef;

/** Evidence kinds drawn on the map, with the group they sit in. */
const OVERLAY_GROUPS: Record<string, string> = {
  interpretations: "Evidence",
  survey_lines: "Evidence",
  cores: "Evidence",
  horizon_picks: "Evidence",
  lease_blocks: "Planning",
  survey_area: "Planning",
  dredging_areas: "Evidence",
  exclusions: "Planning",
  development_footprint: "Planning",
  ocean_boundary: "Planning",
};

/** The order groups appear in the layer list (top = drawn on top). */
export const GROUP_ORDER = ["At this age", "Known sites", "Evidence", "Planning", "Potential", "Through time", "Ground"];

export function layerCatalogue(data: MapData): LayerDef[] {
  const r = data.reconstruction;
  const defs: LayerDef[] = [];
  if (r) {
    const names = new Set(r.layers.map((l) => l.name));
    defs.push(
      { kind: "vector", id: "shoreline", label: "Shoreline", group: "At this age", visible: true, opacity: 1, source: { type: "age", what: "shoreline" } },
      { kind: "vector", id: "streams", label: "Streams", group: "At this age", visible: true, opacity: 0.9, source: { type: "age", what: "streams" }, note: "width by Strahler order" },
      { kind: "vector", id: "lake_margins", label: "Lake margins", group: "At this age", visible: true, opacity: 0.9, source: { type: "age", what: "lake_margins" } },
    );
    if (names.has("river_mouths")) defs.push({ kind: "vector", id: "river_mouths", label: "River mouths", group: "At this age", visible: true, opacity: 1, source: { type: "mask", layer: "river_mouths" }, note: "● estuary candidates" });
    if (names.has("confluences")) defs.push({ kind: "vector", id: "confluences", label: "Confluences", group: "At this age", visible: false, opacity: 1, source: { type: "mask", layer: "confluences" }, note: "○ where streams join" });
    for (const d of RASTERS) if (names.has(d.layer)) defs.push({ ...d });
  }
  const g = data.sites.generalised;
  const hasSites = data.sites.exact.length > 0 || (g !== null && g.cells.length + g.suppressed > 0);
  if (hasSites) {
    const generalised = data.sites.exact.length === 0;
    defs.push({
      kind: "vector",
      id: "sites",
      label: generalised ? "Known sites (generalised)" : "Known sites",
      group: "Known sites",
      visible: true,
      opacity: 1,
      source: { type: "sites" },
      note:
        generalised && g
          ? `counts per ${fmtKm(g.cellSizeM)} square; squares with fewer than ${g.minCount} are not shown${g.suppressed ? ` (${g.suppressed} site${g.suppressed === 1 ? "" : "s"} left out)` : ""}`
          : "exact positions: confidential",
    });
  }
  for (const o of data.overlays) {
    const group = OVERLAY_GROUPS[o.kind];
    if (!group) continue;
    defs.push({ kind: "vector", id: `overlay-${o.datasetId}`, label: o.name || o.kind.replace(/_/g, " "), group, visible: o.kind !== "horizon_picks", opacity: 1, source: { type: "overlay", datasetId: o.datasetId, overlayKind: o.kind } });
  }
  return defs;
}

function fmtKm(m: number) {
  return m >= 1000 ? `${+(m / 1000).toFixed(2)} km` : `${m} m`;
}

/** Continuous value formatting: few digits, tabular. */
export function fmtValue(v: number, units: string): string {
  const a = Math.abs(v);
  const s = a >= 1000 ? v.toFixed(0) : a >= 100 ? v.toFixed(0) : a >= 10 ? v.toFixed(1) : v.toFixed(2);
  return units && units !== "class" && units !== "mask" && units !== "grey level" ? `${s.replace("-", "−")} ${units}` : s.replace("-", "−");
}
