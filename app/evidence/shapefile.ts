/**
 * Zipped Shapefiles, read from the ESRI Shapefile Technical Description (ESRI, July 1998): the .shp
 * main file (100-byte header, big-endian record headers, little-endian content; Point, MultiPoint,
 * PolyLine, Polygon and their Z and M forms), the .dbf attribute table (dBASE III: 32-byte header,
 * 32-byte field descriptors ended by 0x0D, fixed-width records with a deletion flag), the .prj CRS
 * (WKT, through terrain/crs.ts) and the optional .cpg code page. Unzipped with fflate, with the
 * unpacked size checked first (a small zip can hold gigabytes).
 */
import { unzipSync } from "fflate";
import { type SourceCrs, sourceFromEpsg, sourceFromWkt } from "./crs-transform";
import { EvidenceError, type EvidenceLimits, type ParseOptions } from "./types";
import type { RawFeature, VectorSource } from "./vectors";

/** The largest unpacked zip Lowstand opens (sum of the members it reads). */
export const MAX_UNZIPPED_BYTES = 1 << 30;

/** ESRI-style .prj names without an EPSG code that map to one (UTM zones on WGS 84 and ETRS89). */
function epsgFromEsriName(wkt: string): number | null {
  const m = /PROJCS\s*\[\s*"(WGS_1984|ETRS_1989)_UTM_Zone_(\d{1,2})([NS])"/i.exec(wkt);
  if (!m) return null;
  const zone = Number(m[2]);
  if (m[1].toUpperCase() === "WGS_1984") return (m[3].toUpperCase() === "N" ? 32600 : 32700) + zone;
  return m[3].toUpperCase() === "N" ? 25800 + zone : null;
}

function crsFromPrj(prj: string | null, opts: ParseOptions): { crs: SourceCrs; how: string } {
  if (prj === null) {
    if (opts.declaredEpsg !== undefined) return { crs: sourceFromEpsg(opts.declaredEpsg), how: `declared EPSG:${opts.declaredEpsg} (no .prj in the zip)` };
    throw new EvidenceError("the zip has no .prj file, so the Shapefile's CRS is unknown: add the .prj, or declare the EPSG code when uploading");
  }
  const text = prj.trim();
  const esri = epsgFromEsriName(text);
  try {
    const crs = sourceFromWkt(text);
    return { crs, how: crs.geographic ? `.prj (${crs.label})` : `.prj WKT (EPSG:${crs.epsg})` };
  } catch (e) {
    if (esri !== null) return { crs: sourceFromEpsg(esri), how: `.prj ESRI name (EPSG:${esri})` };
    if (opts.declaredEpsg !== undefined) return { crs: sourceFromEpsg(opts.declaredEpsg), how: `declared EPSG:${opts.declaredEpsg} (the .prj names no EPSG code)` };
    throw e;
  }
}

function signedArea(ring: number[][]): number {
  let a = 0;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) a += (ring[i][0] - ring[j][0]) * (ring[i][1] + ring[j][1]);
  return a / 2; // Σ (x₂ − x₁)(y₂ + y₁) over edges: > 0 for a clockwise ring (y up)
}

function inRing(p: number[], ring: number[][]): boolean {
  let inside = false;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
    const [xi, yi] = ring[i];
    const [xj, yj] = ring[j];
    if (yi > p[1] !== yj > p[1] && p[0] < ((xj - xi) * (p[1] - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Shapefile rings → polygons: clockwise rings are outer rings, the others holes of the outer ring containing them. */
function ringsToPolygons(rings: number[][][]): number[][][][] {
  const outers: number[][][][] = [];
  const holes: number[][][] = [];
  for (const r of rings) (signedArea(r) > 0 ? outers.push([r]) : holes.push(r));
  if (outers.length === 0) return rings.map((r) => [r]); // wrongly wound: treat every ring as an outer ring
  for (const h of holes) {
    const owner = outers.find((o) => inRing(h[0], o[0])) ?? outers[0];
    owner.push(h);
  }
  return outers;
}

/** Parses a .shp main file into geometries (null for null shapes). */
export function readShp(shp: Uint8Array, maxFeatures: number): RawFeature["geometry"][] {
  if (shp.length < 100) throw new EvidenceError(`the .shp file is ${shp.length} bytes: too short for its 100-byte header`, { byte: shp.length });
  const v = new DataView(shp.buffer, shp.byteOffset, shp.byteLength);
  if (v.getInt32(0, false) !== 9994) throw new EvidenceError("the .shp file does not start with the Shapefile code 9994: it is damaged or not a Shapefile", { byte: 0 });
  const out: RawFeature["geometry"][] = [];
  let o = 100;
  const declared = v.getInt32(24, false) * 2;
  if (declared > shp.length) {
    throw new EvidenceError(`the .shp header says the file is ${declared} bytes, but it has ${shp.length}: the file is truncated`, { byte: shp.length });
  }
  const end = declared;
  while (o + 8 <= end) {
    const len = v.getInt32(o + 4, false) * 2;
    const c = o + 8;
    const feature = out.length + 1;
    if (c + len > shp.length || len < 4) throw new EvidenceError(`the .shp record ${feature} runs past the end of the file: the file is truncated`, { byte: o, feature });
    if (out.length >= maxFeatures) throw new EvidenceError(`the Shapefile has more than ${maxFeatures} features, over the limit`);
    const type = v.getInt32(c, true);
    const base = type % 10;
    const pt = (at: number) => [v.getFloat64(at, true), v.getFloat64(at + 8, true)];
    if (type === 0) out.push(null);
    else if (base === 1) out.push({ type: "Point", coordinates: pt(c + 4) });
    else if (base === 8) {
      const n = v.getInt32(c + 36, true);
      if (40 + n * 16 > len) throw new EvidenceError(`the .shp record ${feature} declares ${n} points but is shorter`, { feature });
      out.push({ type: "MultiPoint", coordinates: Array.from({ length: n }, (_, i) => pt(c + 40 + i * 16)) });
    } else if (base === 3 || base === 5) {
      const parts = v.getInt32(c + 36, true);
      const n = v.getInt32(c + 40, true);
      const p0 = c + 44 + parts * 4;
      if (parts < 0 || n < 0 || 44 + parts * 4 + n * 16 > len) throw new EvidenceError(`the .shp record ${feature} declares ${parts} parts and ${n} points but is shorter`, { feature });
      const lines: number[][][] = [];
      for (let k = 0; k < parts; k++) {
        const from = v.getInt32(c + 44 + k * 4, true);
        const to = k + 1 < parts ? v.getInt32(c + 44 + (k + 1) * 4, true) : n;
        const l: number[][] = [];
        for (let i = from; i < to; i++) l.push(pt(p0 + i * 16));
        lines.push(l);
      }
      if (base === 3) out.push(lines.length === 1 ? { type: "LineString", coordinates: lines[0] } : { type: "MultiLineString", coordinates: lines });
      else {
        const polys = ringsToPolygons(lines);
        out.push(polys.length === 1 ? { type: "Polygon", coordinates: polys[0] } : { type: "MultiPolygon", coordinates: polys });
      }
    } else throw new EvidenceError(`the .shp record ${feature} has shape type ${type} (multipatch or unknown), which Lowstand does not read`, { feature });
    o = c + len;
  }
  return out;
}

/** Parses a dBASE III .dbf table: one properties object per record; `null` for deleted records. */
export function readDbf(dbf: Uint8Array, encoding: string): (Record<string, unknown> | null)[] {
  if (dbf.length < 32) throw new EvidenceError("the .dbf file is too short for its header: it is truncated");
  const v = new DataView(dbf.buffer, dbf.byteOffset, dbf.byteLength);
  const n = v.getUint32(4, true);
  const headerLen = v.getUint16(8, true);
  const recLen = v.getUint16(10, true);
  const fields: { name: string; type: string; off: number; len: number }[] = [];
  let off = 1;
  const latin1 = new TextDecoder("latin1");
  let dec: TextDecoder;
  try {
    dec = new TextDecoder(encoding);
  } catch {
    dec = new TextDecoder("utf-8");
  }
  for (let p = 32; p + 32 <= headerLen && dbf[p] !== 0x0d; p += 32) {
    const nameBytes = dbf.subarray(p, p + 11);
    const z = nameBytes.indexOf(0);
    const name = latin1.decode(z >= 0 ? nameBytes.subarray(0, z) : nameBytes).trim();
    const len = dbf[p + 16];
    fields.push({ name, type: String.fromCharCode(dbf[p + 11]), off, len });
    off += len;
  }
  if (headerLen + n * recLen > dbf.length) throw new EvidenceError(`the .dbf declares ${n} records but is shorter: it is truncated`);
  const out: (Record<string, unknown> | null)[] = [];
  for (let r = 0; r < n; r++) {
    const at = headerLen + r * recLen;
    if (dbf[at] === 0x2a) {
      out.push(null);
      continue;
    }
    const props: Record<string, unknown> = {};
    for (const f of fields) {
      const raw = dec.decode(dbf.subarray(at + f.off, at + f.off + f.len)).trim();
      if (f.type === "N" || f.type === "F") props[f.name] = raw === "" || /^\*+$/.test(raw) ? null : Number(raw);
      else if (f.type === "L") props[f.name] = /^[YyTt]$/.test(raw) ? true : /^[NnFf]$/.test(raw) ? false : null;
      else props[f.name] = raw === "" ? null : raw;
    }
    out.push(props);
  }
  return out;
}

/** Reads the one Shapefile in a zip (.shp + .dbf, .prj for the CRS). */
export function readShapefileZip(bytes: Uint8Array, limits: EvidenceLimits, opts: ParseOptions): VectorSource {
  let unpacked = 0;
  let tooBig = false;
  let files: Record<string, Uint8Array>;
  try {
    files = unzipSync(bytes, {
      filter: (f) => {
        if (f.name.startsWith("__MACOSX/") || /(^|\/)\._/.test(f.name)) return false;
        if (!/\.(shp|shx|dbf|prj|cpg)$/i.test(f.name)) return false;
        unpacked += f.originalSize;
        if (unpacked > MAX_UNZIPPED_BYTES) tooBig = true;
        return !tooBig;
      },
    });
  } catch (e) {
    throw new EvidenceError(`the zip could not be opened (${(e as Error).message}): it may be truncated or damaged`);
  }
  if (tooBig) throw new EvidenceError(`the zip unpacks to more than ${MAX_UNZIPPED_BYTES / 2 ** 20} MiB: upload a smaller Shapefile`);
  const names = Object.keys(files);
  const shps = names.filter((n) => /\.shp$/i.test(n));
  if (shps.length === 0) throw new EvidenceError(`the zip holds no .shp file${names.length ? ` (it has ${names.join(", ")})` : ""}`);
  if (shps.length > 1) throw new EvidenceError(`the zip holds ${shps.length} Shapefiles (${shps.join(", ")}): upload one per zip`);
  const stem = shps[0].slice(0, -4);
  const find = (ext: string) => names.find((n) => n.slice(0, -4).toLowerCase() === stem.toLowerCase() && n.toLowerCase().endsWith(ext));
  const dbfName = find(".dbf");
  if (!dbfName) throw new EvidenceError(`the zip has ${shps[0]} but no matching .dbf (the attribute table): add it`);
  const prjName = find(".prj");
  const cpgName = find(".cpg");
  const encoding = cpgName ? new TextDecoder("latin1").decode(files[cpgName]).trim() || "utf-8" : "utf-8";
  const geoms = readShp(files[shps[0]], limits.maxFeatures);
  const props = readDbf(files[dbfName], /^(utf-?8|65001)$/i.test(encoding) ? "utf-8" : encoding.replace(/^(\d+)$/, "windows-$1"));
  if (props.length !== geoms.length) {
    throw new EvidenceError(`${shps[0]} has ${geoms.length} shapes but ${dbfName} has ${props.length} records: the files do not belong together`);
  }
  const { crs, how } = crsFromPrj(prjName ? new TextDecoder("utf-8").decode(files[prjName]) : null, opts);
  const features: RawFeature[] = [];
  geoms.forEach((g, i) => {
    const p = props[i];
    if (p === null) return; // deleted record
    features.push({ geometry: g, properties: p, index: i + 1 });
  });
  return { features, crs, crsSource: how, layer: stem.split("/").pop(), notes: [] };
}
