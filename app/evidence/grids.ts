/**
 * Grid uploads — bathymetry, horizon grids and palaeo-tidal-range grids — from GeoTIFF, ESRI ASCII
 * grid or XYZ points, reusing the terrain engine's readers (terrain/geotiff-read.ts,
 * terrain/esri-ascii.ts) and its datum conversion (terrain/vertical-datum.ts).
 */
import { readEsriAscii } from "../terrain/esri-ascii";
import { readGeoTiff } from "../terrain/geotiff-read";
import { type Grid, TerrainInputError, makeElevationGrid } from "../terrain/grid";
import { toElevationMsl } from "../terrain/vertical-datum";
import { projectCrs, sourceFromEpsg, terrain } from "./crs-transform";
import { compressionName, geotiffHeaderCheck } from "./geotiff-header";
import { decodeText } from "./text";
import { EvidenceError, type EvidenceFormat, type EvidenceKind, type EvidenceLimits, type ParseOptions, type ParsedEvidence, type VerticalDeclaration } from "./types";
import { gridPoints, parseXyz, pointsPerCellHistogram, pointsToProject } from "./xyz";

export interface GridStats {
  min: number;
  max: number;
  mean: number;
  validCount: number;
  histogram: { edges: number[]; counts: number[] };
}

/** Min, max, mean and a 20-bin histogram of the valid cells. O(n), two passes. */
export function gridStats(grid: Grid<Float32Array>, bins = 20): GridStats {
  const { data, nodata } = grid;
  let min = Infinity;
  let max = -Infinity;
  let sum = 0;
  let count = 0;
  for (let i = 0; i < data.length; i++) {
    if (nodata[i]) continue;
    const v = data[i];
    if (v < min) min = v;
    if (v > max) max = v;
    sum += v;
    count++;
  }
  const width = max > min ? (max - min) / bins : 1;
  const counts = new Array<number>(bins).fill(0);
  for (let i = 0; i < data.length; i++) {
    if (nodata[i]) continue;
    let b = Math.floor((data[i] - min) / width);
    if (b >= bins) b = bins - 1;
    counts[b]++;
  }
  const edges = Array.from({ length: bins + 1 }, (_, k) => min + k * width);
  return { min, max, mean: count ? sum / count : NaN, validCount: count, histogram: { edges, counts } };
}

/** Reads the ESRI ASCII header only, to refuse an enormous declared grid before allocating it. */
function asciiHeaderCells(text: string): { ncols: number; nrows: number } | null {
  const head = text.slice(0, 2048).split(/\r?\n/);
  let ncols = NaN;
  let nrows = NaN;
  for (const l of head) {
    const m = /^\s*(ncols|nrows)\s+(\S+)/i.exec(l);
    if (m) {
      if (m[1].toLowerCase() === "ncols") ncols = Number(m[2]);
      else nrows = Number(m[2]);
    }
  }
  return Number.isFinite(ncols) && Number.isFinite(nrows) ? { ncols, nrows } : null;
}

function describeVertical(v: VerticalDeclaration): string {
  const sign = v.sign === "depth_positive_down" ? "depths, positive down" : "elevations, positive up";
  return `${sign}, below/above ${v.datum}, datum ${v.offsetToMslM >= 0 ? "+" : ""}${v.offsetToMslM} m relative to present MSL`;
}

/** Checks a vertical declaration and adds warnings for likely slips (a sign or offset the wrong way round). */
export function checkVertical(v: VerticalDeclaration | undefined, kind: string, warnings: string[]): VerticalDeclaration {
  if (!v) {
    throw new EvidenceError(
      `a ${kind} upload must declare its vertical datum and sign: are values depths (positive down) or elevations (positive up), relative to which datum (e.g. LAT, MSL), and what is that datum's height relative to present mean sea level?`,
    );
  }
  if (v.sign !== "depth_positive_down" && v.sign !== "elevation_positive_up") {
    throw new EvidenceError(`the vertical sign must be "depth_positive_down" or "elevation_positive_up", got "${String(v.sign)}"`);
  }
  if (typeof v.offsetToMslM !== "number" || !Number.isFinite(v.offsetToMslM)) {
    throw new EvidenceError(`the datum's offset to present mean sea level must be a number of metres, got "${String(v.offsetToMslM)}"`);
  }
  if (!v.datum || String(v.datum).trim() === "") throw new EvidenceError("name the vertical datum (e.g. LAT, chart datum, MSL, ellipsoid)");
  const d = v.datum.toLowerCase();
  if (d.trim() === "seabed" && kind !== "horizon grid") {
    throw new EvidenceError(`"seabed" is a vertical reference only for a horizon grid given as depth below the seabed; declare the ${kind}'s datum (e.g. LAT, MSL)`);
  }
  if (/^(msl|mean sea level)$/.test(d) && v.offsetToMslM !== 0) {
    warnings.push(`the datum is mean sea level but its offset to MSL is declared as ${v.offsetToMslM} m: check the offset (it is applied)`);
  }
  if (/\b(lat|chart|lowest|llwlt|mllw)\b/.test(d) && v.offsetToMslM > 0) {
    warnings.push(
      `the datum ${v.datum} normally lies BELOW mean sea level (a negative offset), but +${v.offsetToMslM} m was declared: check the sign of the offset (it is applied as declared)`,
    );
  }
  if (/ellipsoid/.test(d)) {
    warnings.push("heights relative to the ellipsoid differ from mean sea level by the geoid height (tens of metres); make sure the declared offset includes it");
  }
  return v;
}

const GRID_FORMATS: EvidenceFormat[] = ["geotiff", "esri-ascii", "xyz"];

/**
 * Parses a grid upload of `kind` ("bathymetry", "horizon_grid" or "tidal_range") in `format`.
 *
 * bathymetry: vertical declaration required; returns elevation, m relative to present MSL.
 * horizon_grid: declaration required; datum "seabed" with depth_positive_down keeps depth below the
 *   seabed (m, positive down; summary.verticalReference = "below_seabed"), else elevation as above.
 * tidal_range: values are the range in metres (≥ 0), no datum.
 */
export async function parseGridEvidence(
  kind: EvidenceKind,
  format: EvidenceFormat,
  bytes: Uint8Array,
  opts: ParseOptions,
  limits: EvidenceLimits,
): Promise<ParsedEvidence> {
  if (!GRID_FORMATS.includes(format)) {
    throw new EvidenceError(`a ${kind.replace(/_/g, " ")} grid must be a GeoTIFF, an ESRI ASCII grid or XYZ points, not ${format}`);
  }
  const warnings: string[] = [];
  const project = projectCrs(opts.projectEpsg);
  const vertical = kind === "tidal_range" ? undefined : checkVertical(opts.vertical, kind === "bathymetry" ? "bathymetry" : "horizon grid", warnings);
  const summary: Record<string, unknown> = {};
  let raw: Grid<Float32Array>;
  let nodataCount = 0;
  let nonFiniteCount = 0;

  if (format === "geotiff") {
    const header = geotiffHeaderCheck(bytes, limits, bytes.length);
    let r;
    try {
      r = await readGeoTiff(bytes, { declaredEpsg: opts.declaredEpsg });
    } catch (e) {
      if (e instanceof TerrainInputError) throw new EvidenceError(e.message);
      throw new EvidenceError(`the GeoTIFF's pixel data could not be read (${(e as Error).message}): the file may be truncated or damaged`);
    }
    raw = r.grid;
    nodataCount = r.nodataCount;
    nonFiniteCount = r.nonFiniteCount;
    Object.assign(summary, {
      sampleType: r.sampleType,
      compression: compressionName(header.compression),
      tiled: header.tiled,
      bigTiff: header.bigTiff,
      fileNodataValue: r.nodataValue,
      crsSource: r.crsSource,
    });
  } else if (format === "esri-ascii") {
    const text = decodeText(bytes, "ESRI ASCII grid", warnings);
    const h = asciiHeaderCells(text);
    if (h && h.ncols * h.nrows > limits.maxCells) {
      throw new EvidenceError(
        `the ESRI ASCII header declares ${h.ncols} × ${h.nrows} cells (${(h.ncols * h.nrows).toExponential(1).replace("e+", "e")}), over the limit of ${limits.maxCells.toExponential(1).replace("e+", "e")}: resample it first`,
      );
    }
    if (opts.declaredEpsg === undefined) {
      throw new EvidenceError("an ESRI ASCII grid carries no CRS: declare the EPSG code of its projected CRS in metres when uploading");
    }
    const r = terrain(() => readEsriAscii(text, opts.declaredEpsg!));
    raw = r.grid;
    nodataCount = r.nodataCount;
    nonFiniteCount = r.nonFiniteCount;
    Object.assign(summary, { fileNodataValue: r.nodataValue, crsSource: "declared" });
  } else {
    const pts = parseXyz(bytes, limits.maxPoints ?? limits.maxRows);
    if (opts.declaredEpsg === undefined) {
      throw new EvidenceError("an XYZ file carries no CRS: declare the EPSG code of its x and y when uploading");
    }
    if (!(opts.analysisCellSizeM! > 0)) {
      throw new EvidenceError("XYZ points are gridded on import: declare the analysis cell size in metres (e.g. 10)");
    }
    const transformation = pointsToProject(pts, sourceFromEpsg(opts.declaredEpsg), project);
    const g = gridPoints(pts, opts.analysisCellSizeM!, project, limits.maxCells);
    const made = terrain(() => makeElevationGrid(g.spec, g.values));
    raw = made.grid;
    nodataCount = made.nodataCount;
    if (pts.skippedNoValue) warnings.push(`${pts.skippedNoValue} points with a z of NaN were left out`);
    if (pts.extraColumns) warnings.push("lines with more than three values: only the first three (x y z) were read");
    Object.assign(summary, {
      points: pts.n,
      headerLineSkipped: pts.headerSkipped,
      cellsWithPoints: g.cellsWithPoints,
      maxPointsPerCell: g.maxPerCell,
      meanPointsPerOccupiedCell: pts.n / g.cellsWithPoints,
      pointsPerCell: pointsPerCellHistogram(g.counts),
      gridding: `mean of the points in each ${opts.analysisCellSizeM} m cell; cells without a point are nodata`,
      transformation,
      crsSource: "declared",
    });
  }

  const crs = raw.spec.crs;
  if (!crs || crs.epsg !== project.epsg) {
    throw new EvidenceError(
      `the grid is in EPSG:${crs?.epsg ?? "?"} but the project uses EPSG:${project.epsg}: reproject it first (e.g. gdalwarp -t_srs EPSG:${project.epsg})`,
    );
  }
  if (nonFiniteCount > 0) warnings.push(`${nonFiniteCount} NaN or infinite cells treated as nodata`);

  let grid = raw;
  if (kind === "tidal_range") {
    const { data, nodata, spec } = raw;
    for (let i = 0; i < data.length; i++) {
      if (!nodata[i] && data[i] < 0) {
        const r = Math.floor(i / spec.width);
        throw new EvidenceError(`the tidal range is negative (${data[i]} m) at row ${r}, column ${i - r * spec.width}: a range is a height difference, ≥ 0`, { row: r });
      }
    }
    summary.units = "tidal range, m";
  } else if (kind === "horizon_grid" && vertical!.datum.trim().toLowerCase() === "seabed") {
    if (vertical!.sign !== "depth_positive_down") {
      throw new EvidenceError('a horizon grid relative to the seabed must be declared as depth below seabed (sign "depth_positive_down")');
    }
    const { data, nodata, spec } = raw;
    for (let i = 0; i < data.length; i++) {
      if (!nodata[i] && data[i] < 0) {
        const r = Math.floor(i / spec.width);
        throw new EvidenceError(`depth below seabed is negative (${data[i]} m) at row ${r}, column ${i - r * spec.width}: the horizon cannot lie above the seabed`, { row: r });
      }
    }
    summary.verticalReference = "below_seabed";
    summary.vertical = { ...vertical, applied: "none: values are depth of the horizon below the seabed, m, positive down" };
  } else {
    const v = vertical!;
    if (v.sign === "depth_positive_down" && kind === "bathymetry") {
      let negative = 0;
      let valid = 0;
      for (let i = 0; i < raw.data.length; i++) {
        if (raw.nodata[i]) continue;
        valid++;
        if (raw.data[i] < 0) negative++;
      }
      if (negative > valid / 2) warnings.push(`${negative} of ${valid} values are negative although the grid was declared as depths (positive down): check the sign`);
    }
    grid = terrain(() =>
      toElevationMsl(raw, { sign: v.sign === "depth_positive_down" ? "depth" : "elevation", datumAboveMslM: v.offsetToMslM, name: v.datum }),
    );
    summary.verticalReference = "present_msl";
    summary.vertical = { ...v, applied: `elevation = ${v.sign === "depth_positive_down" ? "−value" : "value"} ${v.offsetToMslM < 0 ? "−" : "+"} ${Math.abs(v.offsetToMslM)} m (${describeVertical(v)})` };
  }

  const { spec } = grid;
  const stats = gridStats(grid);
  Object.assign(summary, {
    width: spec.width,
    height: spec.height,
    cellSizeX: spec.cellSizeX,
    cellSizeY: spec.cellSizeY,
    squareCells: spec.cellSizeX === spec.cellSizeY,
    originX: spec.originX,
    originY: spec.originY,
    nodataCount,
    min: stats.min,
    max: stats.max,
    mean: stats.mean,
    histogram: stats.histogram,
  });
  if (spec.cellSizeX !== spec.cellSizeY) warnings.push(`cells are not square (${spec.cellSizeX} × ${spec.cellSizeY} m); this is supported`);
  return {
    kind,
    format,
    crsEpsg: project.epsg,
    extent: [spec.originX, spec.originY - spec.height * spec.cellSizeY, spec.originX + spec.width * spec.cellSizeX, spec.originY],
    count: spec.width * spec.height,
    summary,
    grid,
    warnings,
  };
}
