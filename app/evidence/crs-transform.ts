/**
 * Coordinates into the project CRS with proj4js, using the EPSG table of terrain/crs.ts, and the
 * record of the transformation used (design §2: "the transformation used is recorded").
 */
import proj4 from "proj4";
import { type Crs, crsFromWkt, resolveCrs } from "../terrain/crs";
import { TerrainInputError } from "../terrain/grid";
import { EvidenceError } from "./types";

/** A CRS coordinates arrive in: the project's, another projected one, or geographic (lon/lat, degrees). */
export interface SourceCrs {
  label: string;
  proj4: string;
  epsg: number | null;
  geographic: boolean;
}

/** proj4 definition of WGS 84 longitude/latitude (EPSG:4326), the CRS of RFC 7946 GeoJSON. */
export const WGS84: SourceCrs = { label: "EPSG:4326 (WGS 84)", proj4: "+proj=longlat +datum=WGS84 +no_defs", epsg: 4326, geographic: true };

/**
 * Geographic CRSs on GRS 80 whose realisations agree with WGS 84 to about a metre at the scale of a
 * shelf survey (common practice, no source): ETRS89, NAD83, GDA94, GDA2020, NZGD2000. Treated as
 * WGS 84, and the record says so.
 */
const NEAR_WGS84: Record<number, string> = { 4258: "ETRS89", 4269: "NAD83", 4283: "GDA94", 7844: "GDA2020", 4167: "NZGD2000" };

/** Calls a terrain function and turns its TerrainInputError into an EvidenceError. */
export function terrain<T>(f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (e instanceof TerrainInputError) throw new EvidenceError(e.message);
    throw e;
  }
}

/** The project CRS (a projected CRS in metres from the shipped EPSG table). */
export function projectCrs(epsg: number): Crs {
  return terrain(() => resolveCrs(epsg));
}

/** A source CRS from an EPSG code: WGS 84 and its near-equivalents as geographic; else a projected CRS in metres. */
export function sourceFromEpsg(epsg: number): SourceCrs {
  if (epsg === 4326) return WGS84;
  const near = NEAR_WGS84[epsg];
  if (near) return { label: `EPSG:${epsg} (${near}, treated as WGS 84, within about a metre)`, proj4: WGS84.proj4, epsg, geographic: true };
  const c = projectCrs(epsg);
  return { label: `EPSG:${epsg}`, proj4: c.proj4, epsg, geographic: false };
}

/**
 * A source CRS from WKT (a .prj or gpkg_spatial_ref_sys definition): WGS 84 and its near-equivalents
 * by their EPSG code or name, else a projected CRS in metres through terrain/crs.ts crsFromWkt.
 */
export function sourceFromWkt(wkt: string): SourceCrs {
  const text = wkt.trim();
  const re = /(?:AUTHORITY|ID)\s*\[\s*"EPSG"\s*,\s*"?(\d+)"?\s*\]/gi;
  let last: number | null = null;
  for (let m = re.exec(text); m; m = re.exec(text)) last = Number(m[1]);
  if (last !== null && (last === 4326 || NEAR_WGS84[last])) return sourceFromEpsg(last);
  if (/^GEOG(CS|CRS)\s*\[\s*"(WGS 84|WGS_1984|GCS_WGS_1984|WGS84)"/i.test(text)) return WGS84;
  const c = terrain(() => crsFromWkt(text));
  return sourceFromEpsg(c.epsg);
}

export interface Transformer {
  /** transforms in place: xs[i], ys[i] from the source CRS to the project CRS */
  run(xs: Float64Array | number[], ys: Float64Array | number[]): void;
  one(x: number, y: number): [number, number];
  identity: boolean;
  /** e.g. "EPSG:4326 (WGS 84) → EPSG:32631 via proj4js 2.22.0 (+proj=utm +zone=31 +datum=WGS84 …)" */
  description: string;
}

const PROJ4_VERSION = (proj4 as unknown as { version?: string }).version ?? "";

export function makeTransformer(src: SourceCrs, dst: Crs): Transformer {
  const identity = src.epsg === dst.epsg;
  if (identity) {
    return { run: () => {}, one: (x, y) => [x, y], identity, description: `none: already in the project CRS EPSG:${dst.epsg}` };
  }
  const conv = proj4(src.proj4, dst.proj4);
  const p: [number, number] = [0, 0];
  const one = (x: number, y: number): [number, number] => {
    p[0] = x;
    p[1] = y;
    const r = conv.forward(p) as number[];
    return [r[0], r[1]];
  };
  return {
    identity,
    one,
    run(xs, ys) {
      for (let i = 0; i < xs.length; i++) {
        if (!Number.isFinite(xs[i]) || !Number.isFinite(ys[i])) continue; // a bad row, already reported
        const r = one(xs[i], ys[i]);
        xs[i] = r[0];
        ys[i] = r[1];
      }
    },
    description: `${src.label} → EPSG:${dst.epsg} via proj4js ${PROJ4_VERSION} (from ${src.proj4} to ${dst.proj4})`.replace("  ", " "),
  };
}

/**
 * A test of whether a point can be a place in the project CRS: finite, within 10⁸ m, and the inverse
 * projection gives a longitude/latitude that projects back to the same point within 1 m (a point far
 * outside the projection's domain does not). The usual failures: swapped x/y, or lon/lat in x/y columns.
 */
export function plausibleIn(dst: Crs): (x: number, y: number) => boolean {
  const conv = proj4(WGS84.proj4, dst.proj4);
  // Transverse Mercator (UTM and national grids) is only meaningful near its central meridian: far
  // from it the formulas still round-trip but give nonsense (e.g. x and y swapped). Allow 20°.
  const zone = /\+zone=(\d+)/.exec(dst.proj4);
  const lon0m = /\+lon_0=(-?[\d.]+)/.exec(dst.proj4);
  const tm = /\+proj=(utm|tmerc|etmerc)\b/.test(dst.proj4);
  const lon0 = zone ? -183 + 6 * Number(zone[1]) : lon0m ? Number(lon0m[1]) : 0;
  const south = /\+south\b/.test(dst.proj4);
  const utm = /\+proj=utm\b/.test(dst.proj4);
  return (x, y) => {
    if (!Number.isFinite(x) || !Number.isFinite(y) || Math.abs(x) > 1e8 || Math.abs(y) > 1e8) return false;
    let ll: number[];
    try {
      ll = conv.inverse([x, y]) as number[];
    } catch {
      return false;
    }
    if (!Number.isFinite(ll[0]) || !Number.isFinite(ll[1]) || Math.abs(ll[1]) > 90) return false;
    if (tm && Math.abs(((ll[0] - lon0 + 540) % 360) - 180) > 20) return false;
    if (utm && (south ? ll[1] > 1 : ll[1] < -1)) return false;
    let back: number[];
    try {
      back = conv.forward([ll[0], ll[1]]) as number[];
    } catch {
      return false;
    }
    return Math.abs(back[0] - x) < 1 && Math.abs(back[1] - y) < 1;
  };
}

export function extentOf(xs: ArrayLike<number>, ys: ArrayLike<number>): [number, number, number, number] | null {
  let minX = Infinity;
  let minY = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i];
    const y = ys[i];
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    if (x < minX) minX = x;
    if (x > maxX) maxX = x;
    if (y < minY) minY = y;
    if (y > maxY) maxY = y;
  }
  return minX <= maxX ? [minX, minY, maxX, maxY] : null;
}

/**
 * Checks positions already in the project CRS: plausible there (the four corners of their bounding
 * box first, each point only when a corner fails) and inside `within` when given. Calls `bad(i, why)`
 * for each failing point. O(n) plus O(1) projections when all is well.
 */
export function checkPositions(
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  dst: Crs,
  within: [number, number, number, number] | undefined,
  bad: (i: number, why: string) => void,
): void {
  const ok = plausibleIn(dst);
  const e = extentOf(xs, ys);
  if (!e) return;
  const cornersOk = ok(e[0], e[1]) && ok(e[0], e[3]) && ok(e[2], e[1]) && ok(e[2], e[3]);
  const lonLatLike = (x: number, y: number) => Math.abs(x) <= 180 && Math.abs(y) <= 90;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i];
    const y = ys[i];
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    if (lonLatLike(x, y)) {
      // coordinates within 180 m of a projected CRS's false origin: far more likely degrees
      bad(i, `(${x}, ${y}) looks like longitude/latitude, not metres in EPSG:${dst.epsg}: name the columns lon and lat`);
      continue;
    }
    if (!cornersOk && !ok(x, y)) {
      bad(i, `(${x}, ${y}) is not a plausible position in the project CRS EPSG:${dst.epsg} (are x and y swapped, or in another CRS?)`);
      continue;
    }
    if (within && (x < within[0] || x > within[2] || y < within[1] || y > within[3])) {
      bad(i, `(${x}, ${y}) lies outside the grid's extent (x ${within[0]}–${within[2]}, y ${within[1]}–${within[3]})`);
    }
  }
}
