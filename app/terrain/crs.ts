/**
 * Coordinate reference systems: which EPSG codes the engine accepts and their proj4 definitions.
 *
 * The engine works in a projected CRS in metres. proj4js knows only WGS84, Web Mercator and UTM by
 * itself, so the project ships `data/epsg-projected-metre.json`, generated from the EPSG dataset with
 * PROJ's `projinfo` by scripts/make-epsg-table.mjs (see docs/decisions/102-epsg-table.md).
 */
import table from "./data/epsg-projected-metre.json";
import { TerrainInputError } from "./grid";

export interface Crs {
  epsg: number;
  proj4: string;
}

const projectedMetre = table.projectedMetre as Record<string, string>;
const otherUnits = new Set<number>(table.projectedOtherUnits as number[]);
const geographic = new Set<number>(table.geographic2d as number[]);
const needGrids = new Set<number>(table.skippedNeedGridsOrUnparsable as number[]);

/** EPSG code GeoTIFF uses for "user-defined". */
export const USER_DEFINED_CODE = 32767;

/** Number of projected metre CRSs in the shipped table. */
export const knownProjectedCrsCount = Object.keys(projectedMetre).length;

/** Where the shipped table came from (for provenance in manifests). */
export const epsgTableSource: string = table.source;

/**
 * Returns the CRS for an EPSG code if it is a projected CRS in metres in the shipped table.
 * Throws TerrainInputError saying what to do for geographic, non-metre, user-defined or unknown codes.
 * O(1).
 */
export function resolveCrs(epsg: number): Crs {
  if (!Number.isInteger(epsg) || epsg <= 0) {
    throw new TerrainInputError(`"${epsg}" is not an EPSG code: give the whole number of a projected CRS in metres`);
  }
  if (epsg === USER_DEFINED_CODE) {
    throw new TerrainInputError(
      "the grid's CRS is user-defined (code 32767), which Lowstand cannot identify: declare the EPSG code of its projected CRS in metres when uploading",
    );
  }
  const p = projectedMetre[String(epsg)];
  if (p) return { epsg, proj4: p };
  if (geographic.has(epsg)) {
    throw new TerrainInputError(
      `EPSG:${epsg} is a geographic CRS (longitude/latitude in degrees): project the grid to a projected CRS in metres (for example its UTM zone) first, then upload it again`,
    );
  }
  if (otherUnits.has(epsg)) {
    throw new TerrainInputError(
      `EPSG:${epsg} is a projected CRS whose units are not metres (e.g. feet): reproject the grid to a projected CRS in metres first`,
    );
  }
  if (needGrids.has(epsg)) {
    throw new TerrainInputError(
      `EPSG:${epsg} needs a datum-shift grid file that Lowstand does not ship: reproject the grid to another projected CRS in metres (for example its UTM zone on WGS 84) first`,
    );
  }
  throw new TerrainInputError(
    `EPSG:${epsg} is not a projected CRS in metres that Lowstand knows (the table holds ${knownProjectedCrsCount} from the EPSG dataset): check the code, or reproject the grid to a projected CRS in metres such as a UTM zone`,
  );
}

/**
 * Finds the EPSG code of the top-level CRS in a WKT1 or WKT2 string (its last AUTHORITY["EPSG",n] or
 * ID["EPSG",n]) and resolves it. Geographic WKT is refused with the same message as resolveCrs.
 * Throws TerrainInputError when the WKT carries no EPSG code. O(length).
 */
export function crsFromWkt(wkt: string): Crs {
  const text = wkt.trim();
  const head = /^([A-Z0-9]+)\s*\[/.exec(text)?.[1] ?? "";
  const re = /(?:AUTHORITY|ID)\s*\[\s*"EPSG"\s*,\s*"?(\d+)"?\s*\]/gi;
  let last: number | null = null;
  for (let m = re.exec(text); m; m = re.exec(text)) last = Number(m[1]);
  if (/^(GEOGCS|GEOGCRS|GEODCRS|GEOGRAPHICCRS)$/.test(head)) {
    throw new TerrainInputError(
      `the CRS is geographic (${head}, longitude/latitude in degrees): project the grid to a projected CRS in metres (for example its UTM zone) first, then upload it again`,
    );
  }
  if (last === null) {
    throw new TerrainInputError(
      "the CRS description (WKT) names no EPSG code: declare the EPSG code of the grid's projected CRS in metres when uploading",
    );
  }
  return resolveCrs(last);
}
