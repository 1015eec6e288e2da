import proj4 from "proj4";
import { describe, expect, it } from "vitest";
import { resolveCrs } from "../terrain/crs";
import { checkPositions, makeTransformer, plausibleIn, sourceFromEpsg, sourceFromWkt, WGS84 } from "./crs-transform";
import { EvidenceError } from "./types";

const utm31s = resolveCrs(32731);

describe("sources from EPSG codes and WKT", () => {
  it("treats ETRS89 and the like as WGS 84 and says so; refuses other geographic CRSs", () => {
    expect(sourceFromEpsg(4258)).toMatchObject({ geographic: true, proj4: WGS84.proj4 });
    expect(sourceFromEpsg(4258).label).toMatch(/ETRS89, treated as WGS 84/);
    expect(() => sourceFromEpsg(4230)).toThrow(EvidenceError);
    expect(() => sourceFromEpsg(4230)).toThrow(/geographic CRS/);
  });
  it("reads ESRI and OGC WKT: WGS 84 by name, EPSG codes by AUTHORITY", () => {
    expect(sourceFromWkt('GEOGCS["GCS_WGS_1984",DATUM["D_WGS_1984",SPHEROID["WGS_1984",6378137.0,298.257223563]]]')).toBe(WGS84);
    expect(sourceFromWkt('GEOGCS["ETRS89",DATUM["European_Terrestrial_Reference_System_1989"],AUTHORITY["EPSG","4258"]]').epsg).toBe(4258);
    const p = sourceFromWkt('PROJCS["WGS 84 / UTM zone 31S",GEOGCS["WGS 84",AUTHORITY["EPSG","4326"]],PROJECTION["Transverse_Mercator"],AUTHORITY["EPSG","32731"]]');
    expect(p).toMatchObject({ epsg: 32731, geographic: false });
  });
});

describe("transformations and plausibility", () => {
  it("matches proj4js called directly, and records the route (reference library)", () => {
    const t = makeTransformer(WGS84, utm31s);
    const [x, y] = t.one(3.2, -29.9);
    const [u, v] = proj4("WGS84", utm31s.proj4, [3.2, -29.9]);
    expect(x).toBe(u);
    expect(y).toBe(v);
    expect(t.description).toMatch(/^EPSG:4326 \(WGS 84\) → EPSG:32731 via proj4js \d+\.\d+\.\d+ \(from \+proj=longlat/);
    expect(makeTransformer(sourceFromEpsg(32731), utm31s).identity).toBe(true);
  });
  it("calls a UTM position plausible near its zone and not 20° away, nor across the equator in a southern zone", () => {
    const ok = plausibleIn(utm31s);
    expect(ok(500000, 6680000)).toBe(true);
    const [farX, farY] = proj4("WGS84", utm31s.proj4, [30, -30]); // 27° from the central meridian at 3° E
    expect(ok(farX, farY)).toBe(false);
    const [nx, ny] = proj4("WGS84", utm31s.proj4, [3, 10]); // 10° N in a southern zone
    expect(ok(nx, ny)).toBe(false);
    expect(ok(Number.NaN, 1)).toBe(false);
  });
  it("names each bad point, once the extent's corners fail", () => {
    const bad: string[] = [];
    checkPositions([500000, 6675000, 12.5], [6680000, 500000, 45.1], utm31s, undefined, (i, why) => bad.push(`${i}: ${why}`));
    expect(bad).toHaveLength(2);
    expect(bad[0]).toMatch(/^1: \(6675000, 500000\) is not a plausible position/);
    expect(bad[1]).toMatch(/^2: \(12\.5, 45\.1\) looks like longitude\/latitude/);
  });
});
