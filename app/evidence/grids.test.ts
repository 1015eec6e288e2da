import { describe, expect, it } from "vitest";
import { parseEvidence } from "./index";
import { EvidenceError, type ParseOptions, type VerticalDeclaration } from "./types";
import { ORIGIN_X, ORIGIN_Y, PROJECT_EPSG, bareTiff, evidenceFixture, gridSpec, prng, terrainFixture, tiff, utf8, refusal } from "./test-support";

const LAT: VerticalDeclaration = { sign: "depth_positive_down", datum: "LAT", offsetToMslM: -2.5 };
const opts = (o: Partial<ParseOptions> = {}): ParseOptions => ({ fileName: "bathy.tif", projectEpsg: PROJECT_EPSG, vertical: LAT, ...o });

describe("bathymetry from GeoTIFF", () => {
  it("turns depths below LAT into elevations relative to MSL: elevation = −depth + offset (formula)", async () => {
    const s = gridSpec(6, 4, 25);
    const r = prng(3);
    const depths = Float32Array.from({ length: 24 }, () => Math.round(r() * 4000) / 100 + 10);
    const res = await parseEvidence("bathymetry", tiff(s, depths), opts());
    expect(res.format).toBe("geotiff");
    expect(res.crsEpsg).toBe(PROJECT_EPSG);
    for (let i = 0; i < 24; i++) expect(res.grid!.data[i]).toBeCloseTo(-depths[i] - 2.5, 4);
    expect(res.extent).toEqual([ORIGIN_X, ORIGIN_Y - 100, ORIGIN_X + 150, ORIGIN_Y]);
    expect(res.count).toBe(24);
    const sum = res.summary as { min: number; max: number; histogram: { counts: number[]; edges: number[] }; width: number; cellSizeX: number };
    expect(sum.min).toBeCloseTo(Math.min(...depths.map((d) => -d - 2.5)), 4);
    expect(sum.max).toBeCloseTo(Math.max(...depths.map((d) => -d - 2.5)), 4);
    expect(sum.histogram.counts.reduce((a, b) => a + b, 0)).toBe(24);
    expect(sum.histogram.edges).toHaveLength(21);
    expect(sum).toMatchObject({ width: 6, height: 4, cellSizeX: 25, nodataCount: 0, verticalReference: "present_msl", sampleType: "float32" });
  });

  it("accepts GDAL's Int16 grid with non-square cells and honours its nodata (reference library)", async () => {
    const res = await parseEvidence("bathymetry", evidenceFixture("bathy-int16-nonsquare.tif"), opts({ vertical: { sign: "depth_positive_down", datum: "MSL", offsetToMslM: 0 } }));
    const g = res.grid!;
    expect(g.spec).toMatchObject({ width: 5, height: 4, cellSizeX: 20, cellSizeY: 30, originX: 495000, originY: 6680000 });
    // bathy-depths.asc row 0 is 12 13 14 15 16; row 2 column 2 is nodata
    expect(Array.from(g.data.subarray(0, 5))).toEqual([-12, -13, -14, -15, -16]);
    expect(g.nodata[2 * 5 + 2]).toBe(1);
    expect(res.summary).toMatchObject({ sampleType: "int16", nodataCount: 1, squareCells: false });
    expect(res.warnings.join(" ")).toMatch(/not square \(20 × 30 m\)/);
  });

  for (const [file, sampleType, compression, extra] of [
    ["bathy-bigtiff.tif", "float32", "none", { bigTiff: true }],
    ["bathy-float64-lzw-pred3.tif", "float64", "LZW", {}],
    ["bathy-uint8-tiled.tif", "uint8", "none", { tiled: true }],
  ] as const) {
    it(`reads GDAL's ${file} (${sampleType}, ${compression}) to the same grid (reference library)`, async () => {
      const res = await parseEvidence("bathymetry", evidenceFixture(file), opts({ vertical: { sign: "depth_positive_down", datum: "MSL", offsetToMslM: 0 } }));
      const g = res.grid!;
      expect(g.spec).toMatchObject({ width: 5, height: 4, cellSizeX: 20, cellSizeY: 30 });
      // bathy-depths.asc: rows 12..16, 13..17, 14 15 nodata 17 18, 15..19
      expect(Array.from(g.data.subarray(15, 20))).toEqual([-15, -16, -17, -18, -19]);
      expect(g.nodata[12]).toBe(1);
      expect(res.summary).toMatchObject({ sampleType, compression, nodataCount: 1, ...extra });
    });
  }

  it("takes NaN cells as nodata, says how many, and reads elevations positive up unchanged apart from the offset", async () => {
    const s = gridSpec(4, 4);
    const v = Float32Array.from({ length: 16 }, (_, i) => -30 - i);
    v[5] = NaN;
    v[6] = NaN;
    v[7] = NaN;
    const res = await parseEvidence("bathymetry", tiff(s, v, undefined, -9999), opts({ vertical: { sign: "elevation_positive_up", datum: "MSL", offsetToMslM: 0 } }));
    expect(res.summary.nodataCount).toBe(3);
    expect(res.warnings.join(" ")).toMatch(/3 NaN or infinite cells treated as nodata/);
    expect(res.grid!.data[0]).toBe(-30);
    expect(Number.isNaN(res.grid!.data[5])).toBe(true);
  });

  it("refuses an upload without a vertical declaration", async () => {
    const e = await refusal(parseEvidence("bathymetry", tiff(gridSpec(3, 3), new Float32Array(9).fill(20)), opts({ vertical: undefined })));
    expect(e.message).toMatch(/must declare its vertical datum and sign/);
    const s = await refusal(parseEvidence("bathymetry", tiff(gridSpec(3, 3), new Float32Array(9).fill(20)), opts({ vertical: { sign: "depth_positive_down", datum: "seabed", offsetToMslM: 0 } })));
    expect(s.message).toMatch(/"seabed" is a vertical reference only for a horizon grid/);
    const n = await refusal(parseEvidence("bathymetry", tiff(gridSpec(3, 3), new Float32Array(9).fill(20)), opts({ vertical: { sign: "depth_positive_down", datum: "LAT", offsetToMslM: Number.NaN } })));
    expect(n.message).toMatch(/offset to present mean sea level must be a number of metres/);
  });

  it("warns when the declared sign or datum offset look the wrong way round", async () => {
    const res = await parseEvidence("bathymetry", tiff(gridSpec(3, 3), new Float32Array(9).fill(-20)), opts({ vertical: { sign: "depth_positive_down", datum: "LAT", offsetToMslM: 2.1 } }));
    expect(res.warnings.join(" ")).toMatch(/9 of 9 values are negative although the grid was declared as depths/);
    expect(res.warnings.join(" ")).toMatch(/LAT normally lies BELOW mean sea level/);
  });

  it("refuses multi-band, geographic, rotated and CRS-less grids (GDAL-made fixtures, EPSG:32631)", async () => {
    const o = opts({ projectEpsg: 32631 });
    expect((await refusal(parseEvidence("bathymetry", terrainFixture("small-two-bands.tif"), o))).message).toMatch(/2 bands/);
    expect((await refusal(parseEvidence("bathymetry", terrainFixture("small-geographic.tif"), o))).message).toMatch(/geographic CRS.*project it to a projected CRS/);
    expect((await refusal(parseEvidence("bathymetry", terrainFixture("small-rotated.tif"), o))).message).toMatch(/rotated or sheared/);
    expect((await refusal(parseEvidence("bathymetry", terrainFixture("small-no-crs.tif"), o))).message).toMatch(/names no CRS.*declare the EPSG code/);
  });

  it("accepts a CRS-less grid when the EPSG code is declared", async () => {
    const res = await parseEvidence("bathymetry", terrainFixture("small-no-crs.tif"), opts({ projectEpsg: 32631, declaredEpsg: 32631 }));
    expect(res.summary.crsSource).toBe("declared");
    expect(res.grid!.spec.crs!.epsg).toBe(32631);
  });

  it("refuses a grid in another projected CRS than the project's", async () => {
    const e = await refusal(parseEvidence("bathymetry", terrainFixture("small-int16-utm31.tif"), opts()));
    expect(e.message).toMatch(/the grid is in EPSG:32631 but the project uses EPSG:32731: reproject it first/);
  });

  it("refuses an all-nodata grid and a 2×2 grid", async () => {
    const s = gridSpec(3, 3);
    const e1 = await refusal(parseEvidence("bathymetry", tiff(s, new Float32Array(9), new Uint8Array(9).fill(1)), opts()));
    expect(e1.message).toMatch(/every one of the 9 cells is nodata/);
    const e2 = await refusal(parseEvidence("bathymetry", evidenceFixture("tiny-2x2.tif"), opts()));
    expect(e2.message).toMatch(/2×2 cells; it must be at least 3×3/);
  });

  it("refuses an enormous declared grid before decoding a pixel, and a custom cell cap", async () => {
    const huge = bareTiff({ 256: 200000, 257: 200000, 258: 32, 339: 3 });
    expect((await refusal(parseEvidence("bathymetry", huge, opts()))).message).toMatch(/200000 × 200000 cells \(4\.0e10\), over the limit/);
    const small = tiff(gridSpec(10, 10), new Float32Array(100).fill(5));
    expect((await refusal(parseEvidence("bathymetry", small, opts({ limits: { maxCells: 50 } })))).message).toMatch(/10 × 10 cells \(1\.0e2\), over the limit of 5\.0e1/);
  });

  it("refuses empty, truncated, random and JPEG files named .tif", async () => {
    expect((await refusal(parseEvidence("bathymetry", new Uint8Array(0), opts()))).message).toMatch(/empty \(0 bytes\)/);
    const whole = tiff(gridSpec(40, 40), Float32Array.from({ length: 1600 }, (_, i) => 10 + (i % 17)));
    const cut = whole.subarray(0, Math.floor(whole.length * 0.6));
    expect((await refusal(parseEvidence("bathymetry", cut, opts()))).message).toMatch(/truncated or damaged/);
    const r = prng(11);
    const noise = Uint8Array.from({ length: 2048 }, () => Math.floor(r() * 256));
    noise[0] = 0x13;
    noise[3] = 0;
    expect((await refusal(parseEvidence("bathymetry", noise, opts()))).message).toMatch(/match no format.*although its name ends \.tif/);
    const jpeg = Uint8Array.of(0xff, 0xd8, 0xff, 0xe0, 0, 0x10, 0x4a, 0x46, 0x49, 0x46, 0, 1, 1);
    expect((await refusal(parseEvidence("bathymetry", jpeg, opts()))).message).toMatch(/^the file is a JPEG image although its name ends \.tif: a bathymetry upload must be GeoTIFF, ESRI ASCII grid, XYZ points/);
  });

  it("refuses a format the kind does not take", async () => {
    const e = await refusal(parseEvidence("bathymetry", utf8('{"type":"FeatureCollection","features":[]}'), opts({ fileName: "b.geojson" })));
    expect(e.message).toMatch(/the file is GeoJSON, but a bathymetry upload must be GeoTIFF or ESRI ASCII grid or XYZ points/);
  });
});

describe("bathymetry from an ESRI ASCII grid", () => {
  const asc = "ncols 4\nnrows 3\nxllcorner 495000\nyllcorner 6679970\ncellsize 10\nNODATA_value -9999\n20 21 22 23\n21 -9999 23 24\n22 23 24 25\n";
  it("reads it with the declared EPSG code and applies the datum", async () => {
    const res = await parseEvidence("bathymetry", utf8(asc), opts({ fileName: "b.asc", declaredEpsg: PROJECT_EPSG, vertical: { sign: "depth_positive_down", datum: "chart datum", offsetToMslM: -1 } }));
    expect(res.format).toBe("esri-ascii");
    expect(res.grid!.data[0]).toBe(-21);
    expect(res.grid!.nodata[5]).toBe(1);
    expect(res.extent).toEqual([495000, 6679970, 495040, 6680000]);
  });
  it("refuses it without a declared EPSG code, and refuses an enormous header before allocating", async () => {
    expect((await refusal(parseEvidence("bathymetry", utf8(asc), opts({ fileName: "b.asc" })))).message).toMatch(/carries no CRS: declare the EPSG code/);
    const huge = "ncols 100000\nnrows 100000\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2 3\n";
    expect((await refusal(parseEvidence("bathymetry", utf8(huge), opts({ fileName: "b.asc", declaredEpsg: PROJECT_EPSG })))).message).toMatch(/declares 100000 × 100000 cells \(1\.0e10\), over the limit/);
  });
  it("passes on the terrain reader's line-numbered message for a bad value", async () => {
    const bad = asc.replace("23 24\n22", "23 x4\n22");
    expect((await refusal(parseEvidence("bathymetry", utf8(bad), opts({ fileName: "b.asc", declaredEpsg: PROJECT_EPSG })))).message).toMatch(/line 8: "x4" is not a number/);
  });
});

describe("bathymetry from XYZ points, gridded on import", () => {
  it("grids the mean of the points in each cell, leaves empty cells nodata and counts points per cell", async () => {
    // cell size 10 m; corner snapped to multiples of 10: x from 495000, top edge y 6680010
    const pts = [
      [495001, 6680001, 10], [495009, 6680009, 20], // same cell (row 0, col 0): mean 15
      [495015, 6680005, 30], // row 0, col 1
      [495025, 6679985, 40], // row 2, col 2
      [495005, 6679975, 50], // row 3, col 0
      [495035, 6679975, 60], [495031, 6679971, 62], [495039, 6679979, 64], // row 3, col 3: mean 62
    ];
    const text = "x y z\n" + pts.map((p) => p.join(" ")).join("\n");
    const res = await parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", declaredEpsg: PROJECT_EPSG, analysisCellSizeM: 10, vertical: { sign: "depth_positive_down", datum: "MSL", offsetToMslM: 0 } }));
    const g = res.grid!;
    expect(g.spec).toMatchObject({ width: 4, height: 4, originX: 495000, originY: 6680010, cellSizeX: 10 });
    expect(g.data[0]).toBeCloseTo(-15, 5);
    expect(g.data[1]).toBeCloseTo(-30, 5);
    expect(g.data[2 * 4 + 2]).toBeCloseTo(-40, 5);
    expect(g.data[3 * 4 + 3]).toBeCloseTo(-62, 5);
    expect(g.nodata[2]).toBe(1);
    expect(res.summary).toMatchObject({ points: 8, cellsWithPoints: 5, maxPointsPerCell: 3, headerLineSkipped: true, nodataCount: 11 });
    expect(res.summary.pointsPerCell).toEqual({ bins: ["1", "2", "3–4"], cells: [3, 1, 1] });
  });

  it("reprojects lon/lat points to the project CRS before gridding and records how (reference library: proj4js)", async () => {
    const text = ["3.00 -30.00 10", "3.001 -30.00 11", "3.00 -30.001 12", "3.001 -30.001 13"].join("\n");
    const res = await parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", declaredEpsg: 4326, analysisCellSizeM: 20 }));
    // 3° E is the central meridian of UTM zone 31: x = 500000 exactly there (formula: false easting)
    expect(res.extent![0]).toBeLessThanOrEqual(500000);
    expect(res.extent![2]).toBeGreaterThan(500000 + 90);
    expect(String(res.summary.transformation)).toMatch(/^EPSG:4326 \(WGS 84\) → EPSG:32731 via proj4js/);
  });

  it("reports bad lines by number, together", async () => {
    const text = "495000 6680000 10\n495010 6680000 abc\n495020 6680000\n495030 6680000 12\n";
    const e = await refusal(parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", declaredEpsg: PROJECT_EPSG, analysisCellSizeM: 10 })));
    expect(e.message).toMatch(/has 2 problems: line 2: 'abc' is not a number; line 3: 2 values .* need x y z/);
  });

  it("refuses XYZ without a cell size or a CRS, and a gridding over the cell cap", async () => {
    const text = "495000 6680000 10\n495100 6680100 11\n";
    expect((await refusal(parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", declaredEpsg: PROJECT_EPSG })))).message).toMatch(/declare the analysis cell size/);
    expect((await refusal(parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", analysisCellSizeM: 10 })))).message).toMatch(/XYZ file carries no CRS/);
    expect((await refusal(parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", declaredEpsg: PROJECT_EPSG, analysisCellSizeM: 0.01 })))).message).toMatch(/over the limit of 6\.7e7: choose a coarser cell size/);
  });

  it("caps the number of points", async () => {
    const text = Array.from({ length: 10 }, (_, i) => `${495000 + i * 10} 6680000 ${i}`).join("\n");
    const e = await refusal(parseEvidence("bathymetry", utf8(text), opts({ fileName: "p.xyz", declaredEpsg: PROJECT_EPSG, analysisCellSizeM: 10, limits: { maxPoints: 9 } })));
    expect(e.message).toMatch(/more than 9 points, over the limit/);
  });

  it("grids two million points: every point lands in one cell and each cell's mean is right", async () => {
    const n = 2_000_000;
    const r = prng(5);
    const parts: string[] = new Array(n);
    // 200 × 200 cells of 5 m; z = a function of the cell, plus ±0.5 noise that averages out exactly per pair
    for (let i = 0; i < n; i += 2) {
      const c = Math.floor(r() * 200);
      const row = Math.floor(r() * 200);
      const x = 495000 + c * 5 + 0.5 + r() * 4;
      const y = 6680000 - row * 5 - 0.5 - r() * 4;
      const z = 20 + c * 0.1 + row * 0.05;
      const e = r() - 0.5;
      parts[i] = `${x.toFixed(3)} ${y.toFixed(3)} ${(z + e).toFixed(4)}`;
      parts[i + 1] = `${(x + 0.001).toFixed(3)} ${y.toFixed(3)} ${(z - e).toFixed(4)}`;
    }
    const res = await parseEvidence("bathymetry", utf8(parts.join("\n")), opts({ fileName: "big.xyz", declaredEpsg: PROJECT_EPSG, analysisCellSizeM: 5, vertical: { sign: "depth_positive_down", datum: "MSL", offsetToMslM: 0 } }));
    expect(res.summary.points).toBe(n);
    const g = res.grid!;
    expect(g.spec.width).toBe(200);
    expect(g.spec.height).toBe(200);
    // corner snapped to multiples of 5 m: the highest point lies just under 6680000, so that is the top edge
    expect(g.spec.originY).toBe(6680000);
    let total = 0;
    for (let i = 0; i < 40000; i++) if (!g.nodata[i]) total++;
    expect(res.summary.cellsWithPoints).toBe(total);
    for (const [row, c] of [[0, 0], [50, 77], [199, 199], [123, 4]]) {
      if (g.nodata[row * 200 + c]) continue;
      expect(g.data[row * 200 + c]).toBeCloseTo(-(20 + c * 0.1 + row * 0.05), 3);
    }
  });
});

describe("horizon grids and tidal-range grids", () => {
  it("keeps a horizon grid declared as depth below seabed as such, and refuses negative depths", async () => {
    const s = gridSpec(3, 3);
    const res = await parseEvidence("horizon_grid", tiff(s, new Float32Array(9).fill(2.5)), opts({ vertical: { sign: "depth_positive_down", datum: "seabed", offsetToMslM: 0 } }));
    expect(res.summary.verticalReference).toBe("below_seabed");
    expect(res.grid!.data[4]).toBe(2.5);
    const neg = new Float32Array(9).fill(2);
    neg[7] = -1;
    const e = await refusal(parseEvidence("horizon_grid", tiff(s, neg), opts({ vertical: { sign: "depth_positive_down", datum: "seabed", offsetToMslM: 0 } })));
    expect(e.message).toMatch(/depth below seabed is negative \(-1 m\) at row 2, column 1/);
  });
  it("reads a horizon grid of elevations like bathymetry", async () => {
    const res = await parseEvidence("horizon_grid", tiff(gridSpec(3, 3), new Float32Array(9).fill(-44)), opts({ vertical: { sign: "elevation_positive_up", datum: "MSL", offsetToMslM: 0 } }));
    expect(res.grid!.data[0]).toBe(-44);
    expect(res.summary.verticalReference).toBe("present_msl");
  });
  it("takes a tidal-range grid without a datum and refuses negative ranges", async () => {
    const res = await parseEvidence("tidal_range", tiff(gridSpec(3, 3), new Float32Array(9).fill(3.2)), opts({ vertical: undefined }));
    expect(res.grid!.data[0]).toBeCloseTo(3.2, 5);
    const neg = new Float32Array(9).fill(3);
    neg[0] = -0.5;
    expect((await refusal(parseEvidence("tidal_range", tiff(gridSpec(3, 3), neg), opts({ vertical: undefined })))).message).toMatch(/tidal range is negative/);
  });
});
