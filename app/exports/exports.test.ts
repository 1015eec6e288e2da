import { execFileSync, spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { CAUTIONS } from "../cautions.ts";
import { parseCsv } from "../evidence/csv.ts";
import { readGeoPackage, readGpkgGeometry } from "../evidence/gpkg.ts";
import { DEFAULT_LIMITS } from "../evidence/types.ts";
import { readGeoJson } from "../evidence/vectors.ts";
import { defaultConstraintSet } from "../scoring/target-constraints.ts";
import { cellCentre, describeTargets, type PlacedGrid, type Pick } from "../scoring/target-selection.ts";
import { resolveCrs } from "../terrain/crs.ts";
import { csvField, targetsToCsv } from "./csv.ts";
import { targetsToGeoJson } from "./geojson.ts";
import { GPKG_APPLICATION_ID, gpkgPointBlob, targetsToGeoPackage } from "./geopackage.ts";
import { type ExportMeta, type ExportTarget, TARGET_FIELDS } from "./target-fields.ts";

// three targets on a 4 × 3 grid of 100 m cells in UTM zone 30 N (EPSG:32630)
const EPSG = 32630;
const crs = resolveCrs(EPSG);
const g: PlacedGrid = { width: 4, height: 3, cellSizeX: 100, cellSizeY: 100, originX: 400_000, originY: 5_600_000 };
const n = 12;
const pick = (cell: number, mode: Pick["mode"], key: number, extra: Partial<Pick> = {}): Pick => {
  const [x, y] = cellCentre(g, cell);
  return { cell, x, y, mode, key, ...extra };
};
const targets: ExportTarget[] = describeTargets(
  [
    pick(5, "best-first", 0.9),
    pick(2, "transect", 0, { transect: { name: 'Channel "A", north', number: 1, offsetM: 0, role: "axis" } }),
    pick(11, "control", 0.2, { classIndex: 3 }),
  ],
  {
    grid: g,
    crs,
    score: Float32Array.from({ length: n }, (_, i) => i / 12),
    seabedElevationM: new Float32Array(n).fill(-35.25),
    coverThicknessM: Float32Array.from({ length: n }, (_, i) => (i === 11 ? NaN : 1.2)),
    coverType: null,
    constraints: defaultConstraintSet(),
    velocityMps: 1600,
    surveyLines: [{ name: "L1", fixes: [{ x: 400_000, y: 5_599_850, fix: "1001" }, { x: 400_400, y: 5_599_850, fix: "1002" }] }],
    exclusions: [{ name: "=Wreck, 2", kind: "wreck", bufferM: 100, parts: [[[400_350, 5_599_750]]] }],
    nearbyExclusionM: 1000,
    agesKa: [20, 12, 8],
    landClassByAge: [new Uint8Array(n), new Uint8Array(n), new Uint8Array(n).fill(1)],
    factors: [
      { name: "dist_river", weight: 2, scores: new Float32Array(n).fill(0.5) },
      { name: "tpi", weight: 1, scores: new Float32Array(n).fill(0.9) },
    ],
    waypointPrefix: "CT",
  },
);
targets[2].status = "cored";
const meta: ExportMeta = {
  title: "Corrastan Shelf — cruise 1 targets",
  crsLabel: `EPSG:${EPSG} (WGS 84 / UTM zone 30N)`,
  generatedAt: "2025-05-01T12:00:00.000Z",
  notes: ["Scoring 12 (weight set v3) at 12 ka; constraint set: 6 m barrel.\nTwo stations left out."],
};

describe("CSV (RFC 4180)", () => {
  const text = targetsToCsv(targets, meta);

  it("opens with the cautions of design §10 as comment lines, then one header and one row per target", () => {
    const lines = text.split("\r\n");
    expect(lines[lines.length - 1]).toBe(""); // RFC 4180 §2.2: the last record may end with CRLF
    for (const c of CAUTIONS) expect(lines).toContain(`# - ${c}`);
    expect(lines.some((l) => l.startsWith("# Scoring 12") && !l.includes("\n"))).toBe(true); // notes kept on one comment line
    // parsed back with the project's own CSV reader (comments skipped before the header)
    const t = parseCsv(text, { maxRows: 100 });
    expect(t.header).toEqual(TARGET_FIELDS.map((f) => f.name));
    expect(t.records).toHaveLength(3);
    const row = (k: number, name: string) => t.records[k][t.header.indexOf(name)];
    expect(row(0, "waypoint")).toBe("CT01");
    expect(row(1, "mode_detail")).toBe('Channel "A", north transect 1, axis, 0 m'); // quotes and comma survive quoting
    expect(row(2, "status")).toBe("cored");
    expect(row(2, "horizon_depth_m")).toBe(""); // unassessed → empty, never 0
    expect(row(0, "horizon_twt_ms")).toBe("1.5"); // formula: 2·1.2/1600 s = 1.5 ms
    expect(row(0, "lat_ddm")).toBe(targets[0].latDdm);
    // formula: cell 5's centre (400 150, 5 599 850) to the wreck (400 350, 5 599 750) = √(200² + 100²) = 223.6 m;
    // the leading "=" is guarded against spreadsheet formula injection
    expect(row(0, "nearby_exclusions")).toBe("'=Wreck, 2 (wreck) 224 m / buffer 100 m");
    expect(Number(row(0, "x_m"))).toBe(targets[0].x);
  });

  it("quotes fields per RFC 4180 §2 rules 5–7", () => {
    expect(csvField('say "hi"', true)).toBe('"say ""hi"""');
    expect(csvField("a,b", true)).toBe('"a,b"');
    expect(csvField("two\nlines", true)).toBe('"two\nlines"');
    expect(csvField(-3.5, false)).toBe("-3.5");
    expect(csvField("-3.5", true)).toBe("'-3.5");
    expect(csvField(null, false)).toBe("");
  });
});

/** The shape RFC 7946 asks of a FeatureCollection of Points (§3.1.2, §3.2, §3.3, §4), checked by hand. */
function rfc7946Problems(doc: unknown): string[] {
  const p: string[] = [];
  const o = doc as Record<string, unknown>;
  if (o === null || typeof o !== "object") return ["not an object"];
  if (o.type !== "FeatureCollection") p.push("type is not FeatureCollection");
  if ("crs" in o) p.push("a crs member (removed by RFC 7946)");
  if (!Array.isArray(o.features)) return [...p, "features is not an array"];
  o.features.forEach((f: Record<string, unknown>, k: number) => {
    if (f.type !== "Feature") p.push(`feature ${k}: type`);
    if (!("properties" in f) || (f.properties !== null && typeof f.properties !== "object")) p.push(`feature ${k}: properties`);
    if ("id" in f && typeof f.id !== "string" && typeof f.id !== "number") p.push(`feature ${k}: id`);
    const geom = f.geometry as { type?: unknown; coordinates?: unknown } | null;
    if (!geom || geom.type !== "Point" || !Array.isArray(geom.coordinates)) {
      p.push(`feature ${k}: geometry`);
      return;
    }
    const [lon, lat, ...rest] = geom.coordinates as number[];
    if (rest.length > 1 || !Number.isFinite(lon) || !Number.isFinite(lat)) p.push(`feature ${k}: position`);
    if (Math.abs(lon) > 180 || Math.abs(lat) > 90) p.push(`feature ${k}: not longitude, latitude in degrees`);
  });
  return p;
}

describe("GeoJSON (RFC 7946)", () => {
  const fc = targetsToGeoJson(targets, meta);
  const text = JSON.stringify(fc);

  it("is a FeatureCollection of WGS 84 points with the cautions in a foreign member", () => {
    expect(rfc7946Problems(JSON.parse(text))).toEqual([]);
    expect(fc.cautions).toEqual([...CAUTIONS]);
    expect(fc.features.map((f) => f.id)).toEqual(["CT01", "CT02", "CT03"]);
    const f = fc.features[0];
    // RFC 7946 §3.1.1: longitude first
    expect(f.geometry.coordinates).toEqual([Number(targets[0].lon.toFixed(6)), Number(targets[0].lat.toFixed(6))]);
    expect(Object.keys(f.properties)).toEqual(TARGET_FIELDS.map((x) => x.name));
    expect(fc.features[2].properties.horizon_depth_m).toBeNull();
    // UTM zone 30 N has its central meridian at 3° W, so these points lie a little west of it, in Europe's latitudes
    expect(f.geometry.coordinates[0]).toBeGreaterThan(-6);
    expect(f.geometry.coordinates[0]).toBeLessThan(-3);
  });

  it("is read back by the project's own GeoJSON reader", () => {
    const src = readGeoJson(text, DEFAULT_LIMITS);
    expect(src.features).toHaveLength(3);
    expect(src.features[1].properties.waypoint).toBe("CT02");
  });

  it("documents every property in the README", async () => {
    const { readFileSync } = await import("node:fs");
    const readme = readFileSync(new URL("./README.md", import.meta.url), "utf8");
    for (const f of TARGET_FIELDS) expect(readme).toContain(`| \`${f.name}\` |`);
  });
});

describe("GeoPackage (OGC 12-128r18)", () => {
  const dir = mkdtempSync(join(tmpdir(), "lowstand-gpkg-"));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it("writes a GeoPackageBinary point: header, srs_id, little-endian WKB", () => {
    const b = gpkgPointBlob(400_150, 5_599_850, EPSG);
    expect(b.length).toBe(29);
    expect([...b.slice(0, 4)]).toEqual([0x47, 0x50, 0, 1]);
    expect(new DataView(b.buffer).getInt32(4, true)).toBe(EPSG);
    expect(readGpkgGeometry(b, 1)).toEqual({ type: "Point", coordinates: [400_150, 5_599_850] });
  });

  it("is read back by the project's own GeoPackage reader in the project CRS", async () => {
    const bytes = await targetsToGeoPackage(targets, meta, { epsg: EPSG });
    // §1.1.1.1.1: application_id 'GPKG' at byte offset 68 of the SQLite header, big-endian
    expect(new DataView(bytes.buffer, bytes.byteOffset).getUint32(68)).toBe(GPKG_APPLICATION_ID);
    const src = await readGeoPackage(bytes, DEFAULT_LIMITS, { fileName: "t.gpkg", projectEpsg: EPSG });
    expect(src.layer).toBe("core_targets");
    expect(src.crs.epsg).toBe(EPSG);
    expect(src.features).toHaveLength(3);
    expect(src.features[0].geometry).toEqual({ type: "Point", coordinates: [targets[0].x, targets[0].y] });
    expect(src.features[2].properties.status).toBe("cored");
    expect(src.features[2].properties.horizon_depth_m).toBeNull();
  });

  it("passes GDAL's ogrinfo where it is installed", async () => {
    let ogrinfo = "";
    try {
      ogrinfo = execFileSync("sh", ["-c", "command -v ogrinfo"], { encoding: "utf8" }).trim();
    } catch {
      ogrinfo = "";
    }
    if (!ogrinfo) {
      console.warn("ogrinfo is not installed: the GDAL check of the GeoPackage export was skipped (the project's own reader still checked it)");
      return;
    }
    const bytes = await targetsToGeoPackage(targets, meta, { epsg: EPSG });
    const file = join(dir, "targets.gpkg");
    writeFileSync(file, bytes);
    const run = spawnSync(ogrinfo, ["-ro", "-al", "-so", file], { encoding: "utf8" });
    expect(run.status).toBe(0);
    expect(run.stderr).not.toMatch(/warning|error/i); // GDAL's GeoPackage driver checks the tables it reads
    const out = run.stdout;
    expect(out).toMatch(/Layer name: core_targets/);
    expect(out).toMatch(/Geometry: Point/);
    expect(out).toMatch(/Feature Count: 3/);
    expect(out).toMatch(/ID\["EPSG",32630\]|AUTHORITY\["EPSG","32630"\]/);
    const full = execFileSync(ogrinfo, ["-ro", file, "core_targets", "-where", "waypoint = 'CT01'"], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
    expect(full).toMatch(new RegExp(`POINT \\(${targets[0].x} ${targets[0].y}\\)`));
    const cautions = execFileSync(ogrinfo, ["-ro", file, "cautions"], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
    for (const c of CAUTIONS) expect(cautions).toContain(c);
  });
});
