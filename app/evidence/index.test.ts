import { describe, expect, it } from "vitest";
import { parseEvidence } from "./index";
import { EVIDENCE_KINDS, type EvidenceKind, KIND_FORMATS, type ParseOptions } from "./types";
import { PROJECT_EPSG, evidenceFixture, gridSpec, tiff, utf8 } from "./test-support";

const vertical = { sign: "depth_positive_down", datum: "LAT", offsetToMslM: -2 } as const;
const point = (props: Record<string, unknown>) => utf8(JSON.stringify({ type: "FeatureCollection", features: [{ type: "Feature", geometry: { type: "Point", coordinates: [2.95, -30.05] }, properties: props }] }));
const line = (props: Record<string, unknown>) => utf8(JSON.stringify({ type: "FeatureCollection", features: [{ type: "Feature", geometry: { type: "LineString", coordinates: [[2.95, -30.05], [2.96, -30.05]] }, properties: props }] }));

/** One small valid upload per kind; the test below fails when a kind is added without one. */
const samples: Record<EvidenceKind, { bytes: () => Uint8Array; opts?: Partial<ParseOptions> }> = {
  bathymetry: { bytes: () => tiff(gridSpec(3, 3), new Float32Array(9).fill(30)), opts: { vertical } },
  horizon_picks: { bytes: () => utf8("line_id,x,y,twt_ms\nL1,496000,6675000,3\n") },
  horizon_grid: { bytes: () => tiff(gridSpec(3, 3), new Float32Array(9).fill(2)), opts: { vertical: { sign: "depth_positive_down", datum: "seabed", offsetToMslM: 0 } } },
  survey_lines: { bytes: () => line({ line_id: "P1" }) },
  interpretations: { bytes: () => line({ kind: "palaeochannel", interpreter: "B. Invented" }) },
  sea_level_curve: { bytes: () => utf8("age_ka,rsl_m,sigma_m\n0,0,0.1\n10,-40,2\n") },
  sea_level_index_points: { bytes: () => utf8("age_ka,age_sigma_ka,height_m,height_sigma_m,kind\n9,0.1,-25,0.5,index_point\n") },
  tidal_range: { bytes: () => utf8("2.8\n") },
  known_sites: { bytes: () => utf8("site_id,lon,lat,precision_m,context\nKS-1,2.95,-30.05,10,in situ\n") },
  cores: { bytes: () => evidenceFixture("cores.ags"), opts: { declaredEpsg: PROJECT_EPSG } },
  lease_blocks: { bytes: () => evidenceFixture("blocks.gpkg") },
  survey_area: { bytes: () => evidenceFixture("blocks-shp.zip") },
  dredging_areas: {
    bytes: () =>
      utf8(JSON.stringify({ type: "FeatureCollection", features: [{ type: "Feature", geometry: { type: "Polygon", coordinates: [[[2.95, -30.05], [2.96, -30.05], [2.96, -30.04], [2.95, -30.05]]] }, properties: { licence: "Area 7 (invented)", method: "aggregate dredging", years: "1998–2011" } }] })),
  },
  ocean_boundary: { bytes: () => line({ name: "shelf edge" }) },
  exclusions: { bytes: () => point({ kind: "anchor", buffer_m: 150 }) },
  development_footprint: { bytes: () => evidenceFixture("turbines.geojson") },
};

describe("parseEvidence — every kind is read back", () => {
  for (const kind of EVIDENCE_KINDS) {
    it(`${kind}: accepted in the project CRS, with a count and a format the kind takes`, async () => {
      const s = samples[kind];
      expect(s, `no sample upload for ${kind}`).toBeDefined();
      const res = await parseEvidence(kind, s.bytes(), { fileName: "upload", projectEpsg: PROJECT_EPSG, ...s.opts });
      expect(res.kind).toBe(kind);
      expect(res.crsEpsg).toBe(PROJECT_EPSG);
      expect(res.count).toBeGreaterThan(0);
      expect(KIND_FORMATS[kind]).toContain(res.format);
      expect((res.grid ? 1 : 0) + (res.rows ? 1 : 0) + (res.features ? 1 : 0)).toBe(1);
    });
  }

  it("refuses an unknown kind", async () => {
    await expect(parseEvidence("rumours" as EvidenceKind, utf8("a\n1\n"), { fileName: "x", projectEpsg: PROJECT_EPSG })).rejects.toThrow(/"rumours" is not a kind of evidence/);
  });

  it("refuses a project CRS that is not a projected CRS in metres", async () => {
    await expect(parseEvidence("tidal_range", utf8("2\n"), { fileName: "x", projectEpsg: 4326 })).rejects.toThrow(/EPSG:4326 is a geographic CRS/);
  });
});

describe("dredging areas", () => {
  it("keeps the name, method and years, and refuses a line where an area is needed", async () => {
    const res = await parseEvidence("dredging_areas", samples.dredging_areas.bytes(), { fileName: "areas.geojson", projectEpsg: PROJECT_EPSG });
    expect(res.features?.features[0].properties).toMatchObject({ name: "Area 7 (invented)", method: "aggregate dredging", years: "1998–2011" });
    await expect(parseEvidence("dredging_areas", line({ name: "not an area" }), { fileName: "areas.geojson", projectEpsg: PROJECT_EPSG })).rejects.toThrow(/LineString/);
  });
});
