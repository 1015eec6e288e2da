// The horizon evidence (cores and interpretations) from the map payload's overlays, in the order the
// scoring job reads it (datasets by id, cores before interpretations), so the browser and the job
// rasterise the same points.
import type { MapData } from "~/components/map/types";
import { geometryVertices, horizonEvidencePoints, type EvidencePoint } from "~/scoring/scoring-inputs";

export function evidenceFromOverlays(overlays: MapData["overlays"]): EvidencePoint[] {
  const cores = overlays
    .filter((o) => o.kind === "cores")
    .flatMap((o) => o.geojson.features.map((f) => ({ x: (f.geometry as { coordinates: number[] }).coordinates[0], y: (f.geometry as { coordinates: number[] }).coordinates[1], ...(f.properties as Record<string, string>) })));
  const interps = overlays
    .filter((o) => o.kind === "interpretations")
    .flatMap((o) => o.geojson.features.map((f) => ({ kind: String((f.properties as Record<string, unknown>)?.kind ?? ""), coordinates: geometryVertices(f.geometry as { type: string; coordinates?: unknown }) })));
  return horizonEvidencePoints(cores, interps);
}
