import proj4 from "proj4";
import { describe, expect, it } from "vitest";
import { crsFromWkt, knownProjectedCrsCount, resolveCrs } from "./crs";

describe("resolveCrs — EPSG table generated with PROJ's projinfo", () => {
  it("knows projected metre CRSs beyond what proj4js ships, and UTM agrees with proj4js's own definition", () => {
    expect(knownProjectedCrsCount).toBeGreaterThan(3000);
    expect(resolveCrs(3035).proj4).toMatch(/\+proj=laea/);
    expect(resolveCrs(27700).proj4).toMatch(/\+proj=tmerc/);
    // (reference library) proj4js's built-in UTM zone 31N and the table's EPSG:32631 give the same coordinates
    const ours = proj4("WGS84", resolveCrs(32631).proj4, [3.5, 1.25]);
    const theirs = proj4("WGS84", "+proj=utm +zone=31 +datum=WGS84 +units=m +no_defs", [3.5, 1.25]);
    expect(ours[0]).toBeCloseTo(theirs[0], 6);
    expect(ours[1]).toBeCloseTo(theirs[1], 6);
  });

  it("refuses geographic, non-metre, user-defined and unknown codes saying what to do", () => {
    expect(() => resolveCrs(4326)).toThrow(/geographic CRS.*project the grid to a projected CRS in metres/);
    expect(() => resolveCrs(2222)).toThrow(/not metres/);
    expect(() => resolveCrs(32767)).toThrow(/user-defined.*declare the EPSG code/);
    expect(() => resolveCrs(999999)).toThrow(/not a projected CRS in metres that Lowstand knows.*reproject/);
    expect(() => resolveCrs(1.5)).toThrow(/not an EPSG code/);
  });

  it("reads the EPSG code of the top-level CRS from WKT", () => {
    const wkt1 =
      'PROJCS["WGS 84 / UTM zone 31N",GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],AUTHORITY["EPSG","4326"]],PROJECTION["Transverse_Mercator"],UNIT["metre",1,AUTHORITY["EPSG","9001"]],AUTHORITY["EPSG","32631"]]';
    expect(crsFromWkt(wkt1).epsg).toBe(32631);
    expect(() => crsFromWkt('GEOGCS["WGS 84",AUTHORITY["EPSG","4326"]]')).toThrow(/geographic/);
    expect(() => crsFromWkt('PROJCS["custom",PROJECTION["Transverse_Mercator"]]')).toThrow(/names no EPSG code/);
  });
});
