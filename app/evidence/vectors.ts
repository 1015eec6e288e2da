/**
 * Vector uploads — lease blocks, survey area, open-ocean boundary, exclusions, development footprint,
 * interpretations, known sites as points, survey lines as lines — from GeoJSON (RFC 7946), GeoPackage
 * or a zipped Shapefile. Geometries are checked, counted against the caps, transformed to the project
 * CRS with proj4js (the transformation recorded), and their attributes checked like CSV rows.
 */
import type { Crs } from "../terrain/crs";
import { type ColumnSpec, type CsvTable, Problems, RowReader, alternateColumns, findColumns, normaliseName, words } from "./csv";
import { CONFIDENCE, LINE_COLUMNS, SITE_COLUMNS } from "./columns";
import { type SourceCrs, WGS84, extentOf, makeTransformer, plausibleIn, projectCrs, sourceFromEpsg } from "./crs-transform";
import { readGeoPackage } from "./gpkg";
import { readShapefileZip } from "./shapefile";
import { lineSummary, siteAttributes, siteWarnings } from "./tables";
import { decodeText } from "./text";
import { EvidenceError, type EvidenceFeature, type EvidenceFormat, type EvidenceKind, type EvidenceLimits, type ParseOptions, type ParsedEvidence } from "./types";

/** Features as read from a file, coordinates still in the source CRS. `index` is 1-based. */
export interface RawFeature {
  geometry: { type: string; coordinates: unknown } | null;
  properties: Record<string, unknown>;
  index: number;
}

export interface VectorSource {
  features: RawFeature[];
  crs: SourceCrs;
  /** where the CRS came from, e.g. "RFC 7946 (WGS 84)", "gpkg_spatial_ref_sys srs_id 32631", ".prj WKT" */
  crsSource: string;
  layer?: string;
  notes: string[];
}

const GEOMETRY_TYPES = ["Point", "MultiPoint", "LineString", "MultiLineString", "Polygon", "MultiPolygon"];

/** Depth of position nesting for each geometry type. */
const NESTING: Record<string, number> = { Point: 0, MultiPoint: 1, LineString: 1, MultiLineString: 2, Polygon: 2, MultiPolygon: 3 };

/**
 * Checks one geometry's structure (RFC 7946 §3.1): positions of ≥ 2 finite numbers, lines of ≥ 2
 * positions, closed polygon rings of ≥ 4 positions. Returns the number of positions, or -1 after
 * reporting a problem. O(positions).
 */
export function checkGeometry(g: RawFeature["geometry"], f: number, problems: Problems): number {
  if (g === null || typeof g !== "object") {
    problems.add(`feature ${f}: has no geometry`, { feature: f });
    return -1;
  }
  if (g.type === "GeometryCollection") {
    problems.add(`feature ${f}: is a GeometryCollection; split it into one feature per geometry`, { feature: f });
    return -1;
  }
  if (!GEOMETRY_TYPES.includes(g.type)) {
    problems.add(`feature ${f}: geometry type '${String(g.type)}' is not a GeoJSON geometry type`, { feature: f });
    return -1;
  }
  let count = 0;
  let bad = "";
  const pos = (p: unknown): void => {
    if (!Array.isArray(p) || p.length < 2 || typeof p[0] !== "number" || typeof p[1] !== "number" || !Number.isFinite(p[0]) || !Number.isFinite(p[1])) {
      if (!bad) bad = `position ${JSON.stringify(p)?.slice(0, 40)} is not [x, y] numbers`;
      return;
    }
    count++;
  };
  const line = (l: unknown, min: number, ring: boolean): void => {
    if (!Array.isArray(l)) {
      if (!bad) bad = "coordinates are not nested as its type needs";
      return;
    }
    if (l.length < min) {
      if (!bad) bad = ring ? `a polygon ring has ${l.length} positions; it needs at least 4 (closed)` : `a line has ${l.length} position${l.length === 1 ? "" : "s"}; it needs at least 2`;
      return;
    }
    for (const p of l) pos(p);
    if (ring && !bad) {
      const a = l[0] as number[];
      const b = l[l.length - 1] as number[];
      if (a[0] !== b[0] || a[1] !== b[1]) bad = "a polygon ring is not closed (its last position must repeat the first)";
    }
  };
  const c = g.coordinates;
  const arr = (v: unknown): unknown[] => {
    if (Array.isArray(v)) return v;
    if (!bad) bad = "coordinates are not nested as its type needs";
    return [];
  };
  switch (g.type) {
    case "Point":
      pos(c);
      break;
    case "MultiPoint":
      for (const p of arr(c)) pos(p);
      break;
    case "LineString":
      line(c, 2, false);
      break;
    case "MultiLineString":
      for (const l of arr(c)) line(l, 2, false);
      break;
    case "Polygon":
      for (const r of arr(c)) line(r, 4, true);
      if (!bad && arr(c).length === 0) bad = "a polygon has no rings";
      break;
    case "MultiPolygon":
      for (const p of arr(c)) for (const r of arr(p)) line(r, 4, true);
      break;
  }
  if (bad) {
    problems.add(`feature ${f}: ${g.type}: ${bad}`, { feature: f });
    return -1;
  }
  return count;
}

/** Applies fn to every position of a (checked) geometry, in place. */
export function eachPosition(g: { type: string; coordinates: unknown }, fn: (p: number[]) => void): void {
  const depth = NESTING[g.type];
  const walk = (v: unknown, d: number): void => {
    if (d === 0) fn(v as number[]);
    else for (const w of v as unknown[]) walk(w, d - 1);
  };
  walk(g.coordinates, depth);
}

function crsFromGeoJsonMember(crs: unknown): SourceCrs | null {
  if (!crs || typeof crs !== "object") return null;
  const name = (crs as { properties?: { name?: unknown } }).properties?.name;
  if (typeof name !== "string") throw new EvidenceError('the GeoJSON "crs" member names no CRS: remove it (RFC 7946 GeoJSON is WGS 84) or give "EPSG:<code>"');
  if (/CRS84$/i.test(name)) return WGS84;
  const m = /EPSG:{1,2}(?:[\d.]*:)?(\d+)$/i.exec(name);
  if (!m) throw new EvidenceError(`the GeoJSON "crs" member names "${name}", which Lowstand cannot identify: use WGS 84 (RFC 7946) or an EPSG code`);
  return sourceFromEpsg(Number(m[1]));
}

function jsonErrorAt(text: string, e: Error): string {
  const m = /position (\d+)/.exec(e.message);
  if (!m) return e.message;
  const p = Number(m[1]);
  const before = text.slice(0, p);
  const line = before.split("\n").length;
  const col = p - before.lastIndexOf("\n");
  return `${e.message.replace(/ in JSON at position \d+.*$/, "")} at line ${line}, column ${col}`;
}

/** Reads a GeoJSON text: a FeatureCollection, a Feature or a bare geometry. */
export function readGeoJson(text: string, limits: EvidenceLimits): VectorSource {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new EvidenceError(`the GeoJSON is not valid JSON: ${jsonErrorAt(text, e as Error)}`);
  }
  if (!doc || typeof doc !== "object" || Array.isArray(doc)) throw new EvidenceError("the GeoJSON is not an object with a \"type\" (e.g. a FeatureCollection)");
  const d = doc as { type?: unknown; features?: unknown; crs?: unknown; geometry?: unknown; properties?: unknown };
  let list: unknown[];
  if (d.type === "FeatureCollection") {
    if (!Array.isArray(d.features)) throw new EvidenceError('the GeoJSON FeatureCollection has no "features" array');
    list = d.features;
  } else if (d.type === "Feature") list = [d];
  else if (typeof d.type === "string" && (GEOMETRY_TYPES.includes(d.type) || d.type === "GeometryCollection")) list = [{ type: "Feature", geometry: d, properties: {} }];
  else throw new EvidenceError(`the GeoJSON's type is ${JSON.stringify(d.type)}; expected "FeatureCollection", "Feature" or a geometry`);
  if (list.length > limits.maxFeatures) throw new EvidenceError(`the GeoJSON has ${list.length} features, over the limit of ${limits.maxFeatures}`);
  const features: RawFeature[] = [];
  const problems = new Problems("GeoJSON");
  list.forEach((f, k) => {
    const ff = f as { type?: unknown; geometry?: unknown; properties?: unknown };
    if (!ff || typeof ff !== "object" || ff.type !== "Feature") {
      problems.add(`feature ${k + 1}: is not a GeoJSON Feature (type ${JSON.stringify(ff?.type)})`, { feature: k + 1 });
      return;
    }
    const props = ff.properties && typeof ff.properties === "object" && !Array.isArray(ff.properties) ? (ff.properties as Record<string, unknown>) : {};
    features.push({ geometry: (ff.geometry ?? null) as RawFeature["geometry"], properties: props, index: k + 1 });
  });
  problems.throwIfAny();
  const member = crsFromGeoJsonMember(d.crs);
  return {
    features,
    crs: member ?? WGS84,
    crsSource: member ? 'the GeoJSON "crs" member (pre-RFC 7946 GeoJSON)' : "RFC 7946 (GeoJSON is WGS 84 longitude/latitude)",
    notes: [],
  };
}

/** Which geometry types each vector kind takes. */
const KIND_GEOMETRIES: Partial<Record<EvidenceKind, string[]>> = {
  lease_blocks: ["Polygon", "MultiPolygon"],
  survey_area: ["Polygon", "MultiPolygon"],
  dredging_areas: ["Polygon", "MultiPolygon"],
  ocean_boundary: ["LineString", "MultiLineString", "Polygon", "MultiPolygon"],
  exclusions: GEOMETRY_TYPES,
  development_footprint: GEOMETRY_TYPES,
  interpretations: GEOMETRY_TYPES,
  known_sites: ["Point"],
  survey_lines: ["LineString", "MultiLineString"],
};

export const EXCLUSION_KINDS = words(["cable", "pipeline", "wreck", "anomaly", "turbine", "anchor", "other"] as const, {
  power_cable: "cable",
  telecom_cable: "cable",
  pipe: "pipeline",
  obstruction: "anomaly",
  anchor_pattern: "anchor",
  foundation: "turbine",
});
export const INTERPRETATION_KINDS = words(
  ["palaeochannel", "channel_fill", "peat_reflector", "gas_blanking", "no_penetration", "anomaly_archaeological"] as const,
  { paleochannel: "palaeochannel", channel: "palaeochannel", fill: "channel_fill", peat: "peat_reflector", gas: "gas_blanking", acoustic_blanking: "gas_blanking", no_data: "no_penetration", archaeological_anomaly: "anomaly_archaeological" },
);

const ATTRIBUTE_COLUMNS: Partial<Record<EvidenceKind, ColumnSpec[]>> = {
  lease_blocks: [{ key: "name", names: ["name", "block_id", "block", "id", "lease_id"] }],
  survey_area: [{ key: "name", names: ["name", "id", "area"] }],
  dredging_areas: [
    { key: "name", names: ["name", "id", "area", "licence", "license", "area_id"] },
    { key: "method", names: ["method", "activity", "kind", "type"] },
    { key: "years", names: ["years", "period", "worked"] },
  ],
  ocean_boundary: [{ key: "name", names: ["name", "id"] }],
  exclusions: [
    { key: "kind", names: ["kind", "type", "feature_type"], required: true },
    { key: "bufferM", names: ["buffer_m", "buffer", "buffer_metres"], required: true },
    { key: "name", names: ["name", "id"] },
  ],
  development_footprint: [
    { key: "impactDepthM", names: ["impact_depth_m", "impact_depth", "depth_of_impact_m"], required: true },
    { key: "assetId", names: ["asset_id", "asset", "name", "id"] },
    { key: "kind", names: ["kind", "type", "asset_type"] },
    { key: "bufferM", names: ["buffer_m", "buffer"] },
  ],
  interpretations: [
    { key: "kind", names: ["kind", "type", "interpretation"], required: true },
    { key: "depthM", names: ["depth_m", "depth_below_seabed_m", "depth"] },
    { key: "ageKa", names: ["age_ka", "age"] },
    { key: "confidence", names: ["confidence"] },
    { key: "interpreter", names: ["interpreter", "interpreted_by", "author"] },
  ],
};

/** Feature properties as a CsvTable, so the CSV row checks serve vector attributes too. */
export function propertiesTable(features: RawFeature[]): CsvTable {
  const header: string[] = [];
  const seen = new Set<string>();
  for (const f of features) for (const k of Object.keys(f.properties)) if (!seen.has(k)) (seen.add(k), header.push(k));
  const records = features.map((f) =>
    header.map((h) => {
      const v = f.properties[h];
      if (v === null || v === undefined) return "";
      if (typeof v === "object") return JSON.stringify(v);
      return String(v);
    }),
  );
  return { header, keys: header.map(normaliseName), delimiter: ",", records, lines: features.map((f) => f.index), headerLine: 0, unit: "feature" };
}

/**
 * Transforms every geometry to the project CRS (in place), checking positions; returns the
 * description. Plausibility in the project CRS is checked on the corners of the whole extent, and
 * feature by feature (their extents' corners) only when that fails. O(vertices) projections.
 */
function transformFeatures(src: VectorSource, project: Crs, problems: Problems): string {
  const t = makeTransformer(src.crs, project);
  const ok = plausibleIn(project);
  const boxes = new Float64Array(src.features.length * 4);
  let any = false;
  src.features.forEach((f, k) => {
    let minX = Infinity;
    let minY = Infinity;
    let maxX = -Infinity;
    let maxY = -Infinity;
    let reported = false;
    if (f.geometry) {
      eachPosition(f.geometry, (p) => {
        if (reported) return;
        if (src.crs.geographic && (Math.abs(p[0]) > 180 || Math.abs(p[1]) > 90)) {
          problems.add(
            `feature ${f.index}: position (${p[0]}, ${p[1]}) is not longitude/latitude, but ${src.crsSource} says it should be: export the file as WGS 84, or give its CRS`,
            { feature: f.index },
          );
          reported = true;
          return;
        }
        const [x, y] = t.one(p[0], p[1]);
        if (!Number.isFinite(x) || !Number.isFinite(y)) {
          problems.add(`feature ${f.index}: position (${p[0]}, ${p[1]}) cannot be transformed to the project CRS EPSG:${project.epsg}`, { feature: f.index });
          reported = true;
          return;
        }
        p[0] = x;
        p[1] = y;
        if (p.length > 2) p.length = 2;
        if (x < minX) minX = x;
        if (x > maxX) maxX = x;
        if (y < minY) minY = y;
        if (y > maxY) maxY = y;
      });
    }
    boxes.set([minX, minY, maxX, maxY], k * 4);
    if (minX <= maxX) any = true;
  });
  if (!any || problems.any) return t.description;
  const corners = (b: ArrayLike<number>, o: number) => ok(b[o], b[o + 1]) && ok(b[o], b[o + 3]) && ok(b[o + 2], b[o + 1]) && ok(b[o + 2], b[o + 3]);
  let gx0 = Infinity;
  let gy0 = Infinity;
  let gx1 = -Infinity;
  let gy1 = -Infinity;
  for (let k = 0; k < src.features.length; k++) {
    if (!(boxes[k * 4] <= boxes[k * 4 + 2])) continue;
    gx0 = Math.min(gx0, boxes[k * 4]);
    gy0 = Math.min(gy0, boxes[k * 4 + 1]);
    gx1 = Math.max(gx1, boxes[k * 4 + 2]);
    gy1 = Math.max(gy1, boxes[k * 4 + 3]);
  }
  if (corners([gx0, gy0, gx1, gy1], 0)) return t.description;
  src.features.forEach((f, k) => {
    if (boxes[k * 4] <= boxes[k * 4 + 2] && !corners(boxes, k * 4)) {
      problems.add(`feature ${f.index}: lies at no plausible place in the project CRS EPSG:${project.epsg} (x ${boxes[k * 4].toFixed(0)}–${boxes[k * 4 + 2].toFixed(0)}, y ${boxes[k * 4 + 1].toFixed(0)}–${boxes[k * 4 + 3].toFixed(0)}): is its CRS right?`, { feature: f.index });
    }
  });
  return t.description;
}

function geometryExtent(features: EvidenceFeature[]): [number, number, number, number] | null {
  const xs: number[] = [];
  const ys: number[] = [];
  for (const f of features) eachPosition(f.geometry, (p) => (xs.push(p[0]), ys.push(p[1])));
  return extentOf(xs, ys);
}

export async function parseVectorEvidence(kind: EvidenceKind, format: EvidenceFormat, bytes: Uint8Array, opts: ParseOptions, limits: EvidenceLimits): Promise<ParsedEvidence> {
  const warnings: string[] = [];
  const project = projectCrs(opts.projectEpsg);
  let src: VectorSource;
  if (format === "geojson") src = readGeoJson(decodeText(bytes, "GeoJSON", warnings), limits);
  else if (format === "gpkg") src = await readGeoPackage(bytes, limits, opts);
  else src = readShapefileZip(bytes, limits, opts);
  warnings.push(...src.notes);
  const allowed = KIND_GEOMETRIES[kind];
  if (!allowed) throw new EvidenceError(`a ${kind.replace(/_/g, " ")} upload is not a vector file`);
  if (src.features.length === 0) throw new EvidenceError(`the file holds no features${src.layer ? ` (layer ${src.layer})` : ""}`);
  if (src.features.length > limits.maxFeatures) throw new EvidenceError(`the file has ${src.features.length} features, over the limit of ${limits.maxFeatures}`);

  const problems = new Problems(format === "geojson" ? "GeoJSON" : format === "gpkg" ? "GeoPackage" : "Shapefile");
  let vertices = 0;
  for (const f of src.features) {
    const n = checkGeometry(f.geometry, f.index, problems);
    if (n < 0) continue;
    vertices += n;
    if (vertices > limits.maxVertices) {
      throw new EvidenceError(`the file has more than ${limits.maxVertices} vertices (over the limit at feature ${f.index}): simplify the geometries first`, { feature: f.index });
    }
    if (!allowed.includes(f.geometry!.type)) {
      problems.add(`feature ${f.index}: is a ${f.geometry!.type}; ${kind.replace(/_/g, " ")} must be ${allowed.join(" or ")}`, { feature: f.index });
    }
  }
  problems.throwIfAny();
  const transformation = transformFeatures(src, project, problems);
  problems.throwIfAny();

  const table = propertiesTable(src.features);
  const what = kind.replace(/_/g, " ");
  const out: EvidenceFeature[] = [];
  const summary: Record<string, unknown> = { vertices, crsSource: src.crsSource, transformation, layer: src.layer ?? null };
  if (kind === "known_sites") {
    const cols = findColumns(table, SITE_COLUMNS, what);
    const rr = new RowReader(table, cols, problems, alternateColumns(table, SITE_COLUMNS));
    const defaults = { precision: 0, context: 0 };
    const seen = new Map<string, number>();
    src.features.forEach((f, k) => {
      rr.at(k);
      const a = siteAttributes(rr, opts, defaults);
      if (a.siteId) {
        const prev = seen.get(a.siteId as string);
        if (prev !== undefined) rr.problem(`site id '${a.siteId}' is used twice (also feature ${prev})`, rr.name("siteId"));
        seen.set(a.siteId as string, f.index);
      }
      const [x, y] = f.geometry!.coordinates as number[];
      if (opts.withinExtent && (x < opts.withinExtent[0] || x > opts.withinExtent[2] || y < opts.withinExtent[1] || y > opts.withinExtent[3])) {
        rr.problem(`(${x}, ${y}) lies outside the grid's extent`);
      }
      out.push({ type: "Feature", geometry: f.geometry, properties: { ...a, siteId: a.siteId ?? `feature-${f.index}`, x, y } });
    });
    problems.throwIfAny();
    siteWarnings(defaults, opts, warnings);
    summary.sensitive = true;
  } else if (kind === "survey_lines") {
    const cols = findColumns(table, LINE_COLUMNS, what);
    const rr = new RowReader(table, cols, problems, alternateColumns(table, LINE_COLUMNS));
    src.features.forEach((f, k) => {
      rr.at(k);
      const lineId = rr.str("lineId");
      if (!lineId) rr.problem("line_id is empty", rr.name("lineId"));
      let fixIds: unknown = null;
      const rawFix = cols.fixId >= 0 ? f.properties[table.header[cols.fixId]] : undefined;
      if (rawFix !== undefined && rawFix !== null && rawFix !== "") {
        const list = Array.isArray(rawFix) ? rawFix.map(String) : String(rawFix).split(/[,;\s]+/).filter((s) => s !== "");
        let nPos = 0;
        eachPosition(f.geometry!, () => nPos++);
        if (list.length !== nPos) rr.problem(`has ${list.length} fix ids for ${nPos} vertices; give one fix id per vertex`, rr.name("fixId"));
        fixIds = list;
      }
      const res = rr.num("verticalResolutionM", { min: 0, minExclusive: true });
      out.push({ type: "Feature", geometry: f.geometry, properties: { lineId, fixIds, system: rr.str("system") || opts.survey?.system || null, verticalResolutionM: res ?? opts.survey?.verticalResolutionM ?? null } });
    });
    problems.throwIfAny();
    Object.assign(summary, lineSummary(out, opts, warnings));
  } else {
    const specs = ATTRIBUTE_COLUMNS[kind] ?? [];
    const cols = findColumns(table, specs, what);
    const rr = new RowReader(table, cols, problems, alternateColumns(table, specs));
    let noInterpreter = 0;
    src.features.forEach((f, k) => {
      rr.at(k);
      const p: Record<string, unknown> = {};
      if (kind === "lease_blocks" || kind === "survey_area" || kind === "ocean_boundary" || kind === "dredging_areas") p.name = rr.str("name") || `${kind === "lease_blocks" ? "block" : kind === "dredging_areas" ? "area" : what} ${f.index}`;
      if (kind === "dredging_areas") {
        p.method = rr.str("method") || null;
        p.years = rr.str("years") || null;
      }
      if (kind === "exclusions") {
        p.kind = rr.word("kind", EXCLUSION_KINDS, null, true);
        p.bufferM = rr.num("bufferM", { required: true, min: 0 });
        p.name = rr.str("name") || null;
      }
      if (kind === "development_footprint") {
        p.assetId = rr.str("assetId") || `asset ${f.index}`;
        p.impactDepthM = rr.num("impactDepthM", { required: true, min: 0 });
        p.kind = rr.str("kind") || null;
        p.bufferM = rr.num("bufferM", { min: 0 }) ?? 0;
      }
      if (kind === "interpretations") {
        p.kind = rr.word("kind", INTERPRETATION_KINDS, null, true);
        p.depthBelowSeabedM = rr.num("depthM", { min: 0 });
        p.ageKa = rr.num("ageKa", { min: 0 });
        p.confidence = rr.word("confidence", CONFIDENCE, null);
        p.interpreter = rr.str("interpreter") || null;
        if (!p.interpreter) noInterpreter++;
      }
      p.attributes = f.properties;
      out.push({ type: "Feature", geometry: f.geometry, properties: p });
    });
    problems.throwIfAny();
    if (noInterpreter) warnings.push(`${noInterpreter} interpretations name no interpreter`);
    if (kind === "interpretations" || kind === "exclusions") {
      const byKind: Record<string, number> = {};
      for (const f of out) byKind[String(f.properties.kind)] = (byKind[String(f.properties.kind)] ?? 0) + 1;
      summary.byKind = byKind;
    }
  }
  summary.properties = table.header;
  return {
    kind,
    format,
    crsEpsg: project.epsg,
    extent: geometryExtent(out),
    count: out.length,
    features: { type: "FeatureCollection", features: out },
    summary,
    warnings,
  };
}
