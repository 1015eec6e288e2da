/**
 * Checks a GeoTIFF's first image directory (IFD) before any pixel is decoded: a small compressed file
 * may declare a grid of gigabytes, and a many-band or picture file is refused by its header alone.
 *
 * Written from the TIFF 6.0 specification (Adobe, 1992; classic TIFF, 32-bit offsets) and the
 * BigTIFF extension (64-bit offsets, magic 43): header, IFD entry layout (tag, type, count,
 * value-or-offset) and the baseline tags 256 ImageWidth, 257 ImageLength, 258 BitsPerSample,
 * 259 Compression, 262 PhotometricInterpretation, 277 SamplesPerPixel, 322/323 TileWidth/TileLength,
 * 339 SampleFormat.
 */
import { EvidenceError, type EvidenceLimits, DEFAULT_LIMITS } from "./types";
import { isTiff } from "./sniff";

export interface GeoTiffHeader {
  width: number;
  height: number;
  bands: number;
  /** 1 unsigned integer, 2 signed integer, 3 floating point (TIFF SampleFormat) */
  sampleFormat: number;
  bitsPerSample: number;
  /** TIFF compression code (1 none, 5 LZW, 8 Deflate, …) */
  compression: number;
  tiled: boolean;
  /** true for BigTIFF (64-bit offsets) */
  bigTiff: boolean;
}

/** Compression codes the reader (the geotiff package) decodes and that keep elevation values exact. */
const COMPRESSIONS: Record<number, string> = {
  1: "none",
  5: "LZW",
  8: "Deflate",
  32946: "Deflate",
  32773: "PackBits",
  34887: "LERC",
  50000: "Zstandard",
};

/** Bytes per value of each TIFF field type (TIFF 6.0 §2 and BigTIFF types 16–18). */
const TYPE_SIZE: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 16: 8, 17: 8, 18: 8 };

function sci(n: number): string {
  return n.toExponential(1).replace("e+", "e");
}

/**
 * Reads only the first IFD of a TIFF/BigTIFF. `head` is the whole file or its first bytes (enough to
 * hold the first IFD — GDAL and most writers put it right after the 8- or 16-byte header);
 * `fileSize` is the whole file's size: always pass it, so that a file cut short is told apart from a
 * head too short to hold the IFD (without it, an IFD beyond `head` is never called a truncation).
 *
 * Throws EvidenceError (with the byte where known) for: too short or not a TIFF; an IFD offset past
 * the end of the file (truncated); a directory cut short; no width/height; more than one band; a
 * palette-colour picture; 1-, 2- or 4-bit, complex or 64-bit integer samples; JPEG or unknown
 * compression; and width × height over `limits.maxCells`. Throws a plain Error when the IFD lies
 * beyond `head` but inside the file (read more bytes: a caller's problem, not the user's). O(entries).
 */
export function geotiffHeaderCheck(
  head: Uint8Array,
  limits: Pick<EvidenceLimits, "maxCells"> = DEFAULT_LIMITS,
  fileSize: number = Number.POSITIVE_INFINITY,
): GeoTiffHeader {
  if (head.length < 8) {
    throw new EvidenceError(`the file is ${head.length} bytes long: too short to be a GeoTIFF (truncated?)`, { byte: head.length });
  }
  if (!isTiff(head)) throw new EvidenceError("the file does not start with a TIFF signature (II*\\0 or MM\\0*): it is not a GeoTIFF", { byte: 0 });
  const little = head[0] === 0x49;
  const view = new DataView(head.buffer, head.byteOffset, head.byteLength);
  const u16 = (o: number) => view.getUint16(o, little);
  const u32 = (o: number) => view.getUint32(o, little);
  const u64 = (o: number) => {
    const lo = view.getUint32(o + (little ? 0 : 4), little);
    const hi = view.getUint32(o + (little ? 4 : 0), little);
    return hi * 2 ** 32 + lo;
  };
  const big = u16(2) === 43;
  if (big && head.length < 16) throw new EvidenceError("the BigTIFF header is cut short (under 16 bytes)", { byte: head.length });
  if (big && (u16(4) !== 8 || u16(6) !== 0)) throw new EvidenceError("the BigTIFF header is damaged (offset size is not 8)", { byte: 4 });
  const ifd = big ? u64(8) : u32(4);
  if (ifd < (big ? 16 : 8)) throw new EvidenceError(`the TIFF's first image directory offset (${ifd}) is invalid: the file is damaged`, { byte: big ? 8 : 4 });
  if (ifd >= fileSize) {
    throw new EvidenceError(
      `the TIFF's first image directory should start at byte ${ifd} but the file ends at byte ${fileSize}: the file is truncated or damaged`,
      { byte: ifd },
    );
  }
  const countSize = big ? 8 : 2;
  const entrySize = big ? 20 : 12;
  if (ifd + countSize > head.length) {
    if (head.length < fileSize) throw new Error(`geotiffHeaderCheck: the first IFD is at byte ${ifd}; pass the file's bytes up to at least ${ifd + 4096}`);
    throw new EvidenceError(`the TIFF's image directory at byte ${ifd} is cut short: the file is truncated`, { byte: ifd });
  }
  const entries = big ? u64(ifd) : u16(ifd);
  const end = ifd + countSize + entries * entrySize;
  if (entries === 0) throw new EvidenceError(`the TIFF's image directory at byte ${ifd} is empty: the file is damaged`, { byte: ifd });
  if (end > head.length) {
    if (head.length < fileSize && end <= fileSize) throw new Error(`geotiffHeaderCheck: the first IFD ends at byte ${end}; pass at least that many bytes`);
    throw new EvidenceError(
      `the TIFF's image directory (${entries} entries from byte ${ifd}) runs past the end of the file at byte ${head.length}: the file is truncated`,
      { byte: head.length },
    );
  }
  const tags = new Map<number, number>(); // first value of each inline numeric tag
  const counts = new Map<number, number>();
  for (let k = 0; k < entries; k++) {
    const e = ifd + countSize + k * entrySize;
    const tag = u16(e);
    const type = u16(e + 2);
    const count = big ? u64(e + 4) : u32(e + 4);
    const valueAt = e + (big ? 12 : 8);
    const size = TYPE_SIZE[type];
    counts.set(tag, count);
    if (!size || count === 0) continue;
    const inline = size * count <= (big ? 8 : 4);
    // the first value of an array held elsewhere is read if it lies in head (BitsPerSample per band, …)
    let at = valueAt;
    if (!inline) {
      at = big ? u64(valueAt) : u32(valueAt);
      if (at + size > head.length) continue;
    }
    let v: number;
    if (type === 3 || type === 8) v = u16(at);
    else if (type === 4 || type === 9 || type === 13) v = u32(at);
    else if (type === 16 || type === 17 || type === 18) v = u64(at);
    else if (type === 1 || type === 6 || type === 7) v = head[at];
    else continue;
    tags.set(tag, v);
  }
  const width = tags.get(256);
  const height = tags.get(257);
  if (!width || !height) throw new EvidenceError("the TIFF's image directory gives no width or height: the file is damaged", { byte: ifd });
  const bands = tags.get(277) ?? 1;
  const photometric = tags.get(262);
  if (bands !== 1) {
    const picture = photometric === 2 ? " (an RGB picture?)" : "";
    throw new EvidenceError(`the GeoTIFF has ${bands} bands${picture}; upload a one-band grid of heights (e.g. gdal_translate -b 1)`);
  }
  if (photometric === 3) {
    throw new EvidenceError("the GeoTIFF is a palette-colour picture (colour map), not a grid of heights: export the elevation values instead");
  }
  const bits = tags.get(258) ?? 1;
  const format = tags.get(339) ?? 1;
  const compression = tags.get(259) ?? 1;
  if (format === 5 || format === 6) throw new EvidenceError("the GeoTIFF holds complex numbers; upload real-valued heights");
  const okBits = format === 3 ? [16, 32, 64] : [8, 16, 32];
  if (!okBits.includes(bits)) {
    const kind = format === 3 ? "floating-point" : format === 2 ? "signed integer" : "unsigned integer";
    throw new EvidenceError(
      `the GeoTIFF holds ${bits}-bit ${kind} samples; Lowstand reads 8-, 16- and 32-bit integers and 16-, 32- and 64-bit floats${bits < 8 ? " (a 1- or 4-bit file is a mask or picture, not heights)" : ""}`,
    );
  }
  if (compression === 6 || compression === 7) {
    throw new EvidenceError("the GeoTIFF is JPEG-compressed, which is lossy and changes heights: re-save it with Deflate or LZW (gdal_translate -co COMPRESS=DEFLATE)");
  }
  if (!COMPRESSIONS[compression]) {
    throw new EvidenceError(
      `the GeoTIFF uses compression code ${compression}, which Lowstand does not read: re-save it with Deflate or LZW (gdal_translate -co COMPRESS=DEFLATE)`,
    );
  }
  const cells = width * height;
  if (cells > limits.maxCells) {
    throw new EvidenceError(
      `the GeoTIFF declares ${width} × ${height} cells (${sci(cells)}), over the limit of ${sci(limits.maxCells)}: resample it to a coarser cell size or cut it into tiles first`,
    );
  }
  return { width, height, bands, sampleFormat: format, bitsPerSample: bits, compression, tiled: counts.has(322), bigTiff: big };
}

export function compressionName(code: number): string {
  return COMPRESSIONS[code] ?? `code ${code}`;
}
