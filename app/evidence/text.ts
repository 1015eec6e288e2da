/**
 * Bytes → text for the text formats (CSV, XYZ, ESRI ASCII, GeoJSON, AGS4): byte-order marks, UTF-8
 * with a Windows-1252 fallback, and a refusal of binary files.
 */
import { EvidenceError } from "./types";

/** Text files above this are refused: a JavaScript string holds at most about 2²⁹ characters. */
export const MAX_TEXT_BYTES = 512 * 2 ** 20;

/** True when the first bytes hold a NUL (text files never do, outside UTF-16). O(min(n, 8192)). */
export function looksBinary(bytes: Uint8Array): boolean {
  const n = Math.min(bytes.length, 8192);
  for (let i = 0; i < n; i++) if (bytes[i] === 0) return true;
  return false;
}

/**
 * Decodes text: UTF-8 (a BOM is dropped), UTF-16 with a BOM, else Windows-1252 (spreadsheets on
 * Windows still write it) with a warning pushed to `warnings`. Throws EvidenceError for empty or
 * binary files. O(n).
 */
export function decodeText(bytes: Uint8Array, what: string, warnings?: string[]): string {
  if (bytes.length === 0) throw new EvidenceError(`the ${what} file is empty (0 bytes)`, { byte: 0 });
  if (bytes.length > MAX_TEXT_BYTES) {
    throw new EvidenceError(
      `the ${what} file is ${(bytes.length / 2 ** 20).toFixed(0)} MiB, more than the ${MAX_TEXT_BYTES / 2 ** 20} MiB Lowstand reads as text: split it, or send grids as GeoTIFF and points as XYZ`,
    );
  }
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return new TextDecoder("utf-16le").decode(bytes.subarray(2));
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return new TextDecoder("utf-16be").decode(bytes.subarray(2));
  if (looksBinary(bytes)) {
    const at = bytes.indexOf(0);
    throw new EvidenceError(`the ${what} file is binary (a zero byte at byte ${at}), not text`, { byte: at });
  }
  try {
    return new TextDecoder("utf-8", { fatal: true, ignoreBOM: false }).decode(bytes);
  } catch {
    warnings?.push("the file is not UTF-8; it was read as Windows-1252 (Western European): check accented names");
    return new TextDecoder("windows-1252").decode(bytes);
  }
}
