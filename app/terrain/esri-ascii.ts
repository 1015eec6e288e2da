/**
 * Reads an ESRI ASCII grid (the plain-text raster exchange format: a header of `ncols`, `nrows`,
 * `xllcorner`/`xllcenter`, `yllcorner`/`yllcenter`, `cellsize` — or `dx` and `dy` for non-square
 * cells — and optional `nodata_value`, then nrows lines of ncols values, northern row first).
 * The format carries no CRS, so the user declares the EPSG code.
 */
import { resolveCrs } from "./crs";
import { type Grid, type GridSpec, TerrainInputError, makeElevationGrid } from "./grid";

export interface EsriAsciiReadResult {
  grid: Grid<Float32Array>;
  nonFiniteCount: number;
  nodataCount: number;
  nodataValue: number | null;
}

const HEADER_KEYS = new Set(["ncols", "nrows", "xllcorner", "xllcenter", "yllcorner", "yllcenter", "cellsize", "dx", "dy", "nodata_value"]);

/**
 * Parses the text of an ESRI ASCII grid. Preconditions: the declared EPSG code is a projected CRS in
 * metres. Values equal to nodata_value, and NaN/±Inf tokens, become nodata (counted). Throws
 * TerrainInputError naming the line (and value position) for a missing or bad header item, a
 * non-numeric value, or too few/too many values; and for grids under 3×3 or with no valid cell.
 * O(characters) time, one pass, no per-value allocation beyond the number parse.
 */
export function readEsriAscii(text: string, declaredEpsg: number): EsriAsciiReadResult {
  const crs = resolveCrs(declaredEpsg);
  const header = new Map<string, number>();
  let pos = 0;
  let line = 1;
  const len = text.length;
  // Header: lines whose first token is a known key.
  for (;;) {
    while (pos < len && (text.charCodeAt(pos) === 32 || text.charCodeAt(pos) === 9 || text.charCodeAt(pos) === 13)) pos++;
    if (pos < len && text.charCodeAt(pos) === 10) {
      pos++;
      line++;
      continue;
    }
    let end = text.indexOf("\n", pos);
    if (end < 0) end = len;
    const raw = text.slice(pos, end).trim();
    const parts = raw.split(/\s+/);
    const key = parts[0]?.toLowerCase();
    if (!key || !HEADER_KEYS.has(key)) break;
    if (parts.length !== 2 || !Number.isFinite(Number(parts[1]))) {
      throw new TerrainInputError(`line ${line}: header item "${parts[0]}" needs one number, got "${raw}"`);
    }
    header.set(key, Number(parts[1]));
    pos = end + 1;
    line++;
  }
  const need = (k: string): number => {
    const v = header.get(k);
    if (v === undefined) throw new TerrainInputError(`the ESRI ASCII header has no "${k}" line`);
    return v;
  };
  const ncols = need("ncols");
  const nrows = need("nrows");
  if (!Number.isInteger(ncols) || !Number.isInteger(nrows) || ncols <= 0 || nrows <= 0) {
    throw new TerrainInputError(`ncols and nrows must be positive whole numbers, got ${ncols} and ${nrows}`);
  }
  let dx: number;
  let dy: number;
  if (header.has("cellsize")) {
    dx = dy = need("cellsize");
  } else if (header.has("dx") && header.has("dy")) {
    dx = need("dx");
    dy = need("dy");
  } else {
    throw new TerrainInputError('the ESRI ASCII header has no "cellsize" line (nor "dx" and "dy")');
  }
  if (!(dx > 0) || !(dy > 0)) throw new TerrainInputError(`cell size must be positive metres, got ${dx} × ${dy}`);
  let xll: number;
  let yll: number;
  if (header.has("xllcorner")) xll = need("xllcorner");
  else if (header.has("xllcenter")) xll = need("xllcenter") - dx / 2;
  else throw new TerrainInputError('the ESRI ASCII header has no "xllcorner" or "xllcenter" line');
  if (header.has("yllcorner")) yll = need("yllcorner");
  else if (header.has("yllcenter")) yll = need("yllcenter") - dy / 2;
  else throw new TerrainInputError('the ESRI ASCII header has no "yllcorner" or "yllcenter" line');
  const nodataValue = header.has("nodata_value") ? need("nodata_value") : null;
  if (ncols < 3 || nrows < 3) {
    throw new TerrainInputError(`the grid is ${ncols}×${nrows} cells; it must be at least 3×3 cells`);
  }
  const n = ncols * nrows;
  const values = new Float64Array(n);
  const mask = new Uint8Array(n);
  let count = 0;
  while (pos < len) {
    const c = text.charCodeAt(pos);
    if (c === 10) {
      line++;
      pos++;
      continue;
    }
    if (c === 32 || c === 9 || c === 13 || c === 44) {
      pos++;
      continue;
    }
    let end = pos;
    while (end < len) {
      const d = text.charCodeAt(end);
      if (d === 32 || d === 9 || d === 13 || d === 10 || d === 44) break;
      end++;
    }
    const token = text.slice(pos, end);
    let v = Number(token);
    if (Number.isNaN(v)) {
      const t = token.toLowerCase();
      if (t === "nan" || t === "-nan") v = NaN;
      else if (t === "inf" || t === "+inf" || t === "infinity") v = Infinity;
      else if (t === "-inf" || t === "-infinity") v = -Infinity;
      else {
        const row = Math.floor(count / ncols);
        throw new TerrainInputError(
          `line ${line}: "${token}" is not a number (grid row ${row}, column ${count - row * ncols})`,
        );
      }
    }
    if (count >= n) {
      throw new TerrainInputError(`line ${line}: more values than ncols × nrows = ${ncols} × ${nrows} = ${n}`);
    }
    values[count] = v;
    if (nodataValue !== null && v === nodataValue) mask[count] = 1;
    count++;
    pos = end;
  }
  if (count < n) {
    throw new TerrainInputError(
      `the grid has ${count} values but ncols × nrows = ${ncols} × ${nrows} = ${n}: ${n - count} are missing (the file may be cut short)`,
    );
  }
  const spec: GridSpec = {
    width: ncols,
    height: nrows,
    originX: xll,
    originY: yll + nrows * dy,
    cellSizeX: dx,
    cellSizeY: dy,
    crs,
  };
  const { grid, nonFiniteCount, nodataCount } = makeElevationGrid(spec, values, mask);
  return { grid, nonFiniteCount, nodataCount, nodataValue };
}

/** Writes a Float32 grid as ESRI ASCII text (square cells use `cellsize`, others `dx`/`dy`). O(n). */
export function writeEsriAscii(grid: Grid<Float32Array>, nodataValue = -9999): string {
  const { spec, data, nodata } = grid;
  const lines: string[] = [
    `ncols ${spec.width}`,
    `nrows ${spec.height}`,
    `xllcorner ${spec.originX}`,
    `yllcorner ${spec.originY - spec.height * spec.cellSizeY}`,
  ];
  if (spec.cellSizeX === spec.cellSizeY) lines.push(`cellsize ${spec.cellSizeX}`);
  else lines.push(`dx ${spec.cellSizeX}`, `dy ${spec.cellSizeY}`);
  lines.push(`NODATA_value ${nodataValue}`);
  for (let r = 0; r < spec.height; r++) {
    const row: string[] = new Array(spec.width);
    for (let c = 0; c < spec.width; c++) {
      const i = r * spec.width + c;
      row[c] = nodata[i] ? String(nodataValue) : String(data[i]);
    }
    lines.push(row.join(" "));
  }
  return lines.join("\n") + "\n";
}
