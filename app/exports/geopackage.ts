/**
 * Core targets as a GeoPackage for the GIS team, in the project CRS (OGC GeoPackage Encoding
 * Standard 1.3, OGC 12-128r18), written with sql.js (SQLite compiled to WebAssembly; loaded on first
 * use, as app/evidence/gpkg.ts reads GeoPackages):
 * - `application_id` 'GPKG' and `user_version` 10300 (§1.1.1.1);
 * - gpkg_spatial_ref_sys with the three required rows (EPSG:4326, −1 undefined Cartesian, 0 undefined
 *   geographic; §1.1.2) and the project CRS as srs_id = its EPSG code, organization "EPSG",
 *   organization_coordsys_id = the code. Its `definition` is the text "undefined": the project ships
 *   proj4 definitions (terrain/crs.ts), not WKT, and proj4js cannot write WKT. Readers that know the
 *   EPSG registry (GDAL/QGIS, the project's own reader) resolve the CRS from organization + code; a
 *   reader that needs the WKT itself will see an undefined definition.
 * - gpkg_contents and gpkg_geometry_columns for one Point feature table `core_targets` (z and m
 *   prohibited), and an attributes table `cautions` with the cautions of design §10 and the notes;
 * - geometries as GeoPackageBinary (§2.1.3): "GP", version 0, flags 0x01 (little-endian, no envelope,
 *   not empty, standard), srs_id, then a little-endian WKB Point.
 * No spatial index (the R-tree extension is optional; a target list is small).
 */
import type initSqlJsType from "sql.js";
import { CAUTIONS } from "../cautions.ts";
import { type ExportMeta, type ExportTarget, TARGET_FIELDS, targetRecord } from "./target-fields.ts";

let sqlPromise: ReturnType<typeof initSqlJsType> | null = null;

/** 'GPKG' as a 32-bit integer (§1.1.1.1.1). */
export const GPKG_APPLICATION_ID = 0x47504b47;
/** GeoPackage 1.3.0 (§1.1.1.1.2). */
export const GPKG_USER_VERSION = 10300;

const WGS84_WKT =
  'GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],' +
  'PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AUTHORITY["EPSG","4326"]]';

/**
 * OGC 12-128r18 §2.1.3 (GeoPackageBinary) with an OGC Simple Features WKB Point.
 * A 29-byte blob: header (8 bytes, no envelope) + WKB (21 bytes), little-endian. O(1).
 */
export function gpkgPointBlob(x: number, y: number, srsId: number): Uint8Array {
  const buf = new ArrayBuffer(8 + 21);
  const v = new DataView(buf);
  v.setUint8(0, 0x47); // 'G'
  v.setUint8(1, 0x50); // 'P'
  v.setUint8(2, 0); // version 1
  v.setUint8(3, 0x01); // flags: little-endian, envelope 0, not empty, standard binary
  v.setInt32(4, srsId, true);
  v.setUint8(8, 1); // WKB little-endian
  v.setUint32(9, 1, true); // Point
  v.setFloat64(13, x, true);
  v.setFloat64(21, y, true);
  return new Uint8Array(buf);
}

const SQL_TYPE = { integer: "INTEGER", real: "REAL", text: "TEXT" } as const;

/** "YYYY-MM-DDTHH:MM:SS.SSSZ" as gpkg_contents.last_change requires (§1.1.3.1.1). */
function gpkgTime(iso: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) throw new Error(`"${iso}" is not a time (ISO 8601 expected)`);
  return d.toISOString();
}

export interface GeoPackageOptions {
  /** EPSG code of the project CRS (the CRS of the targets' x, y) */
  epsg: number;
  /** table name of the targets (default core_targets) */
  tableName?: string;
}

/**
 * OGC 12-128r18 (GeoPackage 1.3). The target list as GeoPackage bytes: Points at (x, y) in the
 * project CRS, attributes as TARGET_FIELDS (README.md), cautions and notes in an attributes table.
 * Preconditions: finite x, y; meta.generatedAt an ISO 8601 time. O(targets · fields).
 */
export async function targetsToGeoPackage(targets: readonly ExportTarget[], meta: ExportMeta, opts: GeoPackageOptions): Promise<Uint8Array> {
  sqlPromise ??= import("sql.js").then((m) => (m.default as typeof initSqlJsType)());
  const SQL = await sqlPromise;
  const table = opts.tableName ?? "core_targets";
  const srs = opts.epsg;
  const when = gpkgTime(meta.generatedAt);
  const db = new SQL.Database();
  try {
    db.run(`PRAGMA application_id = ${GPKG_APPLICATION_ID}`);
    db.run(`PRAGMA user_version = ${GPKG_USER_VERSION}`);
    db.run(`CREATE TABLE gpkg_spatial_ref_sys (
      srs_name TEXT NOT NULL, srs_id INTEGER NOT NULL PRIMARY KEY, organization TEXT NOT NULL,
      organization_coordsys_id INTEGER NOT NULL, definition TEXT NOT NULL, description TEXT)`);
    const srsInsert = "INSERT INTO gpkg_spatial_ref_sys VALUES (?, ?, ?, ?, ?, ?)";
    db.run(srsInsert, ["WGS 84 geodetic", 4326, "EPSG", 4326, WGS84_WKT, "longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid"]);
    db.run(srsInsert, ["Undefined cartesian SRS", -1, "NONE", -1, "undefined", "undefined cartesian coordinate reference system"]);
    db.run(srsInsert, ["Undefined geographic SRS", 0, "NONE", 0, "undefined", "undefined geographic coordinate reference system"]);
    if (srs !== 4326)
      db.run(srsInsert, [
        `EPSG:${srs}`,
        srs,
        "EPSG",
        srs,
        "undefined",
        `${meta.crsLabel}; definition left undefined (no WKT available): resolve it from organization EPSG and the code`,
      ]);
    db.run(`CREATE TABLE gpkg_contents (
      table_name TEXT NOT NULL PRIMARY KEY, data_type TEXT NOT NULL, identifier TEXT UNIQUE, description TEXT DEFAULT '',
      last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
      min_x DOUBLE, min_y DOUBLE, max_x DOUBLE, max_y DOUBLE, srs_id INTEGER,
      CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id))`);
    db.run(`CREATE TABLE gpkg_geometry_columns (
      table_name TEXT NOT NULL, column_name TEXT NOT NULL, geometry_type_name TEXT NOT NULL, srs_id INTEGER NOT NULL,
      z TINYINT NOT NULL, m TINYINT NOT NULL,
      CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name), CONSTRAINT uk_gc_table_name UNIQUE (table_name),
      CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
      CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id))`);
    const q = (id: string) => `"${id.replace(/"/g, '""')}"`;
    const cols = TARGET_FIELDS.map((f) => `${q(f.name)} ${SQL_TYPE[f.type]}`).join(", ");
    db.run(`CREATE TABLE ${q(table)} (fid INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, geom POINT, ${cols})`);
    let minX = Infinity;
    let minY = Infinity;
    let maxX = -Infinity;
    let maxY = -Infinity;
    for (const t of targets) {
      if (!Number.isFinite(t.x) || !Number.isFinite(t.y)) throw new Error(`target ${t.waypoint} has no finite position`);
      minX = Math.min(minX, t.x);
      minY = Math.min(minY, t.y);
      maxX = Math.max(maxX, t.x);
      maxY = Math.max(maxY, t.y);
    }
    const has = targets.length > 0;
    db.run("INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change, min_x, min_y, max_x, max_y, srs_id) VALUES (?, 'features', ?, ?, ?, ?, ?, ?, ?, ?)", [
      table,
      meta.title,
      `Core targets. ${CAUTIONS[0]} See the cautions table.`,
      when,
      has ? minX : null,
      has ? minY : null,
      has ? maxX : null,
      has ? maxY : null,
      srs,
    ]);
    db.run("INSERT INTO gpkg_geometry_columns VALUES (?, 'geom', 'POINT', ?, 0, 0)", [table, srs]);
    const insert = db.prepare(`INSERT INTO ${q(table)} (geom, ${TARGET_FIELDS.map((f) => q(f.name)).join(", ")}) VALUES (?${", ?".repeat(TARGET_FIELDS.length)})`);
    try {
      for (const t of targets) {
        const r = targetRecord(t);
        insert.run([gpkgPointBlob(t.x, t.y, srs), ...TARGET_FIELDS.map((f) => r[f.name])]);
      }
    } finally {
      insert.free();
    }
    db.run("CREATE TABLE cautions (id INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, kind TEXT NOT NULL, text TEXT NOT NULL)");
    db.run("INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change) VALUES ('cautions', 'attributes', 'cautions', ?, ?)", [
      "Cautions of the product and notes of this list: read before acting on any target",
      when,
    ]);
    for (const c of CAUTIONS) db.run("INSERT INTO cautions (kind, text) VALUES ('caution', ?)", [c]);
    for (const n of meta.notes ?? []) db.run("INSERT INTO cautions (kind, text) VALUES ('note', ?)", [n]);
    return db.export();
  } finally {
    db.close();
  }
}
