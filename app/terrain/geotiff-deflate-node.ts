/**
 * Deflate for the GeoTIFF writer on the server (jobs, CLI, tests): a zlib stream through node:zlib,
 * which is what TIFF compression 8 (Adobe Deflate) expects. Kept apart from geotiff-write.ts so that
 * module imports no Node built-in and can run in a browser worker.
 */
import { deflateSync } from "node:zlib";

/** zlib-format Deflate of one block (level 6). O(block size). */
export function nodeDeflate(bytes: Uint8Array): Uint8Array {
  return deflateSync(bytes, { level: 6 });
}
