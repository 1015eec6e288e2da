import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { resolveCrs } from "./crs";
import { nodeDeflate } from "./geotiff-deflate-node";
import { readGeoTiff } from "./geotiff-read";
import { type GeoTiffWriteOptions, writeGeoTiff } from "./geotiff-write";
import { type Grid, type GridSpec, type Layer, TerrainInputError } from "./grid";
import { prng } from "./test-utils";

const fixtures = path.resolve(path.dirname(new URL(import.meta.url).pathname), "../../fixtures/terrain");
const fixture = (name: string) => readFileSync(path.join(fixtures, name));
const tmp = mkdtempSync(path.join(tmpdir(), "lowstand-geotiff-"));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

/** Runs a GDAL command-line tool; fails the test with a clear message when gdal-bin is missing. */
function gdal(tool: string, args: string[]): string {
  const r = spawnSync(tool, args, { encoding: "utf8" });
  if (r.error && (r.error as NodeJS.ErrnoException).code === "ENOENT") {
    throw new Error(`${tool} is not installed: this test needs Debian's gdal-bin (apt-get install -y gdal-bin)`);
  }
  if (r.status !== 0) throw new Error(`${tool} ${args.join(" ")} failed: ${r.stderr}`);
  return r.stdout;
}

function specOf(width: number, height: number, dx: number, dy: number): GridSpec {
  return { width, height, originX: 431000.5, originY: 6012000.25, cellSizeX: dx, cellSizeY: dy, crs: resolveCrs(32631) };
}

function randomLayer<T extends Layer>(make: (n: number) => T, n: number, seed: number, scale: number, offset: number): T {
  const r = prng(seed);
  const a = make(n);
  for (let i = 0; i < n; i++) a[i] = Math.round((r() * scale + offset) * 100) / 100;
  return a;
}

/** Values GDAL reads, via an ESRI ASCII dump to stdout. */
function gdalValues(file: string): number[] {
  const out = `${file}.asc`;
  gdal("gdal_translate", ["-q", "-of", "AAIGrid", file, out]);
  const text = readFileSync(out, "utf8");
  const lines = text.trim().split("\n");
  const body = lines.filter((l) => !/^(ncols|nrows|xllcorner|yllcorner|cellsize|dx|dy|nodata_value)\b/i.test(l.trim()));
  return body.join(" ").trim().split(/\s+/).map((t) => (/^-?nan$/i.test(t) ? NaN : Number(t)));
}

const cases: { name: string; make: (n: number) => Layer; opts: GeoTiffWriteOptions; nodataValue: number | null; dx: number; dy: number }[] = [
  { name: "Float32, strips", make: (n) => new Float32Array(n), opts: {}, nodataValue: NaN, dx: 25, dy: 25 },
  { name: "Float32, tiles, Deflate, non-square", make: (n) => new Float32Array(n), opts: { layout: "tiles", tileSize: 16, deflate: nodeDeflate, nodataValue: -9999 }, nodataValue: -9999, dx: 50, dy: 25 },
  { name: "Int32, strips, Deflate", make: (n) => new Int32Array(n), opts: { deflate: nodeDeflate }, nodataValue: -2147483648, dx: 30, dy: 30 },
  { name: "Uint8, tiles", make: (n) => new Uint8Array(n), opts: { layout: "tiles", tileSize: 32 }, nodataValue: 255, dx: 10, dy: 20 },
];

describe("writeGeoTiff — our small writer, checked with GDAL (reference library)", () => {
  for (const [ci, c] of cases.entries()) {
    it(`${c.name}: gdalinfo reads back CRS, transform, nodata and every value; our reader agrees`, async () => {
      const w = 37;
      const h = 23;
      const n = w * h;
      const isFloat = c.make(1) instanceof Float32Array;
      const data = randomLayer(c.make, n, ci + 1, isFloat ? 300 : c.make(1) instanceof Uint8Array ? 200 : 2e6, isFloat ? -150 : c.make(1) instanceof Uint8Array ? 0 : -1e6);
      const nodata = new Uint8Array(n);
      for (let i = 0; i < n; i += 7) nodata[i] = 1;
      const grid: Grid<Layer> = { spec: specOf(w, h, c.dx, c.dy), data, nodata };
      const bytes = writeGeoTiff(grid, { ...c.opts, citation: "Lowstand test layer" });
      const file = path.join(tmp, `case${ci}.tif`);
      writeFileSync(file, bytes);
      const info = JSON.parse(gdal("gdalinfo", ["-json", file]));
      // (reference library) GDAL's view of our file
      expect(info.size).toEqual([w, h]);
      expect(info.geoTransform).toEqual([431000.5, c.dx, 0, 6012000.25, 0, -c.dy]);
      expect(info.coordinateSystem.wkt).toMatch(/ID\["EPSG",32631\]\]\s*$/);
      expect(info.metadata?.[""]?.AREA_OR_POINT ?? "Area").toBe("Area");
      const band = info.bands[0];
      expect(band.type).toBe(isFloat ? "Float32" : c.make(1) instanceof Int32Array ? "Int32" : "Byte");
      if (c.nodataValue === null) expect(band.noDataValue).toBeUndefined();
      else if (Number.isNaN(c.nodataValue)) expect(band.noDataValue).toBe("NaN");
      else expect(band.noDataValue).toBe(c.nodataValue);
      if (c.opts.layout === "tiles") expect(band.block).toEqual([c.opts.tileSize, c.opts.tileSize]);
      const values = gdalValues(file);
      expect(values.length).toBe(n);
      for (let i = 0; i < n; i++) {
        if (nodata[i]) {
          if (Number.isNaN(c.nodataValue!)) expect(Number.isNaN(values[i])).toBe(true);
          else expect(values[i]).toBe(c.nodataValue);
        } else expect(values[i]).toBeCloseTo(data[i], isFloat ? 2 : 9);
      }
      // and our reader (the geotiff package) agrees
      const back = await readGeoTiff(bytes);
      expect(back.grid.spec).toEqual(grid.spec);
      expect(back.nodataCount).toBe(Array.from(nodata).filter((v) => v).length);
      expect(back.nonFiniteCount).toBe(0); // declared nodata (even NaN) is not reported as stray NaN
      for (let i = 0; i < n; i++) {
        if (nodata[i]) expect(back.grid.nodata[i]).toBe(1);
        else expect(back.grid.data[i]).toBe(isFloat ? data[i] : Number(data[i]));
      }
    });
  }
});

describe("readGeoTiff — any one-band GeoTIFF", () => {
  it("reads Int16 with a nodata value and the CRS from GeoKeys (fixture made by gdal_translate)", async () => {
    const r = await readGeoTiff(fixture("small-int16-utm31.tif"));
    expect(r.sampleType).toBe("int16");
    expect(r.crsSource).toBe("geokeys");
    expect(r.grid.spec).toMatchObject({ width: 6, height: 5, originX: 450000, originY: 10000, cellSizeX: 100, cellSizeY: 100 });
    expect(r.grid.spec.crs?.epsg).toBe(32631);
    expect(r.nodataCount).toBe(1);
    expect(r.grid.nodata[1 * 6 + 3]).toBe(1);
    expect(Number.isNaN(r.grid.data[1 * 6 + 3])).toBe(true);
    expect(r.grid.data[0]).toBe(-10);
    expect(r.grid.data[29]).toBe(-34);
  });

  it("shifts PixelIsPoint rasters half a cell, as GDAL does, and reads tiled Deflate Float32", async () => {
    const r = await readGeoTiff(fixture("small-float32-point.tif"));
    const info = JSON.parse(gdal("gdalinfo", ["-json", path.join(fixtures, "small-float32-point.tif")]));
    // (reference library) GDAL's geotransform for the same file
    expect([r.grid.spec.originX, r.grid.spec.cellSizeX, 0, r.grid.spec.originY, 0, -r.grid.spec.cellSizeY]).toEqual(info.geoTransform);
    expect(r.grid.spec.originX).toBe(450000);
    expect(r.nodataCount).toBe(1);
  });

  it("refuses geographic, user-defined (unless declared), CRS-less, rotated and multi-band files with a clear message", async () => {
    await expect(readGeoTiff(fixture("small-geographic.tif"))).rejects.toThrow(/geographic CRS.*project it to a projected CRS in metres/);
    await expect(readGeoTiff(fixture("small-user-defined.tif"))).rejects.toThrow(/user-defined.*declare the EPSG code/);
    const declared = await readGeoTiff(fixture("small-user-defined.tif"), { declaredEpsg: 32631 });
    expect(declared.crsSource).toBe("declared");
    await expect(readGeoTiff(fixture("small-no-crs.tif"))).rejects.toThrow(/names no CRS/);
    expect((await readGeoTiff(fixture("small-no-crs.tif"), { declaredEpsg: 3035 })).grid.spec.crs?.epsg).toBe(3035);
    await expect(readGeoTiff(fixture("small-rotated.tif"))).rejects.toThrow(/rotated or sheared/);
    await expect(readGeoTiff(fixture("small-two-bands.tif"))).rejects.toThrow(/2 bands/);
    await expect(readGeoTiff(fixture("small-int16-utm31.tif"), { declaredEpsg: 32630 })).rejects.toThrow(/declared EPSG:32630 but the GeoTIFF says EPSG:32631/);
    await expect(readGeoTiff(new Uint8Array([1, 2, 3, 4]))).rejects.toThrow(TerrainInputError);
  });

  it("counts NaN and ±Inf cells as nodata, refuses all-nodata and grids under 3×3", async () => {
    const s = specOf(4, 3, 10, 10);
    const data = new Float32Array(12).fill(1);
    data[1] = NaN;
    data[2] = Infinity;
    data[3] = -Infinity;
    const bytes = writeGeoTiff({ spec: s, data, nodata: new Uint8Array(12) }, { nodataValue: -9999 });
    const r = await readGeoTiff(bytes);
    expect(r.nonFiniteCount).toBe(3);
    expect(r.nodataCount).toBe(3);
    const all = writeGeoTiff({ spec: s, data, nodata: new Uint8Array(12).fill(1) }, { nodataValue: -9999 });
    await expect(readGeoTiff(all)).rejects.toThrow(/every one of the 12 cells is nodata/);
    expect(() => writeGeoTiff({ spec: specOf(2, 3, 10, 10), data: new Float32Array(6), nodata: new Uint8Array(6) })).toThrow(/at least 3×3/);
  });
});
