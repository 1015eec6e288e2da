/**
 * GeoPackage feature tables (OGC GeoPackage Encoding Standard 1.3, OGC 12-128r18), read with sql.js
 * (SQLite compiled to WebAssembly; no native build). The geometry blob is the GeoPackage header
 * ("GP", version, flags, srs_id, optional envelope; §2.1.3) followed by WKB (wkb.ts). The CRS comes
 * from gpkg_spatial_ref_sys: an EPSG organisation code, else the WKT definition via terrain/crs.ts.
 */
import type initSqlJsType from "sql.js";
import { type SourceCrs, sourceFromEpsg, sourceFromWkt } from "./crs-transform";
import { EvidenceError, type EvidenceLimits, type ParseOptions } from "./types";
import type { RawFeature, VectorSource } from "./vectors";
import { readWkb } from "./wkb";

let sqlPromise: ReturnType<typeof initSqlJsType> | null = null;

/** Envelope sizes in bytes by the flags' envelope indicator (§2.1.3.1.1). */
const ENVELOPE_BYTES = [0, 32, 48, 48, 64];

/** Decodes a GeoPackage geometry blob to a GeoJSON-style geometry (null for an empty geometry). */
export function readGpkgGeometry(blob: Uint8Array, feature: number): RawFeature["geometry"] {
  const where = `feature ${feature}: `;
  if (blob.length < 8 || blob[0] !== 0x47 || blob[1] !== 0x50) throw new EvidenceError(`${where}the geometry is not a GeoPackage geometry blob (no "GP" header)`, { feature });
  const flags = blob[3];
  const envelope = (flags >> 1) & 7;
  if (envelope > 4) throw new EvidenceError(`${where}the geometry header has an invalid envelope code ${envelope}`, { feature });
  if (flags & 0x10) return null; // empty geometry
  const start = 8 + ENVELOPE_BYTES[envelope];
  return readWkb(blob, start, where).geometry as RawFeature["geometry"];
}

function sourceFromSrs(org: string | null, code: number | null, definition: string | null, srsId: number, opts: ParseOptions): { crs: SourceCrs; how: string } {
  if (srsId === -1 || srsId === 0) {
    if (opts.declaredEpsg !== undefined) return { crs: sourceFromEpsg(opts.declaredEpsg), how: `declared EPSG:${opts.declaredEpsg} (the GeoPackage's srs_id ${srsId} is undefined)` };
    throw new EvidenceError(`the GeoPackage layer's CRS is undefined (srs_id ${srsId}): declare the EPSG code of its coordinates when uploading`);
  }
  if (org && org.toUpperCase() === "EPSG" && code) return { crs: sourceFromEpsg(code), how: `gpkg_spatial_ref_sys: EPSG:${code}` };
  if (definition && definition !== "undefined") {
    const crs = sourceFromWkt(definition);
    return { crs, how: `gpkg_spatial_ref_sys WKT (${crs.label})` };
  }
  throw new EvidenceError(`the GeoPackage's CRS (srs_id ${srsId}) has no EPSG code or definition: declare the EPSG code when uploading`);
}

const q = (id: string) => `"${id.replace(/"/g, '""')}"`;

/** Reads the first feature table of a GeoPackage (others are named in the notes). */
export async function readGeoPackage(bytes: Uint8Array, limits: EvidenceLimits, opts: ParseOptions): Promise<VectorSource> {
  // loaded on first use, so importing the readers does not load the WebAssembly SQLite
  sqlPromise ??= import("sql.js").then((m) => (m.default as typeof initSqlJsType)());
  const SQL = await sqlPromise;
  let db;
  try {
    db = new SQL.Database(bytes);
    db.exec("PRAGMA schema_version");
  } catch (e) {
    throw new EvidenceError(`the file is not a readable GeoPackage/SQLite database (${(e as Error).message}): it may be truncated or damaged`);
  }
  try {
    let layers: string[];
    try {
      const r = db.exec("SELECT table_name FROM gpkg_contents WHERE data_type = 'features' ORDER BY table_name");
      layers = r.length ? r[0].values.map((v) => String(v[0])) : [];
    } catch (e) {
      throw new EvidenceError(`the file is an SQLite database but not a GeoPackage (no gpkg_contents table: ${(e as Error).message})`);
    }
    if (layers.length === 0) throw new EvidenceError("the GeoPackage has no feature table (it may hold only tiles or attributes)");
    const layer = layers[0];
    const notes: string[] = [];
    if (layers.length > 1) notes.push(`the GeoPackage has ${layers.length} feature tables; only "${layer}" was read (others: ${layers.slice(1).join(", ")})`);
    const gc = db.exec("SELECT column_name, srs_id FROM gpkg_geometry_columns WHERE table_name = ?", [layer]);
    if (!gc.length) throw new EvidenceError(`the GeoPackage layer "${layer}" has no row in gpkg_geometry_columns`);
    const geomCol = String(gc[0].values[0][0]);
    const srsId = Number(gc[0].values[0][1]);
    const srs = db.exec("SELECT organization, organization_coordsys_id, definition FROM gpkg_spatial_ref_sys WHERE srs_id = ?", [srsId]);
    if (!srs.length) throw new EvidenceError(`the GeoPackage layer "${layer}" uses srs_id ${srsId}, which gpkg_spatial_ref_sys does not define`);
    const [org, code, def] = srs[0].values[0] as [string | null, number | null, string | null];
    const { crs, how } = sourceFromSrs(org, code, def, srsId, opts);
    const count = Number(db.exec(`SELECT COUNT(*) FROM ${q(layer)}`)[0].values[0][0]);
    if (count > limits.maxFeatures) throw new EvidenceError(`the GeoPackage layer "${layer}" has ${count} features, over the limit of ${limits.maxFeatures}`);
    const stmt = db.prepare(`SELECT * FROM ${q(layer)}`);
    const features: RawFeature[] = [];
    try {
      let index = 0;
      while (stmt.step()) {
        index++;
        const row = stmt.getAsObject();
        const blob = row[geomCol];
        const properties: Record<string, unknown> = {};
        for (const [k, v] of Object.entries(row)) if (k !== geomCol && !(v instanceof Uint8Array)) properties[k] = v;
        const geometry = blob instanceof Uint8Array ? readGpkgGeometry(blob, index) : null;
        features.push({ geometry, properties, index });
      }
    } finally {
      stmt.free();
    }
    return { features, crs, crsSource: how, layer, notes };
  } finally {
    db.close();
  }
}
