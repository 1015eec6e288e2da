/**
 * Helpers for the evidence tests only: fixture paths, hand-made TIFF headers, GeoTIFFs written by the
 * terrain engine's writer, and a seeded PRNG. Not used by the readers.
 */
import { EvidenceError } from "./types";
import { readFileSync } from "node:fs";
import path from "node:path";
import { resolveCrs } from "../terrain/crs";
import { nodeDeflate } from "../terrain/geotiff-deflate-node";
import { writeGeoTiff } from "../terrain/geotiff-write";
import type { GridSpec, Layer } from "../terrain/grid";
export { prng } from "../terrain/test-utils";

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), "../..");
export const evidenceFixture = (name: string) => new Uint8Array(readFileSync(path.join(root, "fixtures/evidence", name)));
export const terrainFixture = (name: string) => new Uint8Array(readFileSync(path.join(root, "fixtures/terrain", name)));
export const utf8 = (s: string) => new TextEncoder().encode(s);

/** The invented project: UTM zone 31S (EPSG:32731), around 3° E, 30° S, in the open South Atlantic. */
export const PROJECT_EPSG = 32731;
export const ORIGIN_X = 495000;
export const ORIGIN_Y = 6680000;

export function gridSpec(width: number, height: number, dx = 10, dy = dx, epsg = PROJECT_EPSG): GridSpec {
  return { width, height, originX: ORIGIN_X, originY: ORIGIN_Y, cellSizeX: dx, cellSizeY: dy, crs: resolveCrs(epsg) };
}

/** A GeoTIFF made by the terrain engine's writer (Deflate, strips). */
export function tiff(spec: GridSpec, data: Layer, nodata?: Uint8Array, nodataValue?: number | null): Uint8Array {
  return writeGeoTiff({ spec, data, nodata: nodata ?? new Uint8Array(data.length) }, { deflate: nodeDeflate, nodataValue });
}

/**
 * A TIFF holding only a header and one IFD (no pixels): classic little-endian, or BigTIFF. Tags are
 * written as SHORT or LONG (LONG8 in BigTIFF) values held in the entry.
 */
export function bareTiff(tags: Record<number, number>, big = false): Uint8Array {
  const entries = Object.entries(tags)
    .map(([k, v]) => [Number(k), v] as const)
    .sort((a, b) => a[0] - b[0]);
  const headerLen = big ? 16 : 8;
  const entryLen = big ? 20 : 12;
  const ifdLen = (big ? 8 : 2) + entries.length * entryLen + (big ? 8 : 4);
  const buf = new Uint8Array(headerLen + ifdLen + 64);
  const v = new DataView(buf.buffer);
  buf[0] = buf[1] = 0x49;
  v.setUint16(2, big ? 43 : 42, true);
  if (big) {
    v.setUint16(4, 8, true);
    v.setUint32(8, 16, true);
    v.setBigUint64(16, BigInt(entries.length), true);
  } else {
    v.setUint32(4, 8, true);
    v.setUint16(8, entries.length, true);
  }
  let o = headerLen + (big ? 8 : 2);
  for (const [tag, value] of entries) {
    v.setUint16(o, tag, true);
    if (big) {
      v.setUint16(o + 2, 16, true);
      v.setBigUint64(o + 4, 1n, true);
      v.setBigUint64(o + 12, BigInt(value), true);
    } else {
      const long = value > 0xffff;
      v.setUint16(o + 2, long ? 4 : 3, true);
      v.setUint32(o + 4, 1, true);
      if (long) v.setUint32(o + 8, value, true);
      else v.setUint16(o + 8, value, true);
    }
    o += entryLen;
  }
  return buf;
}

/** Awaits an upload that must be refused, and returns its EvidenceError (anything else fails the test). */
export async function refusal(p: Promise<unknown>): Promise<EvidenceError> {
  try {
    await p;
  } catch (e) {
    if (e instanceof EvidenceError) return e;
    throw e;
  }
  throw new Error("expected an EvidenceError, but the upload was accepted");
}
