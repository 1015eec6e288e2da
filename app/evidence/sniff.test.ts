import { describe, expect, it } from "vitest";
import { describeUnknown, sniffFormat } from "./sniff";
import { bareTiff, evidenceFixture, prng, terrainFixture, utf8 } from "./test-support";

describe("sniffFormat — from the first bytes, the name only to break ties", () => {
  it("recognises TIFF (both byte orders) and BigTIFF by their magic numbers (TIFF 6.0 §2; BigTIFF)", () => {
    expect(sniffFormat(terrainFixture("small-int16-utm31.tif"), "x.bin")).toBe("geotiff");
    expect(sniffFormat(Uint8Array.of(0x4d, 0x4d, 0x00, 0x2a, 0, 0, 0, 8), "a")).toBe("geotiff");
    expect(sniffFormat(bareTiff({ 256: 10, 257: 10 }, true), "a")).toBe("geotiff");
  });
  it("recognises a GeoPackage by the SQLite header and a zip by PK\\3\\4, whatever the name", () => {
    expect(sniffFormat(evidenceFixture("blocks.gpkg"), "blocks.tif")).toBe("gpkg");
    expect(sniffFormat(evidenceFixture("blocks-shp.zip"), "blocks.geojson")).toBe("shapefile-zip");
  });
  it("tells the text formats apart by content", () => {
    expect(sniffFormat(utf8('\uFEFF{"type":"FeatureCollection"}'), "a.txt")).toBe("geojson");
    expect(sniffFormat(utf8("ncols 4\nnrows 3\n"), "a.txt")).toBe("esri-ascii");
    expect(sniffFormat(utf8("NCOLS 4\r\n"), "a.txt")).toBe("esri-ascii");
    expect(sniffFormat(utf8('"GROUP","PROJ"\n'), "a.txt")).toBe("ags4");
    expect(sniffFormat(utf8("GROUP,NAME\n1,a\n"), "a.csv")).toBe("csv");
    expect(sniffFormat(utf8("495000.5 6680000 -42.1\n"), "points.txt")).toBe("xyz");
    expect(sniffFormat(utf8("495000.5,6680000,-42.1\n"), "points.csv")).toBe("xyz");
    expect(sniffFormat(utf8("x;y;site_id\n1;2;a\n"), "sites.csv")).toBe("csv");
  });
  it("uses the name only for ties: a headed XYZ file named .xyz is XYZ, named .csv is CSV", () => {
    expect(sniffFormat(utf8("x y z\n1 2 3\n"), "pts.xyz")).toBe("xyz");
    expect(sniffFormat(utf8("x y z\n1 2 3\n"), "pts.csv")).toBe("csv");
  });
  it("refuses a JPEG renamed .tif, a PNG, empty files and random bytes (null), and says what they look like", () => {
    const jpeg = Uint8Array.of(0xff, 0xd8, 0xff, 0xe0, 0, 0x10, 0x4a, 0x46, 0x49, 0x46, 0);
    expect(sniffFormat(jpeg, "bathy.tif")).toBeNull();
    expect(describeUnknown(jpeg)).toMatch(/JPEG image/);
    expect(sniffFormat(Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 13, 10), "bathy.tif")).toBeNull();
    expect(sniffFormat(new Uint8Array(0), "bathy.tif")).toBeNull();
    expect(describeUnknown(new Uint8Array(0))).toMatch(/empty/);
    const r = prng(7);
    const noise = Uint8Array.from({ length: 4096 }, () => Math.floor(r() * 256));
    noise[0] = 0x13; // not a signature byte
    noise[5] = 0; // binary noise holds zero bytes
    expect(sniffFormat(noise, "bathy.tif")).toBeNull();
  });
});
