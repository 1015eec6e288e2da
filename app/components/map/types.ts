// The shapes the map workspace reads from the map API (GET /api/projects/:projectId/map and the
// per-age vector and section endpoints). Coordinates are in the project's projected CRS (metres).
import type { FeatureCollection } from "geojson";

export interface MapGrid {
  width: number;
  height: number;
  /** top-left corner of cell (0, 0), metres */
  originX: number;
  originY: number;
  cellSizeX: number;
  cellSizeY: number;
}

export interface MapLayerInfo {
  name: string;
  ageKa: number | null;
  units: string;
  type: string;
  stats: { validCount: number; min: number | null; max: number | null; mean: number | null };
}

export interface SeaLevelPoint {
  ageKa: number;
  rslM: number;
  sigmaM: number | null;
}

export interface MapOverlay {
  datasetId: number;
  kind: string;
  name: string;
  geojson: FeatureCollection;
}

export interface ExactSite {
  id: string | number;
  label: string;
  x: number;
  y: number;
  context: string | null;
  kind: string | null;
}

export interface GeneralisedSites {
  cellSizeM: number;
  minCount: number;
  cells: Array<{ x: number; y: number; count: number }>;
  suppressed: number;
}

export interface MapData {
  project: { id: number; name: string; crsEpsg: number | null; proj4: string | null };
  reconstruction: null | {
    id: number;
    name: string | null;
    grid: MapGrid;
    /** the grid the display copies (and so the readouts and the live scoring) are on */
    displayGrid: MapGrid & { step: number };
    /** oldest first */
    agesKa: number[];
    layers: MapLayerInfo[];
    /** per age: the sea level used and the cells in each class (from the manifest) */
    ages?: Array<{ ageKa: number; seaLevelM: number | null; counts: { sea: number; intertidal: number; lake: number; land: number } }>;
  };
  seaLevel: { label: string; citation: string | null; points: SeaLevelPoint[] };
  overlays: MapOverlay[];
  sites: { exact: ExactSite[]; generalised: GeneralisedSites | null };
}

export interface SectionData {
  lengthM: number;
  samples: Array<{ distanceM: number; x: number; y: number; seabedM: number | null; horizonM: number | null; floodingAgeKa: number | null }>;
  ages: Array<{ ageKa: number; seaLevelM: number; sigmaM: number | null }>;
  picks: Array<{ distanceM: number; offsetM: number; elevationM: number; lineId: string }>;
  cores: Array<{
    coreId: string;
    distanceM: number;
    offsetM: number;
    seabedElevationM: number | null;
    penetrationM: number;
    units: Array<{ topM: number; baseM: number; description: string }>;
    dates: Array<{ labCode: string; c14Age: number; c14Sigma: number; material: string; sampleDepthM: number | null }>;
  }>;
}
