/**
 * Vertical datum and sign: every uploaded height declares whether it is a depth (positive down) or an
 * elevation (positive up) and the offset of its datum to present mean sea level; inside the engine all
 * heights are elevations in metres relative to present mean sea level (MSL), positive up.
 */
import { type Grid, TerrainInputError, assertLayerSize, makeElevationGrid } from "./grid";

export interface VerticalDatum {
  /** "depth": values are depths, positive down; "elevation": values are heights, positive up. */
  sign: "depth" | "elevation";
  /**
   * Height of the input's datum above present mean sea level, m (negative when the datum lies below
   * MSL, as chart datum / lowest astronomical tide does): a constant or a per-cell layer.
   */
  datumAboveMslM: number | Float32Array;
  /** Name of the datum, carried into provenance (e.g. "chart datum (LAT)", "MSL"). */
  name: string;
}

/**
 * Converts an uploaded grid to elevation relative to present MSL:
 *   elevation = (sign = depth ? −value : value) + datumAboveMslM.
 * (formula) e.g. a depth of 10 m below a chart datum that lies 2.5 m below MSL → −12.5 m.
 * Preconditions: values in metres; a per-cell offset layer has NaN where unknown (the cell becomes
 * nodata). Throws TerrainInputError for a non-finite constant offset or a wrong-sized layer, and if no
 * cell remains valid. O(n).
 */
export function toElevationMsl(input: Grid<Float32Array>, datum: VerticalDatum): Grid<Float32Array> {
  const { spec, data, nodata } = input;
  const off = datum.datumAboveMslM;
  if (typeof off === "number") {
    if (!Number.isFinite(off)) throw new TerrainInputError(`datum offset to mean sea level must be a number of metres, got ${off}`);
  } else {
    assertLayerSize(spec, off, "datum-offset layer");
  }
  if (datum.sign !== "depth" && datum.sign !== "elevation") {
    throw new TerrainInputError(`heights must be declared as "depth" (positive down) or "elevation" (positive up), got "${datum.sign}"`);
  }
  const s = datum.sign === "depth" ? -1 : 1;
  const n = data.length;
  const out = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    out[i] = nodata[i] ? NaN : s * data[i] + (typeof off === "number" ? off : off[i]);
  }
  return makeElevationGrid(spec, out, nodata).grid;
}

/**
 * The palaeo-surface below a sediment cover: surface = seabed − cover thickness (m). (formula) e.g. a
 * seabed at −40.0 m under 2.0 m of sediment → −42.0 m. Cells where the thickness is NaN are nodata
 * (unassessed), never "zero cover". Throws TerrainInputError for negative thickness (naming the cell).
 * O(n).
 */
export function surfaceBelowCover(seabed: Grid<Float32Array>, thicknessM: Float32Array): Grid<Float32Array> {
  const { spec, data, nodata } = seabed;
  assertLayerSize(spec, thicknessM, "cover-thickness layer");
  const n = data.length;
  const out = new Float32Array(n);
  const mask = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const t = thicknessM[i];
    if (nodata[i] || Number.isNaN(t)) {
      mask[i] = 1;
      out[i] = NaN;
      continue;
    }
    if (t < 0) {
      const r = Math.floor(i / spec.width);
      throw new TerrainInputError(`cover thickness is negative (${t} m) at row ${r}, column ${i - r * spec.width}`);
    }
    out[i] = data[i] - t;
  }
  return makeElevationGrid(spec, out, mask).grid;
}
