/**
 * A small GeoTIFF writer for one-band Float32 and integer layers.
 *
 * Written from the TIFF 6.0 specification (Adobe, 1992) and the OGC GeoTIFF standard 1.1 (OGC 19-008r4,
 * 2019): little-endian classic TIFF, strips or tiles, no compression or Deflate (compression 8, zlib
 * stream; the caller supplies the deflate function so this module stays free of Node built-ins — see
 * geotiff-deflate-node.ts), ModelPixelScale + ModelTiepoint, GeoKeys for a projected EPSG CRS in metres
 * with PixelIsArea, and the GDAL_NODATA tag. The geotiff package's own writer is not used: it is slow
 * on large layers and mis-writes integer types.
 */
import { type Grid, type Layer, TerrainInputError, assertLayerSize, validateSpec } from "./grid";

export interface GeoTiffWriteOptions {
  /** "strips" (default, 16 rows each) or "tiles" (tileSize × tileSize, default 256; must be a multiple of 16). */
  layout?: "strips" | "tiles";
  rowsPerStrip?: number;
  tileSize?: number;
  /** A zlib-format deflate function (e.g. node:zlib deflateSync); when given, blocks are Deflate-compressed. */
  deflate?: (bytes: Uint8Array) => Uint8Array;
  /**
   * Value written on nodata cells and in GDAL_NODATA. Defaults: Float32 NaN, Int32 −2147483648,
   * Uint8 255. Pass null to write no GDAL_NODATA tag (nodata cells are then written as the default).
   */
  nodataValue?: number | null;
  /** Free-text citation stored in GTCitationGeoKey (ASCII). */
  citation?: string;
}

const TYPE_SHORT = 3;
const TYPE_LONG = 4;
const TYPE_ASCII = 2;
const TYPE_DOUBLE = 12;

interface Tag {
  code: number;
  type: number;
  count: number;
  bytes: Uint8Array; // little-endian value bytes
}

const LITTLE_ENDIAN_HOST = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

function shorts(values: number[]): Uint8Array {
  const b = new Uint8Array(values.length * 2);
  const v = new DataView(b.buffer);
  values.forEach((x, i) => v.setUint16(i * 2, x, true));
  return b;
}
function longs(values: ArrayLike<number>): Uint8Array {
  const b = new Uint8Array(values.length * 4);
  const v = new DataView(b.buffer);
  for (let i = 0; i < values.length; i++) v.setUint32(i * 4, values[i], true);
  return b;
}
function doubles(values: number[]): Uint8Array {
  const b = new Uint8Array(values.length * 8);
  const v = new DataView(b.buffer);
  values.forEach((x, i) => v.setFloat64(i * 8, x, true));
  return b;
}
function ascii(text: string): Uint8Array {
  const b = new Uint8Array(text.length + 1);
  for (let i = 0; i < text.length; i++) b[i] = text.charCodeAt(i) & 0x7f;
  return b;
}

function sampleInfo(data: Layer): { bits: number; format: number; defaultNodata: number } {
  if (data instanceof Float32Array) return { bits: 32, format: 3, defaultNodata: NaN };
  if (data instanceof Int32Array) return { bits: 32, format: 2, defaultNodata: -2147483648 };
  if (data instanceof Uint8Array) return { bits: 8, format: 1, defaultNodata: 255 };
  throw new TerrainInputError("GeoTIFF writer supports Float32Array, Int32Array and Uint8Array layers");
}

function formatNodata(v: number): string {
  if (Number.isNaN(v)) return "nan";
  if (v === Infinity) return "inf";
  if (v === -Infinity) return "-inf";
  return String(v);
}

/**
 * Encodes a one-band grid as a GeoTIFF file (bytes).
 *
 * Preconditions: `grid.data` is Float32Array, Int32Array or Uint8Array of width×height cells; cells
 * with `grid.nodata[i] = 1` are written as the nodata value. The CRS, if any, must be a projected CRS in
 * metres identified by an EPSG code. Output is classic (32-bit offset) TIFF, so files must stay under
 * 4 GiB. Complexity O(n) time and O(n) extra memory (one copy of the pixel bytes, plus compressed blocks).
 */
export function writeGeoTiff(grid: Grid<Layer>, options: GeoTiffWriteOptions = {}): Uint8Array {
  const { spec, data, nodata } = grid;
  validateSpec(spec);
  assertLayerSize(spec, data, "layer");
  assertLayerSize(spec, nodata, "nodata mask");
  const { width, height } = spec;
  const info = sampleInfo(data);
  const bps = info.bits / 8;
  const nodataValue = options.nodataValue === undefined ? info.defaultNodata : options.nodataValue;
  const fill = nodataValue === null ? info.defaultNodata : nodataValue;
  const tiled = options.layout === "tiles";
  const tileSize = options.tileSize ?? 256;
  if (tiled && (tileSize <= 0 || tileSize % 16 !== 0)) {
    throw new TerrainInputError(`tile size must be a positive multiple of 16, got ${tileSize}`);
  }
  const rowsPerStrip = Math.max(1, Math.min(height, options.rowsPerStrip ?? 16));
  const compressed = typeof options.deflate === "function";

  // Pixel values with nodata applied, in a typed array of the layer's type.
  const Ctor = data.constructor as { new (n: number): Layer };
  const n = width * height;
  const px = new Ctor(n);
  px.set(data as never);
  for (let i = 0; i < n; i++) if (nodata[i]) px[i] = fill;
  const pxBytes = new Uint8Array(px.buffer, px.byteOffset, px.byteLength);

  const toLE = (bytes: Uint8Array): Uint8Array => {
    if (LITTLE_ENDIAN_HOST || bps === 1) return bytes;
    const out = new Uint8Array(bytes.length);
    for (let i = 0; i < bytes.length; i += bps) for (let k = 0; k < bps; k++) out[i + k] = bytes[i + bps - 1 - k];
    return out;
  };

  // Build the blocks.
  const blocks: Uint8Array[] = [];
  if (!tiled) {
    for (let r0 = 0; r0 < height; r0 += rowsPerStrip) {
      const r1 = Math.min(height, r0 + rowsPerStrip);
      blocks.push(toLE(pxBytes.subarray(r0 * width * bps, r1 * width * bps)));
    }
  } else {
    const tilesAcross = Math.ceil(width / tileSize);
    const tilesDown = Math.ceil(height / tileSize);
    for (let ty = 0; ty < tilesDown; ty++) {
      for (let tx = 0; tx < tilesAcross; tx++) {
        const tile = new Ctor(tileSize * tileSize);
        tile.fill(fill);
        const c0 = tx * tileSize;
        const cols = Math.min(tileSize, width - c0);
        for (let r = 0; r < tileSize; r++) {
          const gr = ty * tileSize + r;
          if (gr >= height) break;
          tile.set(px.subarray(gr * width + c0, gr * width + c0 + cols) as never, r * tileSize);
        }
        blocks.push(toLE(new Uint8Array(tile.buffer)));
      }
    }
  }
  const stored = compressed ? blocks.map((b) => options.deflate!(b)) : blocks;

  // Tags.
  const tags: Tag[] = [];
  const add = (code: number, type: number, count: number, bytes: Uint8Array) => tags.push({ code, type, count, bytes });
  add(256, TYPE_LONG, 1, longs([width]));
  add(257, TYPE_LONG, 1, longs([height]));
  add(258, TYPE_SHORT, 1, shorts([info.bits]));
  add(259, TYPE_SHORT, 1, shorts([compressed ? 8 : 1]));
  add(262, TYPE_SHORT, 1, shorts([1]));
  add(277, TYPE_SHORT, 1, shorts([1]));
  add(284, TYPE_SHORT, 1, shorts([1]));
  add(339, TYPE_SHORT, 1, shorts([info.format]));
  const offsetsTag: Tag = { code: tiled ? 324 : 273, type: TYPE_LONG, count: stored.length, bytes: longs(new Array(stored.length).fill(0)) };
  tags.push(offsetsTag);
  add(tiled ? 325 : 279, TYPE_LONG, stored.length, longs(stored.map((b) => b.length)));
  if (tiled) {
    add(322, TYPE_LONG, 1, longs([tileSize]));
    add(323, TYPE_LONG, 1, longs([tileSize]));
  } else {
    add(278, TYPE_LONG, 1, longs([rowsPerStrip]));
  }
  add(33550, TYPE_DOUBLE, 3, doubles([spec.cellSizeX, spec.cellSizeY, 0]));
  add(33922, TYPE_DOUBLE, 6, doubles([0, 0, 0, spec.originX, spec.originY, 0]));
  // GeoKeyDirectory: header (version 1, revision 1.1, count), then (key, location, count, value).
  const keys: number[][] = [];
  const citation = options.citation ?? "";
  if (spec.crs) {
    keys.push([1024, 0, 1, 1]); // GTModelTypeGeoKey = projected
    keys.push([1025, 0, 1, 1]); // GTRasterTypeGeoKey = PixelIsArea
    if (citation) keys.push([1026, 34737, citation.length + 1, 0]); // GTCitationGeoKey
    keys.push([3072, 0, 1, spec.crs.epsg]); // ProjectedCSTypeGeoKey
    keys.push([3076, 0, 1, 9001]); // ProjLinearUnitsGeoKey = metre
  } else {
    keys.push([1025, 0, 1, 1]);
    if (citation) keys.push([1026, 34737, citation.length + 1, 0]);
  }
  add(34735, TYPE_SHORT, 4 + keys.length * 4, shorts([1, 1, 1, keys.length, ...keys.flat()]));
  if (citation) add(34737, TYPE_ASCII, citation.length + 2, ascii(citation + "|"));
  if (nodataValue !== null) {
    const s = formatNodata(nodataValue);
    add(42113, TYPE_ASCII, s.length + 1, ascii(s));
  }
  tags.sort((a, b) => a.code - b.code);

  // Layout: header (8) | IFD (2 + 12·k + 4) | out-of-line tag values | blocks.
  const ifdSize = 2 + tags.length * 12 + 4;
  let cursor = 8 + ifdSize;
  const valueOffsets = new Map<Tag, number>();
  for (const t of tags) {
    if (t.bytes.length > 4) {
      cursor += cursor & 1; // word alignment
      valueOffsets.set(t, cursor);
      cursor += t.bytes.length;
    }
  }
  cursor += cursor & 1;
  const blockOffsets: number[] = [];
  for (const b of stored) {
    blockOffsets.push(cursor);
    cursor += b.length;
  }
  if (cursor > 0xffffffff) {
    throw new TerrainInputError(`GeoTIFF would be ${cursor} bytes; classic TIFF is limited to 4 GiB`);
  }
  offsetsTag.bytes = longs(blockOffsets);

  const out = new Uint8Array(cursor);
  const view = new DataView(out.buffer);
  out[0] = 0x49;
  out[1] = 0x49;
  view.setUint16(2, 42, true);
  view.setUint32(4, 8, true);
  let p = 8;
  view.setUint16(p, tags.length, true);
  p += 2;
  for (const t of tags) {
    view.setUint16(p, t.code, true);
    view.setUint16(p + 2, t.type, true);
    view.setUint32(p + 4, t.count, true);
    const off = valueOffsets.get(t);
    if (off === undefined) out.set(t.bytes, p + 8);
    else {
      view.setUint32(p + 8, off, true);
      out.set(t.bytes, off);
    }
    p += 12;
  }
  view.setUint32(p, 0, true); // no next IFD
  stored.forEach((b, i) => out.set(b, blockOffsets[i]));
  return out;
}
