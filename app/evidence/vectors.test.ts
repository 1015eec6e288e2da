import { describe, expect, it } from "vitest";
import { parseEvidence } from "./index";
import { EvidenceError, type ParseOptions } from "./types";
import { PROJECT_EPSG, evidenceFixture, utf8, refusal } from "./test-support";

const base = (o: Partial<ParseOptions> = {}): ParseOptions => ({ fileName: "v.geojson", projectEpsg: PROJECT_EPSG, ...o });

const fc = (features: unknown[], extra: Record<string, unknown> = {}) => utf8(JSON.stringify({ type: "FeatureCollection", ...extra, features }));
const feature = (geometry: unknown, properties: Record<string, unknown> = {}) => ({ type: "Feature", geometry, properties });
const square = (x: number, y: number, d = 0.01) => ({ type: "Polygon", coordinates: [[[x, y], [x + d, y], [x + d, y + d], [x, y + d], [x, y]]] });

/** Polygon vertices (outer ring) of the GDAL/PROJ output in blocks-gdal.txt, for the cross-check. */
function gdalRings(): number[][][] {
  const text = new TextDecoder().decode(evidenceFixture("blocks-gdal.txt"));
  return [...text.matchAll(/POLYGON \(\(([^)]*)\)/g)].map((m) => m[1].split(",").map((p) => p.trim().split(/\s+/).map(Number)));
}

describe("GeoJSON (RFC 7946, WGS 84) into the project CRS", () => {
  it("transforms lease blocks with proj4js to within a millimetre of GDAL/PROJ (reference library), keeping holes", async () => {
    const res = await parseEvidence("lease_blocks", evidenceFixture("blocks.geojson"), base());
    expect(res.count).toBe(2);
    expect(res.features!.features.map((f) => f.properties.name)).toEqual(["Aster-1", "Aster-2"]);
    const gdal = gdalRings();
    res.features!.features.forEach((f, k) => {
      const ours = f.geometry.coordinates[0] as number[][];
      expect(ours).toHaveLength(gdal[k].length);
      ours.forEach((p, i) => {
        expect(Math.abs(p[0] - gdal[k][i][0])).toBeLessThan(1e-3);
        expect(Math.abs(p[1] - gdal[k][i][1])).toBeLessThan(1e-3);
      });
    });
    expect(res.features!.features[0].geometry.coordinates).toHaveLength(2); // outer ring + hole
    expect(String(res.summary.transformation)).toMatch(/^EPSG:4326 \(WGS 84\) → EPSG:32731 via proj4js/);
    expect(res.summary.crsSource).toMatch(/RFC 7946/);
  });

  it("reads exclusions with kind and buffer, and the development footprint with impact depth per asset", async () => {
    const ex = await parseEvidence(
      "exclusions",
      fc([
        feature({ type: "LineString", coordinates: [[2.95, -30.05], [2.99, -30.02]] }, { type: "Power cable", buffer_m: 250 }),
        feature({ type: "Point", coordinates: [2.97, -30.04] }, { kind: "wreck", buffer_m: 100, name: "Wreck of the invented Marlow" }),
      ]),
      base(),
    );
    expect(ex.features!.features.map((f) => [f.properties.kind, f.properties.bufferM])).toEqual([["cable", 250], ["wreck", 100]]);
    expect(ex.summary.byKind).toEqual({ cable: 1, wreck: 1 });
    const fp = await parseEvidence("development_footprint", evidenceFixture("turbines.geojson"), base());
    expect(fp.features!.features.map((f) => f.properties.impactDepthM)).toEqual([35, 32.5, 30]);
    expect(fp.features!.features[0].properties).toMatchObject({ assetId: "T-01", kind: "turbine", bufferM: 50 });
  });

  it("reads interpretations with their kind, depth, age, confidence and interpreter", async () => {
    const res = await parseEvidence(
      "interpretations",
      fc([
        feature({ type: "LineString", coordinates: [[2.95, -30.05], [2.96, -30.04]] }, { kind: "palaeochannel", depth_m: 3.5, age_ka: 10.5, confidence: "High", interpreter: "A. Invented" }),
        feature(square(2.97, -30.06), { type: "gas blanking" }),
      ]),
      base(),
    );
    expect(res.features!.features[0].properties).toMatchObject({ kind: "palaeochannel", depthBelowSeabedM: 3.5, ageKa: 10.5, confidence: "high", interpreter: "A. Invented" });
    expect(res.features!.features[1].properties.kind).toBe("gas_blanking");
    expect(res.warnings.join(" ")).toMatch(/1 interpretations name no interpreter/);
  });

  it("reads known sites as points and survey lines as lines with one fix id per vertex", async () => {
    const s = await parseEvidence("known_sites", fc([feature({ type: "Point", coordinates: [2.95, -30.05] }, { site_id: "KS-9", precision_m: 20, context: "in situ", sensitivity: true })]), base());
    expect(s.features!.features[0].properties).toMatchObject({ siteId: "KS-9", context: "in_situ", sensitivity: "restricted", precisionM: 20 });
    const twice = fc([1, 2].map(() => feature({ type: "Point", coordinates: [2.95, -30.05] }, { site_id: "KS-9", precision_m: 20 })));
    expect((await refusal(parseEvidence("known_sites", twice, base()))).message).toMatch(/feature 2: site id 'KS-9' is used twice \(also feature 1\)/);
    const l = await parseEvidence("survey_lines", fc([feature({ type: "LineString", coordinates: [[2.95, -30.05], [2.96, -30.05], [2.97, -30.05]] }, { line_id: "P7", fix_ids: [1, 2, 3], system: "chirp", vertical_resolution_m: 0.2 })]), base());
    expect(l.features!.features[0].properties).toMatchObject({ lineId: "P7", fixIds: ["1", "2", "3"], system: "chirp", verticalResolutionM: 0.2 });
    const bad = await refusal(parseEvidence("survey_lines", fc([feature({ type: "LineString", coordinates: [[2.95, -30.05], [2.96, -30.05]] }, { line_id: "P7", fix_ids: [1, 2, 3] })]), base()));
    expect(bad.message).toMatch(/feature 1: has 3 fix ids for 2 vertices/);
  });

  it("accepts a pre-RFC 7946 crs member naming a projected EPSG code", async () => {
    const res = await parseEvidence(
      "survey_area",
      fc([feature({ type: "Polygon", coordinates: [[[495000, 6670000], [505000, 6670000], [505000, 6680000], [495000, 6670000]]] })], { crs: { type: "name", properties: { name: "urn:ogc:def:crs:EPSG::32731" } } }),
      base(),
    );
    expect(res.extent).toEqual([495000, 6670000, 505000, 6680000]);
    expect(res.summary.transformation).toMatch(/none: already in the project CRS/);
  });

  it("refuses invalid JSON with its line and column, and non-GeoJSON JSON", async () => {
    const e = await refusal(parseEvidence("lease_blocks", utf8('{"type": "FeatureCollection",\n "features": [ { "type": "Feature", }\n]}'), base()));
    expect(e.message).toMatch(/^the GeoJSON is not valid JSON: .* at line 2, column \d+/);
    expect((await refusal(parseEvidence("lease_blocks", utf8('{"type":"Topology","objects":{}}'), base()))).message).toMatch(/type is "Topology"; expected "FeatureCollection"/);
    expect((await refusal(parseEvidence("lease_blocks", fc([]), base()))).message).toMatch(/holds no features/);
  });

  it("refuses the wrong geometry type for the kind, naming the features", async () => {
    const e = await refusal(parseEvidence("lease_blocks", fc([feature(square(2.95, -30.05)), feature({ type: "Point", coordinates: [2.95, -30.05] }), feature({ type: "LineString", coordinates: [[2.95, -30.05], [2.96, -30.05]] })]), base()));
    expect(e.message).toMatch(/has 2 problems: feature 2: is a Point; lease blocks must be Polygon or MultiPolygon; feature 3: is a LineString/);
    expect(e.where).toEqual({ feature: 2 });
  });

  it("refuses broken geometries: unclosed rings, short lines, bad positions, no geometry, collections", async () => {
    const e = await refusal(
      parseEvidence(
        "exclusions",
        fc([
          feature({ type: "Polygon", coordinates: [[[2.95, -30.05], [2.96, -30.05], [2.96, -30.04], [2.95, -30.04]]] }, { kind: "wreck", buffer_m: 1 }),
          feature({ type: "LineString", coordinates: [[2.95, -30.05]] }, { kind: "cable", buffer_m: 1 }),
          feature({ type: "Point", coordinates: ["2.95", -30.05] }, { kind: "wreck", buffer_m: 1 }),
          feature(null, { kind: "wreck", buffer_m: 1 }),
          feature({ type: "GeometryCollection", geometries: [] }, { kind: "wreck", buffer_m: 1 }),
        ]),
        base(),
      ),
    );
    expect(e.message).toMatch(/feature 1: Polygon: a polygon ring is not closed/);
    expect(e.message).toMatch(/feature 2: LineString: a line has 1 position; it needs at least 2/);
    expect(e.message).toMatch(/feature 3: Point: position \["2\.95",-30\.05\] is not \[x, y\] numbers/);
    expect(e.message).toMatch(/feature 4: has no geometry/);
    expect(e.message).toMatch(/feature 5: is a GeometryCollection/);
  });

  it("refuses projected coordinates in a GeoJSON that claims WGS 84, and missing or bad attributes", async () => {
    const e = await refusal(parseEvidence("survey_area", fc([feature({ type: "Polygon", coordinates: [[[495000, 6670000], [505000, 6670000], [505000, 6680000], [495000, 6670000]]] })]), base()));
    expect(e.message).toMatch(/feature 1: position \(495000, 6670000\) is not longitude\/latitude.*export the file as WGS 84, or give its CRS/);
    const m = await refusal(parseEvidence("development_footprint", fc([feature({ type: "Point", coordinates: [2.95, -30.05] }, { asset_id: "T1" })]), base()));
    expect(m.message).toMatch(/features lack the property "impact_depth_m"/);
    const b = await refusal(parseEvidence("exclusions", fc([feature({ type: "Point", coordinates: [2.95, -30.05] }, { kind: "shipwreck", buffer_m: "wide" })]), base()));
    expect(b.message).toMatch(/feature 1: kind is 'shipwreck'; use one of cable, pipeline, wreck, anomaly, turbine, anchor, other; feature 1: buffer_m is 'wide', not a number/);
  });

  it("refuses features far outside the project's transverse Mercator zone, naming them", async () => {
    const e = await refusal(parseEvidence("lease_blocks", fc([feature(square(2.95, -30.05)), feature(square(100, 40))]), base()));
    expect(e.message).toMatch(/^the GeoJSON has a problem: feature 2: lies at no plausible place in the project CRS EPSG:32731/);
  });

  it("caps features and vertices", async () => {
    const many = fc(Array.from({ length: 5 }, () => feature(square(2.95, -30.05))));
    expect((await refusal(parseEvidence("lease_blocks", many, base({ limits: { maxFeatures: 4 } })))).message).toMatch(/5 features, over the limit of 4/);
    expect((await refusal(parseEvidence("lease_blocks", many, base({ limits: { maxVertices: 12 } })))).message).toMatch(/more than 12 vertices \(over the limit at feature 3\)/);
  });
});

describe("GeoPackage and zipped Shapefile (fixtures made by GDAL's ogr2ogr)", () => {
  it("reads a GeoPackage in the project CRS: same blocks as the GeoJSON, within a millimetre", async () => {
    const g = await parseEvidence("lease_blocks", evidenceFixture("blocks.gpkg"), base({ fileName: "blocks.gpkg" }));
    const j = await parseEvidence("lease_blocks", evidenceFixture("blocks.geojson"), base());
    expect(g.format).toBe("gpkg");
    expect(g.summary).toMatchObject({ layer: "blocks", crsSource: "gpkg_spatial_ref_sys: EPSG:32731" });
    expect(g.features!.features.map((f) => f.properties.name)).toEqual(["Aster-1", "Aster-2"]);
    const a = g.features!.features[0].geometry.coordinates as number[][][];
    const b = j.features!.features[0].geometry.coordinates as number[][][];
    expect(a).toHaveLength(2);
    a.forEach((ring, r) => ring.forEach((p, i) => expect(Math.hypot(p[0] - b[r][i][0], p[1] - b[r][i][1])).toBeLessThan(1e-3)));
  });

  it("reads a GeoPackage in WGS 84 and transforms it (development footprint)", async () => {
    const g = await parseEvidence("development_footprint", evidenceFixture("turbines-wgs84.gpkg"), base({ fileName: "t.gpkg" }));
    const j = await parseEvidence("development_footprint", evidenceFixture("turbines.geojson"), base());
    expect(g.summary.crsSource).toBe("gpkg_spatial_ref_sys: EPSG:4326");
    expect(g.features!.features.map((f) => f.properties.impactDepthM)).toEqual([35, 32.5, 30]);
    g.features!.features.forEach((f, k) => {
      const [x, y] = f.geometry.coordinates as number[];
      const [u, v] = j.features!.features[k].geometry.coordinates as number[];
      expect(Math.hypot(x - u, y - v)).toBeLessThan(1e-6);
    });
  });

  it("reads GDAL's 3-D GeoPackage of mixed interpretations (ISO WKB Z, xyz envelopes): same places as the GeoJSON, Z dropped", async () => {
    const g = await parseEvidence("interpretations", evidenceFixture("interpretations-3d.gpkg"), base({ fileName: "i.gpkg" }));
    const j = await parseEvidence("interpretations", evidenceFixture("interpretations.geojson"), base());
    expect(g.features!.features.map((f) => [f.geometry.type, f.properties.kind])).toEqual([
      ["LineString", "palaeochannel"],
      ["Polygon", "gas_blanking"],
      ["Point", "anomaly_archaeological"],
    ]);
    expect(g.features!.features[0].properties).toMatchObject({ depthBelowSeabedM: 3.2, ageKa: 10.8, confidence: "high", interpreter: "C. Invented" });
    const flat = (c: unknown): number[][] => (typeof (c as unknown[])[0] === "number" ? [c as number[]] : (c as unknown[]).flatMap(flat));
    g.features!.features.forEach((f, k) => {
      const a = flat(f.geometry.coordinates);
      const b = flat(j.features!.features[k].geometry.coordinates);
      expect(a.length).toBe(b.length);
      a.forEach((p, i) => {
        expect(p).toHaveLength(2);
        expect(Math.hypot(p[0] - b[i][0], p[1] - b[i][1])).toBeLessThan(1e-3);
      });
    });
  });

  it("reads a zipped Shapefile: polygon with its hole, .prj CRS, and dBASE names cut to 10 characters", async () => {
    const s = await parseEvidence("lease_blocks", evidenceFixture("blocks-shp.zip"), base({ fileName: "blocks.zip" }));
    const j = await parseEvidence("lease_blocks", evidenceFixture("blocks.geojson"), base());
    expect(s.format).toBe("shapefile-zip");
    expect(s.features!.features.map((f) => f.properties.name)).toEqual(["Aster-1", "Aster-2"]);
    const rings = s.features!.features[0].geometry.coordinates as number[][][];
    expect(rings).toHaveLength(2);
    // the Shapefile winds rings its own way (outer clockwise): compare as sets of vertices
    const near = (p: number[], ring: number[][]) => ring.some((q) => Math.hypot(p[0] - q[0], p[1] - q[1]) < 1e-3);
    const jr = j.features!.features[0].geometry.coordinates as number[][][];
    rings.forEach((ring, r) => ring.forEach((p) => expect(near(p, jr[r])).toBe(true)));
    const t = await parseEvidence("development_footprint", evidenceFixture("turbines-shp.zip"), base({ fileName: "t.zip" }));
    // ogr2ogr cut "impact_depth_m" to "impact_dep"
    expect(t.summary.properties).toContain("impact_dep");
    expect(t.features!.features.map((f) => f.properties.impactDepthM)).toEqual([35, 32.5, 30]);
  });

  it("refuses a zip without a .shp, a truncated zip, a truncated GeoPackage and a GeoPackage for a kind that needs other geometry", async () => {
    const { zipSync } = await import("fflate");
    const z = zipSync({ "readme.txt": utf8("no shapes here") });
    expect((await refusal(parseEvidence("lease_blocks", z, base({ fileName: "x.zip" })))).message).toMatch(/holds no \.shp file/);
    const cut = evidenceFixture("blocks.gpkg").subarray(0, 5000);
    expect((await refusal(parseEvidence("lease_blocks", cut, base({ fileName: "x.gpkg" })))).message).toMatch(/^the file is not a readable GeoPackage\/SQLite database .*: it may be truncated or damaged$/);
    const cutZip = evidenceFixture("blocks-shp.zip").subarray(0, 600);
    expect((await refusal(parseEvidence("lease_blocks", cutZip, base({ fileName: "x.zip" })))).message).toMatch(/^the zip could not be opened .*truncated or damaged/);
    expect((await refusal(parseEvidence("survey_lines", evidenceFixture("blocks.gpkg"), base({ fileName: "x.gpkg" })))).message).toMatch(/feature 1: is a Polygon; survey lines must be LineString or MultiLineString/);
  });
});
