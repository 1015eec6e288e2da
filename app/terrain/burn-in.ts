/**
 * Burning mapped palaeochannels into the elevation before depression filling, so the reconstructed
 * drainage follows channels the survey has mapped (common practice, no single source; the simplest
 * form of "stream burning", lowering mapped channel cells by a fixed depth).
 */
import { type Grid, type GridSpec, TerrainInputError, assertLayerSize } from "./grid";
import { rasterizePolyline } from "./flooding";

/**
 * Cells crossed by mapped channel centre-lines (project-CRS polylines). Uint8 mask. O(total length /
 * cell size).
 */
export function rasterizeChannels(spec: GridSpec, lines: [number, number][][]): Uint8Array {
  const mask = new Uint8Array(spec.width * spec.height);
  for (const line of lines) if (line.length > 0) rasterizePolyline(spec, line, mask);
  return mask;
}

/**
 * Lowers the cells of `channelMask` by `depthM` metres (a new grid; nodata stays nodata). Preconditions:
 * depth > 0 and finite, ideally more than the local relief across a channel so the fill keeps water in
 * it. Throws TerrainInputError for a bad depth or a wrong-sized mask. O(n).
 */
export function burnChannels(elev: Grid<Float32Array>, channelMask: Uint8Array, depthM: number): Grid<Float32Array> {
  if (!(depthM > 0) || !Number.isFinite(depthM)) {
    throw new TerrainInputError(`burn-in depth must be a positive number of metres, got ${depthM}`);
  }
  assertLayerSize(elev.spec, channelMask, "channel mask");
  const data = new Float32Array(elev.data);
  for (let i = 0; i < data.length; i++) if (channelMask[i] && !elev.nodata[i]) data[i] -= depthM;
  return { spec: elev.spec, data, nodata: elev.nodata.slice() };
}
