/**
 * Core targets as GeoJSON (Butler, H. et al. (2016) "The GeoJSON Format", IETF RFC 7946): a
 * FeatureCollection of Points in WGS 84 longitude, latitude (decimal degrees, §4; 6 decimal places,
 * about 0.1 m, §11.2), properties as listed in app/exports/README.md (the same fields as the CSV,
 * null where empty). The cautions of design §10 travel in a top-level foreign member `cautions`
 * (§6.1 allows foreign members), with `title`, `crs_label` (the project CRS of x_m/y_m — not a
 * GeoJSON `crs` member, which RFC 7946 removed) and `generated_at`. No `bbox`.
 */
import { CAUTIONS } from "../cautions.ts";
import { type ExportMeta, type ExportTarget, TARGET_FIELDS, targetRecord } from "./target-fields.ts";

export interface TargetFeatureCollection {
  type: "FeatureCollection";
  title: string;
  crs_label: string;
  generated_at: string;
  notes: string[];
  cautions: string[];
  features: Array<{
    type: "Feature";
    id: string;
    geometry: { type: "Point"; coordinates: [number, number] };
    properties: Record<string, string | number | null>;
  }>;
}

/**
 * RFC 7946. The target list as a FeatureCollection object (JSON.stringify it to write). Feature ids
 * are the waypoint names. O(targets · fields).
 */
export function targetsToGeoJson(targets: readonly ExportTarget[], meta: ExportMeta): TargetFeatureCollection {
  return {
    type: "FeatureCollection",
    title: meta.title,
    crs_label: meta.crsLabel,
    generated_at: meta.generatedAt,
    notes: [...(meta.notes ?? [])],
    cautions: [...CAUTIONS],
    features: targets.map((t) => {
      const r = targetRecord(t);
      const properties: Record<string, string | number | null> = {};
      for (const f of TARGET_FIELDS) properties[f.name] = r[f.name];
      return {
        type: "Feature",
        id: t.waypoint,
        geometry: { type: "Point", coordinates: [Number(t.lon.toFixed(6)), Number(t.lat.toFixed(6))] },
        properties,
      };
    }),
  };
}
