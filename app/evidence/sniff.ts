/**
 * Which format an upload is, from its first bytes; the file name only breaks ties between text
 * formats. A file whose bytes say it is something else (a JPEG renamed .tif) is not guessed from its
 * name: sniffFormat returns null and describeUnknown says what it looks like.
 */
import type { EvidenceFormat } from "./types";

const te = new TextDecoder("latin1");

function startsWith(head: Uint8Array, sig: number[], at = 0): boolean {
  if (head.length < at + sig.length) return false;
  for (let i = 0; i < sig.length; i++) if (head[at + i] !== sig[i]) return false;
  return true;
}

/** Known non-evidence signatures, for the message when a file is refused. */
const OTHER_SIGNATURES: [number[], string][] = [
  [[0xff, 0xd8, 0xff], "a JPEG image"],
  [[0x89, 0x50, 0x4e, 0x47], "a PNG image"],
  [[0x25, 0x50, 0x44, 0x46], "a PDF document"],
  [[0x1f, 0x8b], "a gzip-compressed file (unpack it first)"],
  [[0x47, 0x49, 0x46, 0x38], "a GIF image"],
  [[0x42, 0x4d], "a BMP image"],
  [[0x52, 0x61, 0x72, 0x21], "a RAR archive (use a .zip)"],
  [[0x37, 0x7a, 0xbc, 0xaf], "a 7-Zip archive (use a .zip)"],
  [[0x89, 0x48, 0x44, 0x46], "an HDF5/NetCDF-4 file (export the grid as GeoTIFF)"],
  [[0x43, 0x44, 0x46], "a NetCDF file (export the grid as GeoTIFF)"],
  [[0xd0, 0xcf, 0x11, 0xe0], "an old Microsoft Office document (save the sheet as CSV)"],
];

export function isTiff(head: Uint8Array): boolean {
  return (
    startsWith(head, [0x49, 0x49, 0x2a, 0x00]) ||
    startsWith(head, [0x4d, 0x4d, 0x00, 0x2a]) ||
    startsWith(head, [0x49, 0x49, 0x2b, 0x00]) ||
    startsWith(head, [0x4d, 0x4d, 0x00, 0x2b])
  );
}

/** The first non-blank line of a text head, BOM dropped. */
function firstLine(head: Uint8Array): string {
  let s = te.decode(head.subarray(0, Math.min(head.length, 4096)));
  if (s.startsWith("\u00ef\u00bb\u00bf")) s = s.slice(3);
  const lines = s.split(/\r\n|\n|\r/);
  for (const l of lines) if (l.trim() !== "") return l.trim();
  return "";
}

const NUM = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/**
 * Format from the first bytes (give at least the first 4 KiB). TIFF/BigTIFF magic → geotiff; the
 * SQLite header → gpkg; a zip → shapefile-zip; text starting `{`/`[` → geojson; an ESRI ASCII
 * header key → esri-ascii; an AGS4 `"GROUP"` line → ags4; a first line of three or more numbers →
 * xyz; other text → csv (or xyz when the name ends .xyz). Anything else (images, PDFs, binary noise,
 * empty files) → null. O(head).
 */
export function sniffFormat(head: Uint8Array, fileName: string): EvidenceFormat | null {
  if (head.length === 0) return null;
  if (isTiff(head)) return "geotiff";
  if (startsWith(head, [...new TextEncoder().encode("SQLite format 3"), 0])) return "gpkg";
  if (startsWith(head, [0x50, 0x4b, 0x03, 0x04]) || startsWith(head, [0x50, 0x4b, 0x05, 0x06])) return "shapefile-zip";
  for (const [sig] of OTHER_SIGNATURES) if (startsWith(head, sig)) return null;
  // text: no NUL bytes in the head
  const n = Math.min(head.length, 4096);
  for (let i = 0; i < n; i++) if (head[i] === 0) return null;
  const line = firstLine(head);
  if (line === "") return null;
  const lower = fileName.toLowerCase();
  if (line.startsWith("{") || line.startsWith("[")) return "geojson";
  if (/^(ncols|nrows|xllcorner|xllcenter|yllcorner|yllcenter|cellsize)\b/i.test(line)) return "esri-ascii";
  if (/^"GROUP"\s*,\s*"[A-Z0-9]{4}"/.test(line) || /^"\*\*PROJ"/.test(line)) return "ags4"; // AGS4 quotes every field
  const tokens = line.split(/[\s,;]+/).filter((t) => t !== "");
  if (tokens.length >= 3 && tokens.every((t) => NUM.test(t))) return "xyz";
  if (lower.endsWith(".xyz")) return "xyz";
  if (lower.endsWith(".asc")) return "esri-ascii";
  if (lower.endsWith(".ags")) return "ags4";
  if (lower.endsWith(".geojson") || lower.endsWith(".json")) return "geojson";
  return "csv";
}

/** What an unrecognised file looks like, for the refusal message. */
export function describeUnknown(head: Uint8Array): string {
  if (head.length === 0) return "the file is empty (0 bytes)";
  for (const [sig, what] of OTHER_SIGNATURES) if (startsWith(head, sig)) return `the file is ${what}`;
  return "the file's first bytes match no format Lowstand reads (GeoTIFF, ESRI ASCII grid, XYZ, CSV, GeoJSON, GeoPackage, zipped Shapefile, AGS4): it may be damaged or of another type";
}
