// Messages between the weighing page and its scoring worker (potential.worker.ts). Layers are sent
// once each (8-bit codes from the layer API's display copy) and kept in the worker; every change of
// a weight or a control point then costs one "score" message and one picture back.
import type { FactorId } from "~/scoring/factors";
import type { WeightSetContent } from "~/scoring/weight-set";
import type { EvidencePoint, ScoreTarget } from "~/scoring/scoring-inputs";

export interface CodedRaster {
  width: number;
  height: number;
  scale: number;
  offset: number;
  nodataCode: number;
  codes: Uint8Array;
}

export interface WorkerGrid {
  width: number;
  height: number;
  cellSizeX: number;
  cellSizeY: number;
  originX: number;
  originY: number;
}

/** `layer@age` (age in ka) or `layer@static` */
export const layerKey = (layer: string, ageKa: number | null) => `${layer}@${ageKa === null ? "static" : ageKa}`;

export type ToWorker =
  | { type: "layers"; layers: Array<{ key: string; raster: CodedRaster }> }
  | {
      type: "score";
      id: number;
      grid: WorkerGrid;
      agesKa: number[];
      content: WeightSetContent;
      target: ScoreTarget;
      evidence: EvidencePoint[];
      /** a second weight set to compare with: the picture becomes the difference (this − other) */
      compare?: { content: WeightSetContent; topN: number } | null;
    }
  | { type: "correlate"; id: number; grid: WorkerGrid; ageKa: number; factors: FactorId[]; shelterRadiusM: number }
  | {
      /** several proposals at once: the per-cell spread of their potentials and the top-N overlap of each pair */
      type: "disagree";
      id: number;
      grid: WorkerGrid;
      agesKa: number[];
      contents: WeightSetContent[];
      target: ScoreTarget;
      evidence: EvidencePoint[];
      topN: number;
    };

export interface ScoredMessage {
  type: "scored";
  id: number;
  /** what was scored (the request's target), so a page can tell a result for another age */
  target: ScoreTarget;
  width: number;
  height: number;
  /** the picture for the map (RGBA, row 0 north) */
  rgba: Uint8ClampedArray;
  /** potential per cell (NaN: not occupiable or unassessed) — for the readout and the histogram */
  potential: Float32Array;
  unassessed: Uint8Array;
  /** FNV-1a of the potential's bytes: equals the scoring job's display checksum for the same inputs */
  checksum: string;
  notes: string[];
  preservation: { active: boolean; reason: string };
  stats: { occupiable: number; unassessed: number; mean: number | null; high: number };
  compare: null | { spearman: number | null; topN: number; topShare: number | null; otherChecksum: string; meanDifference: number | null };
  /** time spent scoring and colouring, ms */
  ms: number;
}

export interface DisagreedMessage {
  type: "disagreed";
  id: number;
  width: number;
  height: number;
  /** the spread (standard deviation of potential across the proposals) as a picture, 0 → white, ≥ maxSpread → dark orange */
  rgba: Uint8ClampedArray;
  maxSpread: number;
  /** mean spread over the cells every proposal scores, and how many such cells */
  meanSpread: number | null;
  cells: number;
  /** topShare[i][j]: share of the top-N cells proposals i and j have in common (1 on the diagonal) */
  topShare: Array<Array<number | null>>;
  topN: number;
  checksums: string[];
  ms: number;
}

export type FromWorker =
  | ScoredMessage
  | DisagreedMessage
  | { type: "correlated"; id: number; factors: FactorId[]; pearson: number[][]; spearman: number[][]; samples: number }
  | { type: "error"; id: number; message: string; field?: string };
