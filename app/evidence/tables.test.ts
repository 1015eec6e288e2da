import proj4 from "proj4";
import { describe, expect, it } from "vitest";
import { resolveCrs } from "../terrain/crs";
import { parseEvidence } from "./index";
import { EvidenceError, type ParseOptions } from "./types";
import { PROJECT_EPSG, utf8, refusal } from "./test-support";

const base = (o: Partial<ParseOptions> = {}): ParseOptions => ({ fileName: "t.csv", projectEpsg: PROJECT_EPSG, ...o });

describe("known sites CSV (all names invented)", () => {
  const csv = [
    "site_id,x,y,precision_m,kind,context,discovery_method,cal_bp_from,cal_bp_to,confidence,sensitivity,community",
    "KS-1,496000,6675000,5,lithic scatter,in situ,grab sample,9800,10200,high,restricted,Tarn Reach people",
    "KS-2,497500.5,6676000,50,single flint,trawled,fisher report,,,low,,",
    'KS-3,498000,6677000,,"peat, worked wood",Derived,core,11000,10500,medium,normal,',
  ].join("\n");

  it("normalises words, numbers and cal BP order, and fills a declared default precision with a warning", async () => {
    const res = await parseEvidence("known_sites", utf8(csv), base({ sitePrecisionDefaultM: 100 }));
    expect(res.count).toBe(3);
    expect(res.rows![0]).toMatchObject({ siteId: "KS-1", x: 496000, y: 6675000, precisionM: 5, context: "in_situ", calBpFrom: 10200, calBpTo: 9800, confidence: "high", sensitivity: "restricted", community: "Tarn Reach people" });
    expect(res.rows![1]).toMatchObject({ context: "trawled", sensitivity: "normal", calBpFrom: null });
    expect(res.rows![2]).toMatchObject({ kind: "peat, worked wood", context: "derived", precisionM: 100, calBpFrom: 11000, calBpTo: 10500 });
    expect(res.warnings.join(" ")).toMatch(/1 sites have no precision_m; the default of 100 m was used/);
    expect(res.extent).toEqual([496000, 6675000, 498000, 6677000]);
    expect(res.summary).toMatchObject({ restricted: 1, byContext: { in_situ: 1, trawled: 1, derived: 1 }, sensitive: true });
  });

  it("accepts lon/lat in WGS 84 and transforms them as proj4js does (reference library)", async () => {
    const res = await parseEvidence("known_sites", utf8("id;Latitude;Longitude;precision_m\r\nA;-30,05;2,95;10\r\n"), base());
    const [x, y] = proj4("WGS84", resolveCrs(PROJECT_EPSG).proj4, [2.95, -30.05]);
    expect(res.rows![0].x).toBeCloseTo(x, 6);
    expect(res.rows![0].y).toBeCloseTo(y, 6);
    expect(String(res.summary.transformation)).toMatch(/EPSG:4326 \(WGS 84\) → EPSG:32731/);
  });

  it("reports every bad row by number: bad numbers, unknown words, duplicate ids, missing precision", async () => {
    const bad = ["site_id,x,y,precision_m,context", "A,496000,6675000,5,in situ", "B,abc,6675000,5,in situ", "C,496000,6675000,-3,washed up", "A,496000,6675000,5,derived", "D,496000,6675000,,derived"].join("\n");
    const e = await refusal(parseEvidence("known_sites", utf8(bad), base()));
    expect(e.message).toMatch(/row 3: x is 'abc', not a number/);
    expect(e.message).toMatch(/row 4: precision_m is -3; it must be at least 0/);
    expect(e.message).toMatch(/row 4: context is 'washed up'; use one of in_situ, derived, trawled, dredged, unknown/);
    expect(e.message).toMatch(/row 5: site id 'A' is used twice \(also row 2\)/);
    expect(e.message).toMatch(/row 6: precision_m \(position precision in metres\) is missing and no default was declared/);
    expect(e.where?.row).toBe(3);
  });

  it("refuses missing position columns, positions outside the grid, and lon/lat given as x/y", async () => {
    expect((await refusal(parseEvidence("known_sites", utf8("site_id,east\nA,1\n"), base()))).message).toMatch(/needs position columns: "x" and "y"/);
    const out = "site_id,x,y,precision_m\nA,496000,6675000,5\nB,520000,6675000,5\nC,496000,6600000,5\n";
    const e = await refusal(parseEvidence("known_sites", utf8(out), base({ withinExtent: [495000, 6670000, 510000, 6681000] })));
    expect(e.message).toMatch(/row 3: \(520000, 6675000\) lies outside the grid's extent.*row 4: \(496000, 6600000\) lies outside/);
    const ll = await refusal(parseEvidence("known_sites", utf8("site_id,x,y,precision_m\nA,2.95,-30.05,5\n"), base()));
    expect(ll.message).toMatch(/row 2: \(2\.95, -30\.05\) looks like longitude\/latitude.*name the columns lon and lat/);
  });

  it("accepts a spreadsheet export with a byte-order mark, CRLF, semicolons and decimal commas", async () => {
    const bytes = utf8("\uFEFFSite ID;Easting;Northing;Precision (m);Context\r\nKS-7;496000,5;6675000,25;7,5;in situ\r\n");
    const res = await parseEvidence("known_sites", bytes, base());
    expect(res.rows![0]).toMatchObject({ siteId: "KS-7", x: 496000.5, y: 6675000.25, precisionM: 7.5, context: "in_situ" });
    expect(res.summary.delimiter).toBe(";");
  });

  it("refuses broken quoting with its row, and more rows than the cap", async () => {
    const e = await refusal(parseEvidence("known_sites", utf8('site_id,x,y,precision_m,kind\nA,496000,6675000,5,"flint\nB,496000,6675000,5,peat\n'), base()));
    expect(e.message).toMatch(/^row 2: a quoted field opened on line 2 .* is never closed/);
    const many = "site_id,x,y,precision_m\n" + Array.from({ length: 6 }, (_, i) => `S${i},496000,6675000,5`).join("\n");
    expect((await refusal(parseEvidence("known_sites", utf8(many), base({ limits: { maxRows: 5 } })))).message).toMatch(/more than 5 rows, over the limit/);
  });

  it("refuses positions that are no place in the project CRS (swapped x and y)", async () => {
    const e = await refusal(parseEvidence("known_sites", utf8("site_id,x,y,precision_m\nA,6675000,496000,5\n"), base()));
    expect(e.message).toMatch(/row 2: \(6675000, 496000\) is not a plausible position in the project CRS EPSG:32731/);
  });
});

describe("horizon picks CSV", () => {
  it("converts two-way time to depth below seabed with the row's velocity or 1600 m/s: d = v·t/2 (formula)", async () => {
    const csv = "line_id,fix_id,x,y,twt_ms,velocity_m_s\nL1,100,496000,6675000,2.5,1700\nL1,101,496010,6675000,5,\nL2,7,496000,6675100,10,1600\n";
    const res = await parseEvidence("horizon_picks", utf8(csv), base());
    expect(res.rows!.map((r) => r.depthBelowSeabedM)).toEqual([(1700 * 2.5) / 2000, (1600 * 5) / 2000, (1600 * 10) / 2000]);
    expect(res.rows![1].velocityMps).toBe(1600);
    expect(res.summary).toMatchObject({ measure: "twt_ms", lines: 2, picksPerLine: { min: 1, max: 2 }, picksWithDefaultVelocity: 1 });
    expect(res.warnings.join(" ")).toMatch(/1 picks in two-way time have no velocity: 1600 m\/s was used/);
  });

  it("takes depths directly and refuses both or neither measure, negative depths and picks outside the grid", async () => {
    const ok = await parseEvidence("horizon_picks", utf8("LINE,Easting,Northing,Depth_m,Horizon\nA,496000,6675000,1.8,transgressive surface\n"), base());
    expect(ok.rows![0]).toMatchObject({ lineId: "A", depthBelowSeabedM: 1.8, twtMs: null, horizon: "transgressive surface" });
    expect(ok.summary.horizons).toEqual(["transgressive surface"]);
    expect((await refusal(parseEvidence("horizon_picks", utf8("line,x,y,depth_m,twt_ms\nA,1,2,3,4\n"), base()))).message).toMatch(/has both/);
    expect((await refusal(parseEvidence("horizon_picks", utf8("line,x,y,amp\nA,1,2,3\n"), base()))).message).toMatch(/needs either "depth_below_seabed_m".*or "twt_ms"/);
    const e = await refusal(parseEvidence("horizon_picks", utf8("line,x,y,depth_m\nA,496000,6675000,-1\nA,599000,6675000,2\n"), base({ withinExtent: [495000, 6670000, 510000, 6681000] })));
    expect(e.message).toMatch(/row 2: depth_below_seabed_m is -1|row 2: depth_m is -1/);
    expect(e.message).toMatch(/row 3: \(599000, 6675000\) lies outside the grid's extent/);
  });

  it("refuses a CSV with missing columns, naming what it has", async () => {
    expect((await refusal(parseEvidence("horizon_picks", utf8("x,y,depth_m\n1,2,3\n"), base()))).message).toMatch(/lacks the column "line_id" \(or "line", "line_name"\); it has: "x", "y", "depth_m"/);
  });
});

describe("survey lines CSV", () => {
  it("builds one line per line id in fix order, with the system and vertical resolution from columns or the declaration", async () => {
    const csv = "line_id,fix_id,x,y,system,vertical_resolution_m\nP1,3,496020,6675000,chirp,0.15\nP1,1,496000,6675000,,\nP1,2,496010,6675000,,\nP2,10,496000,6675100,chirp,0.15\nP2,11,496050,6675100,,\n";
    const res = await parseEvidence("survey_lines", utf8(csv), base());
    const f = res.features!.features;
    expect(f).toHaveLength(2);
    expect(f[0].geometry.coordinates).toEqual([[496000, 6675000], [496010, 6675000], [496020, 6675000]]);
    expect(f[0].properties).toMatchObject({ lineId: "P1", fixIds: ["1", "2", "3"], system: "chirp", verticalResolutionM: 0.15 });
    expect(res.summary).toMatchObject({ system: "chirp", verticalResolutionM: 0.15, lines: 2, fixes: 5 });
    expect(res.warnings.join(" ")).toMatch(/1 lines were not in fix order in the file and were sorted/);
    const declared = await parseEvidence("survey_lines", utf8("line,x,y\nA,496000,6675000\nA,496100,6675000\n"), base({ survey: { system: "boomer", verticalResolutionM: 0.5 } }));
    expect(declared.summary).toMatchObject({ system: "boomer", verticalResolutionM: 0.5 });
  });
  it("refuses one-fix lines, repeated fixes and conflicting systems on a line", async () => {
    const e = await refusal(parseEvidence("survey_lines", utf8("line,fix,x,y,system\nA,1,496000,6675000,chirp\nA,3,496010,6675000,boomer\nA,3,496020,6675000,\nA,2,496030,6675000,\nB,1,496000,6675100,\n"), base()));
    expect(e.message).toMatch(/row 3: system 'boomer' differs from 'chirp' earlier on line A/);
    expect(e.message).toMatch(/row 6: line B has only one fix/);
    expect(e.message).toMatch(/fix 3 appears twice on line A/);
  });
});

describe("sea-level curve and index points", () => {
  it("reads a curve with ages increasing, σ optional, and hands the terrain engine a table it accepts", async () => {
    const res = await parseEvidence("sea_level_curve", utf8("Age_ka;RSL_m;Sigma_m\r\n0;0;0,5\r\n5;-8,2;1\r\n10;-39;\r\n"), base());
    expect(res.rows).toEqual([
      { ageKa: 0, rslM: 0, sigmaM: 0.5, sourceRow: 2 },
      { ageKa: 5, rslM: -8.2, sigmaM: 1, sourceRow: 3 },
      { ageKa: 10, rslM: -39, sigmaM: null, sourceRow: 4 },
    ]);
    expect(res.summary).toMatchObject({ ages: { fromKa: 0, toKa: 10 }, rowsWithoutSigma: 1 });
  });
  it("takes ages in years BP and divides by 1000", async () => {
    const res = await parseEvidence("sea_level_curve", utf8("age_bp,rsl_m\n0,0\n8000,-15\n"), base());
    expect(res.rows!.map((r) => r.ageKa)).toEqual([0, 8]);
  });
  it("refuses ages that do not increase, naming the rows, and a file sorted oldest first", async () => {
    const e = await refusal(parseEvidence("sea_level_curve", utf8("age_ka,rsl_m\n0,0\n6,-10\n6,-11\n5,-9\n"), base()));
    expect(e.message).toMatch(/row 4: age 6 ka is not greater than 6 ka on row 3.*row 5: age 5 ka is not greater than 6 ka on row 4/);
    const d = await refusal(parseEvidence("sea_level_curve", utf8("age_ka,rsl_m\n12,-60\n8,-20\n4,-5\n0,0\n"), base()));
    expect(d.message).toMatch(/decrease all the way down the file: sort the rows from the present/);
    expect((await refusal(parseEvidence("sea_level_curve", utf8("age_ka,rsl_m\n0,0\n"), base()))).message).toMatch(/at least two rows/);
    expect((await refusal(parseEvidence("sea_level_curve", utf8("age_ka,rsl_m\n0,zero\n1,-1\n"), base()))).message).toMatch(/row 2: rsl_m is 'zero', not a number/);
    // a headerless table of numbers is read as a CSV lacking its header, not as XYZ points
    expect((await refusal(parseEvidence("sea_level_curve", utf8("0,0,0.5\n5,-8,1\n"), base()))).message).toMatch(/lacks the column "rsl_m"/);
  });
  it("reads index points with their kinds and σ, applying a vertical declaration when given", async () => {
    const csv = "id,age_ka,age_sigma_ka,height_m,height_sigma_m,kind,lab_code\nIP1,9.1,0.1,-25.0,0.5,index point,XX-1001\nIP2,10.2,0.15,-31,1,terrestrial,\nIP3,8.0,0.1,-20,0.8,Marine limiting,\n";
    const res = await parseEvidence("sea_level_index_points", utf8(csv), base({ vertical: { sign: "elevation_positive_up", datum: "LAT", offsetToMslM: -1.2 } }));
    expect(res.rows!.map((r) => r.kind)).toEqual(["index_point", "terrestrial_limiting", "marine_limiting"]);
    expect(res.rows![0].heightM).toBeCloseTo(-26.2, 10);
    const e = await refusal(parseEvidence("sea_level_index_points", utf8("age_ka,age_sigma_ka,height_m,height_sigma_m,kind\n9,0.1,-25,0.5,peat\n"), base()));
    expect(e.message).toMatch(/row 2: kind is 'peat'; use one of index_point, terrestrial_limiting, marine_limiting/);
  });
});

describe("cores CSV", () => {
  const csv = [
    "core_id,x,y,water_depth_m,penetration_m,recovery_m,horizon_reached,preserved_land_surface,archaeological_indicators,unit_top_m,unit_base_m,unit_description,lab_code,c14_age,c14_sigma,cal_from,cal_to,material",
    "VC-01,496000,6675000,32.4,5.2,4.8,yes,yes,charcoal; burnt flint,0,1.2,shelly sand,,,,,,",
    "VC-01,,,,,,,,,1.2,2.0,peat,XX-2001,8930,40,10180,9910,wood",
    "VC-02,496500,6675500,35,1.1,0.9,refused,unknown,none,,,,,,,,,",
    "VC-03,497000,6676000,36,6,5,no,no,,,,,,,,,,",
  ].join("\n");
  it("groups rows by core: the first gives the core, later rows add units and dates; refusal stays refusal", async () => {
    const res = await parseEvidence("cores", utf8(csv), base({ vertical: { sign: "depth_positive_down", datum: "LAT", offsetToMslM: -2 } }));
    expect(res.count).toBe(3);
    const c1 = res.rows![0] as { units: unknown[]; dates: unknown[] } & Record<string, unknown>;
    expect(c1).toMatchObject({ coreId: "VC-01", waterDepthM: 32.4, seabedElevationM: -34.4, horizonReached: "yes", preservedLandSurface: "yes", archaeologicalIndicators: "charcoal; burnt flint" });
    expect(c1.units).toEqual([{ topM: 0, baseM: 1.2, description: "shelly sand" }, { topM: 1.2, baseM: 2, description: "peat" }]);
    expect(c1.dates).toEqual([{ labCode: "XX-2001", c14AgeBp: 8930, c14SigmaYears: 40, calBpFrom: 10180, calBpTo: 9910, material: "wood", sampleDepthM: null }]);
    expect(res.rows![1]).toMatchObject({ horizonReached: "refused", archaeologicalIndicators: null });
    expect(res.summary).toMatchObject({ horizonReached: { yes: 1, no: 1, refused: 1 } });
    expect(res.warnings.join(" ")).toMatch(/1 cores refused before the horizon: a refusal is not a negative result/);
  });
  it("reports recovery over penetration, units below the penetration, dates without σ and conflicting repeats", async () => {
    const bad = [
      "core_id,x,y,penetration_m,recovery_m,horizon_reached,unit_top_m,unit_base_m,c14_age,c14_sigma",
      "A,496000,6675000,2,3,maybe,,,,",
      "B,496000,6675000,2,1,yes,1,4,,",
      "B,,,3,,,,,8000,",
    ].join("\n");
    const e = await refusal(parseEvidence("cores", utf8(bad), base()));
    expect(e.message).toMatch(/row 2: horizon_reached is 'maybe'; use one of yes, no, refused/);
    expect(e.message).toMatch(/row 2: recovery 3 m is more than penetration 2 m/);
    expect(e.message).toMatch(/row 3: unit base 4 m is deeper than the core's penetration 2 m/);
    expect(e.message).toMatch(/row 4: core B: penetration_m is 3 here but 2 on row 3/);
    expect(e.message).toMatch(/row 4: a radiocarbon age needs its c14_sigma/);
  });
});

describe("palaeo-tidal range as a constant or a table", () => {
  it("takes a single number, a one-row CSV, or ranges by age", async () => {
    expect((await parseEvidence("tidal_range", utf8("3.5\n"), base())).summary.constantM).toBe(3.5);
    expect((await parseEvidence("tidal_range", utf8("tidal_range_m\n4.2\n"), base())).summary.constantM).toBe(4.2);
    const byAge = await parseEvidence("tidal_range", utf8("age_ka,range_m\n0,3\n8,5.5\n"), base());
    expect(byAge.rows!.map((r) => r.rangeM)).toEqual([3, 5.5]);
    expect((await refusal(parseEvidence("tidal_range", utf8("range_m\n3\n4\n"), base()))).message).toMatch(/2 values but no "age_ka" column/);
    expect((await refusal(parseEvidence("tidal_range", utf8("-1\n"), base()))).message).toMatch(/≥ 0/);
  });
});
