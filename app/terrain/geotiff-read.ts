/**
 * Reads a one-band GeoTIFF (any numeric sample type) into a Float32 grid with the geotiff package.
 *
 * Georeferencing follows the OGC GeoTIFF standard 1.1 (OGC 19-008r4): ModelPixelScale + ModelTiepoint,
 * or a ModelTransformation without rotation; PixelIsPoint rasters are shifted half a cell so the
 * origin is the corner of cell (0,0), as GDAL does. Nodata comes from the GDAL_NODATA tag.
 */
import { fromArrayBuffer } from "geotiff";
import { type Crs, USER_DEFINED_CODE, resolveCrs } from "./crs";
import { type Grid, type GridSpec, TerrainInputError, makeElevationGrid } from "./grid";

export interface GeoTiffReadOptions {
  /** EPSG code the user declared; used when the file has no GeoKeys or a user-defined CRS. */
  declaredEpsg?: number;
}

export interface GeoTiffReadResult {
  grid: Grid<Float32Array>;
  /** Cells that held NaN or ±Infinity (made nodata). */
  nonFiniteCount: number;
  /** All nodata cells (declared nodata value, NaN/Inf). */
  nodataCount: number;
  /** The file's sample type, e.g. "int16", "float32". */
  sampleType: string;
  /** The GDAL_NODATA value found, if any. */
  nodataValue: number | null;
  /** Where the CRS came from. */
  crsSource: "geokeys" | "declared";
}

function sampleTypeName(format: number, bits: number): string {
  const kind = format === 3 ? "float" : format === 2 ? "int" : "uint";
  return `${kind}${bits}`;
}

/**
 * Reads the first image of a GeoTIFF. Preconditions: one band; north-up (no rotation or shear, no
 * south-up scale); a projected CRS in metres from GeoKeys or declared by the user. The declared nodata
 * value and NaN/±Inf become nodata (counted, not refused). Throws TerrainInputError naming the problem
 * for several bands, rotated/sheared or south-up transforms, missing georeferencing, geographic,
 * user-defined or unknown CRSs, a declared EPSG that contradicts the file, grids smaller than 3×3 and
 * grids with no valid cell. O(n) after decoding.
 */
export async function readGeoTiff(bytes: ArrayBuffer | Uint8Array, options: GeoTiffReadOptions = {}): Promise<GeoTiffReadResult> {
  const buffer =
    bytes instanceof Uint8Array
      ? (bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer)
      : bytes;
  let tiff;
  let image;
  try {
    tiff = await fromArrayBuffer(buffer);
    image = await tiff.getImage(0);
  } catch (e) {
    throw new TerrainInputError(`the file is not a readable TIFF/GeoTIFF (${(e as Error).message})`);
  }
  const width = image.getWidth();
  const height = image.getHeight();
  const bands = image.getSamplesPerPixel();
  if (bands !== 1) {
    throw new TerrainInputError(`the GeoTIFF has ${bands} bands; upload a one-band elevation grid`);
  }
  const fd = image.fileDirectory;
  const load = async (name: string): Promise<number[] | undefined> => {
    if (!fd.hasTag(name as never)) return undefined;
    const v = await fd.loadValue(name as never);
    return v === undefined ? undefined : Array.from(v as ArrayLike<number>);
  };
  const transform = await load("ModelTransformation");
  const tiepoint = await load("ModelTiepoint");
  const scale = await load("ModelPixelScale");
  let geoKeys: Record<string, unknown> | null = null;
  try {
    geoKeys = image.getGeoKeys() as Record<string, unknown> | null;
  } catch {
    geoKeys = null;
  }

  // ---- georeferencing
  let originX: number;
  let originY: number;
  let sx: number;
  let sy: number;
  if (transform && transform.length >= 16) {
    const [a, b, , d, e, f, , h] = transform;
    if (b !== 0 || e !== 0) {
      throw new TerrainInputError(
        `the GeoTIFF's transform is rotated or sheared (terms ${b}, ${e}); Lowstand needs a north-up grid: warp it to north-up first`,
      );
    }
    sx = a;
    sy = -f;
    originX = d;
    originY = h;
  } else if (tiepoint && scale && tiepoint.length >= 6) {
    if (tiepoint.length > 6) {
      throw new TerrainInputError(
        `the GeoTIFF is georeferenced by ${tiepoint.length / 6} tie points (a warp), not a regular grid; warp it to a north-up grid first`,
      );
    }
    sx = scale[0];
    sy = scale[1];
    originX = tiepoint[3] - tiepoint[0] * sx;
    originY = tiepoint[4] + tiepoint[1] * sy;
  } else {
    throw new TerrainInputError("the GeoTIFF has no georeferencing (no pixel scale and tie point, no transform)");
  }
  if (!(sx > 0) || !(sy > 0)) {
    throw new TerrainInputError(
      `the GeoTIFF's cell size is ${sx} × ${sy}: only north-up grids with positive cell sizes are accepted (flip south-up grids first)`,
    );
  }
  if (geoKeys && geoKeys.GTRasterTypeGeoKey === 2) {
    // PixelIsPoint: the tie point is the centre of cell (0,0).
    originX -= sx / 2;
    originY += sy / 2;
  }

  // ---- CRS
  let crs: Crs;
  let crsSource: "geokeys" | "declared";
  const model = geoKeys?.GTModelTypeGeoKey as number | undefined;
  if (model === 2) {
    const g = geoKeys?.GeographicTypeGeoKey;
    throw new TerrainInputError(
      `the GeoTIFF is in a geographic CRS${g ? ` (EPSG:${g})` : ""}, longitude/latitude in degrees: project it to a projected CRS in metres (for example its UTM zone) first, then upload it again`,
    );
  }
  const fileCode = geoKeys?.ProjectedCSTypeGeoKey as number | undefined;
  const declared = options.declaredEpsg;
  if (fileCode !== undefined && fileCode !== USER_DEFINED_CODE) {
    if (declared !== undefined && declared !== fileCode) {
      throw new TerrainInputError(
        `you declared EPSG:${declared} but the GeoTIFF says EPSG:${fileCode}: check which is right and declare that one, or leave the declaration empty`,
      );
    }
    crs = resolveCrs(fileCode);
    crsSource = "geokeys";
  } else if (declared !== undefined) {
    crs = resolveCrs(declared);
    crsSource = "declared";
  } else if (fileCode === USER_DEFINED_CODE) {
    crs = resolveCrs(USER_DEFINED_CODE); // throws with the message saying to declare a code
    crsSource = "geokeys";
  } else {
    throw new TerrainInputError(
      "the GeoTIFF names no CRS (no GeoKeys): declare the EPSG code of its projected CRS in metres when uploading",
    );
  }
  // Units need no separate check: resolveCrs accepts only projected CRSs in metres.

  const spec: GridSpec = { width, height, originX, originY, cellSizeX: sx, cellSizeY: sy, crs };
  if (width < 3 || height < 3) {
    throw new TerrainInputError(`the grid is ${width}×${height} cells; it must be at least 3×3 cells`);
  }

  // ---- values
  const raster = (await image.readRasters({ interleave: true })) as unknown as ArrayLike<number>;
  const nodataValue = image.getGDALNoData();
  const n = width * height;
  const mask = new Uint8Array(n);
  if (nodataValue !== null && Number.isNaN(nodataValue)) {
    // GDAL_NODATA = nan: NaN cells are declared nodata, not surprises to report
    for (let i = 0; i < n; i++) if (Number.isNaN(raster[i])) mask[i] = 1;
  } else if (nodataValue !== null) {
    // Compare in the file's own type: float32 files store the nodata rounded to float32.
    const format = image.getSampleFormat() as number;
    const bits = image.getBitsPerSample() as number;
    const target = format === 3 && bits === 32 ? Math.fround(nodataValue) : nodataValue;
    for (let i = 0; i < n; i++) if (raster[i] === target) mask[i] = 1;
  }
  const sampleType = sampleTypeName(image.getSampleFormat() as number, image.getBitsPerSample() as number);
  const { grid, nonFiniteCount, nodataCount } = makeElevationGrid(spec, raster, mask);
  return { grid, nonFiniteCount, nodataCount, sampleType, nodataValue, crsSource };
}
