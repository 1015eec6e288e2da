import { describe, expect, it } from "vitest";
import { geotiffHeaderCheck } from "./geotiff-header";
import { EvidenceError } from "./types";
import { bareTiff, gridSpec, terrainFixture, tiff } from "./test-support";

const WIDTH = 256, HEIGHT = 257, BITS = 258, COMPRESSION = 259, PHOTOMETRIC = 262, SPP = 277, FORMAT = 339;

describe("geotiffHeaderCheck — the first IFD only, before any pixel is decoded", () => {
  it("reads size, bands, sample type and compression of files written by GDAL and by our writer", () => {
    // (reference library) small-int16-utm31.tif was written by GDAL's gdal_translate as Int16, 6×5
    const h = geotiffHeaderCheck(terrainFixture("small-int16-utm31.tif"));
    expect(h).toMatchObject({ width: 6, height: 5, bands: 1, sampleFormat: 2, bitsPerSample: 16, bigTiff: false });
    const t = tiff(gridSpec(7, 4), new Float32Array(28));
    expect(geotiffHeaderCheck(t)).toMatchObject({ width: 7, height: 4, bands: 1, sampleFormat: 3, bitsPerSample: 32, compression: 8, tiled: false });
    // GDAL's Float32 fixture is tiled and Deflate-compressed
    expect(geotiffHeaderCheck(terrainFixture("small-float32-point.tif"))).toMatchObject({ tiled: true, compression: 8 });
  });

  it("refuses a header declaring an enormous grid, in a file of a few hundred bytes", () => {
    const huge = bareTiff({ [WIDTH]: 200000, [HEIGHT]: 200000, [BITS]: 32, [FORMAT]: 3, [COMPRESSION]: 8 });
    expect(huge.length).toBeLessThan(300);
    expect(() => geotiffHeaderCheck(huge)).toThrow(/declares 200000 × 200000 cells \(4\.0e10\), over the limit of 6\.7e7: resample/);
    // the same through BigTIFF
    const bigHuge = bareTiff({ [WIDTH]: 300000, [HEIGHT]: 300000, [BITS]: 16, [FORMAT]: 2 }, true);
    expect(() => geotiffHeaderCheck(bigHuge)).toThrow(/300000 × 300000/);
    // a custom limit
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 100, [HEIGHT]: 100, [BITS]: 8 }), { maxCells: 9999 })).toThrow(/over the limit of 1\.0e4/);
  });

  it("refuses many bands (from GDAL's two-band fixture and an RGB header) and palette pictures", () => {
    expect(() => geotiffHeaderCheck(terrainFixture("small-two-bands.tif"))).toThrow(/has 2 bands/);
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 10, [HEIGHT]: 10, [BITS]: 8, [SPP]: 3, [PHOTOMETRIC]: 2 }))).toThrow(/3 bands \(an RGB picture\?\)/);
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 10, [HEIGHT]: 10, [BITS]: 8, [PHOTOMETRIC]: 3 }))).toThrow(/palette-colour picture/);
  });

  it("refuses 1-bit samples, complex numbers, JPEG and unknown compression", () => {
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 10, [HEIGHT]: 10, [BITS]: 1 }))).toThrow(/1-bit unsigned integer samples.*mask or picture/);
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 10, [HEIGHT]: 10, [BITS]: 32, [FORMAT]: 6 }))).toThrow(/complex/);
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 10, [HEIGHT]: 10, [BITS]: 8, [COMPRESSION]: 7 }))).toThrow(/JPEG-compressed, which is lossy/);
    expect(() => geotiffHeaderCheck(bareTiff({ [WIDTH]: 10, [HEIGHT]: 10, [BITS]: 16, [COMPRESSION]: 34712 }))).toThrow(/compression code 34712/);
  });

  it("refuses empty, truncated and non-TIFF bytes with the byte where it failed", () => {
    expect(() => geotiffHeaderCheck(new Uint8Array(0))).toThrow(/0 bytes long: too short/);
    const full = tiff(gridSpec(5, 5), new Float32Array(25));
    // cut inside the IFD
    let err: unknown;
    try {
      geotiffHeaderCheck(full.subarray(0, 40), undefined, 40);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(EvidenceError);
    expect((err as EvidenceError).message).toMatch(/runs past the end of the file at byte 40: the file is truncated/);
    expect((err as EvidenceError).where?.byte).toBe(40);
    // IFD offset beyond the end
    const bad = full.slice(0, 8);
    new DataView(bad.buffer).setUint32(4, 5000, true);
    expect(() => geotiffHeaderCheck(bad, undefined, 8)).toThrow(/byte 5000 but the file ends at byte 8/);
    expect(() => geotiffHeaderCheck(Uint8Array.of(0xff, 0xd8, 0xff, 0xe0, 1, 2, 3, 4, 5))).toThrow(/not a GeoTIFF/);
  });

  it("asks for more bytes (a plain Error, not the user's fault) when only the head was passed and the IFD lies beyond it", () => {
    const t = bareTiff({ [WIDTH]: 10, [HEIGHT]: 10 });
    const plain = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        return e instanceof Error && !(e instanceof EvidenceError) ? (e as Error).message : "an EvidenceError";
      }
      return "nothing thrown";
    };
    expect(plain(() => geotiffHeaderCheck(t.subarray(0, 12), undefined, 10_000))).toMatch(/^geotiffHeaderCheck: the first IFD ends at byte \d+; pass at least that many bytes/);
    // without the file size, an IFD beyond the head is never called a truncation
    expect(plain(() => geotiffHeaderCheck(t.subarray(0, 12)))).toMatch(/pass/);
    // but with it, the same bytes as a whole file are truncated
    expect(() => geotiffHeaderCheck(t.subarray(0, 12), undefined, 12)).toThrow(EvidenceError);
  });
});
