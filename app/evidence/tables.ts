/**
 * Tabular uploads (CSV; AGS4 for cores): known sites, horizon picks, survey-line navigation,
 * sea-level curves and index points, cores, and a palaeo-tidal range constant or table. Every bad
 * row is reported by its number (up to 20 at once); positions end in the project CRS.
 */
import type { Crs } from "../terrain/crs";
import { twtToThicknessM, DEFAULT_SEDIMENT_VELOCITY_MPS } from "../terrain/horizon";
import { parseSeaLevelCsv } from "../terrain/sea-level";
import { parseAgs4Cores } from "./ags4";
import {
  CONFIDENCE,
  CONTEXTS,
  CORE_COLUMNS,
  CURVE_COLUMNS,
  HORIZON_REACHED,
  INDEX_KINDS,
  INDEX_POINT_COLUMNS,
  LAT,
  LINE_COLUMNS,
  LON,
  PICK_COLUMNS,
  SENSITIVITY,
  SITE_COLUMNS,
  TIDAL_COLUMNS,
  X,
  Y,
  YES_NO_UNKNOWN,
} from "./columns";
import { type ColumnSpec, type CsvTable, Problems, RowReader, findColumns, parseCsv, parseNumber } from "./csv";
import { WGS84, checkPositions, extentOf, makeTransformer, projectCrs, sourceFromEpsg, terrain } from "./crs-transform";
import { checkVertical } from "./grids";
import { decodeText } from "./text";
import { EvidenceError, type EvidenceFormat, type EvidenceKind, type EvidenceLimits, type ParseOptions, type ParsedEvidence } from "./types";
import { indicatorsOrNull } from "./material";

/** Positions of every record, in the project CRS (NaN where the row's own numbers were bad). */
export interface Positions {
  x: Float64Array;
  y: Float64Array;
  transformation: string;
  source: "x/y" | "lon/lat";
}

/**
 * Reads x/y (in `declaredEpsg`, default the project CRS) or lon/lat (WGS 84) columns, transforms
 * them to the project CRS and checks they are plausible there and inside `withinExtent`.
 * Problems go to `problems` by row. O(n).
 */
export function readPositions(table: CsvTable, problems: Problems, opts: ParseOptions, project: Crs, what: string, checkExtent = true, allowEmpty = false): Positions {
  const cols = findColumns(table, [X, Y, LON, LAT], what);
  const useXy = cols.x >= 0 && cols.y >= 0;
  const useLonLat = !useXy && cols.lon >= 0 && cols.lat >= 0;
  if (!useXy && !useLonLat) {
    throw new EvidenceError(
      `the ${what} needs position columns: "x" and "y" (or "easting" and "northing") in the project CRS, or "lon" and "lat" in WGS 84; it has: ${table.header.map((h) => `"${h}"`).join(", ")}`,
      { row: table.headerLine },
    );
  }
  const n = table.records.length;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const rr = new RowReader(table, cols, problems);
  const kx = useXy ? "x" : "lon";
  const ky = useXy ? "y" : "lat";
  for (let k = 0; k < n; k++) {
    rr.at(k);
    const a = rr.num(kx, { required: !allowEmpty, ...(useLonLat ? { min: -180, max: 360 } : {}) });
    const b = rr.num(ky, { required: !allowEmpty, ...(useLonLat ? { min: -90, max: 90 } : {}) });
    x[k] = a ?? NaN;
    y[k] = b ?? NaN;
  }
  const src = useLonLat ? WGS84 : sourceFromEpsg(opts.declaredEpsg ?? project.epsg);
  const t = makeTransformer(src, project);
  t.run(x, y);
  checkPositions(x, y, project, checkExtent ? opts.withinExtent : undefined, (i, why) => problems.add(`row ${table.lines[i]}: ${why}`, { row: table.lines[i] }));
  return { x, y, transformation: t.description, source: useXy ? "x/y" : "lon/lat" };
}

function readTable(bytes: Uint8Array, limits: EvidenceLimits, what: string, warnings: string[]): CsvTable {
  const text = decodeText(bytes, what, warnings);
  const table = parseCsv(text, { maxRows: limits.maxRows, what });
  if (table.records.length === 0) throw new EvidenceError(`the ${what} has a header but no data rows`, { row: table.headerLine });
  return table;
}

function columnsFound(table: CsvTable, specs: ColumnSpec[], cols: Record<string, number>): Record<string, string> {
  const out: Record<string, string> = {};
  for (const s of specs) if (cols[s.key] >= 0) out[s.key] = table.header[cols[s.key]];
  return out;
}

// ---- known sites ---------------------------------------------------------------------------------

/**
 * The attributes of one known site (everything but its position), from a CSV row or a feature's
 * properties. Missing precision → `sitePrecisionDefaultM` (counted in `defaults`).
 */
export function siteAttributes(rr: RowReader, opts: ParseOptions, defaults: { precision: number; context: number }): Record<string, unknown> {
  let precisionM = rr.num("precisionM", { min: 0 });
  if (precisionM === null && !rr.str("precisionM")) {
    if (opts.sitePrecisionDefaultM !== undefined) {
      precisionM = opts.sitePrecisionDefaultM;
      defaults.precision++;
    } else rr.problem("precision_m (position precision in metres) is missing and no default was declared", rr.name("precisionM"));
  }
  const context = rr.word("context", CONTEXTS, "unknown");
  if (!rr.str("context")) defaults.context++;
  let calBpFrom = rr.num("calBpFrom", { min: 0 });
  let calBpTo = rr.num("calBpTo", { min: 0 });
  if (calBpFrom !== null && calBpTo !== null && calBpFrom < calBpTo) [calBpFrom, calBpTo] = [calBpTo, calBpFrom];
  const siteId = rr.str("siteId");
  return {
    siteId: siteId === "" ? null : siteId,
    precisionM,
    kind: rr.str("kind") || null,
    context,
    discoveryMethod: rr.str("discoveryMethod") || null,
    calBpFrom,
    calBpTo,
    confidence: rr.word("confidence", CONFIDENCE, null),
    sensitivity: rr.word("sensitivity", SENSITIVITY, "normal"),
    community: rr.str("community") || null,
  };
}

export function siteWarnings(defaults: { precision: number; context: number }, opts: ParseOptions, warnings: string[]): void {
  if (defaults.precision) warnings.push(`${defaults.precision} sites have no precision_m; the default of ${opts.sitePrecisionDefaultM} m was used`);
  if (defaults.context) warnings.push(`${defaults.context} sites have no context (in situ / derived / trawled / dredged): recorded as unknown, so they cannot train a model`);
}

function knownSites(table: CsvTable, opts: ParseOptions, project: Crs, warnings: string[]) {
  const problems = new Problems("known-sites CSV");
  const pos = readPositions(table, problems, opts, project, "known-sites CSV");
  const cols = findColumns(table, SITE_COLUMNS, "known-sites CSV");
  const rr = new RowReader(table, cols, problems);
  const defaults = { precision: 0, context: 0 };
  const rows: Record<string, unknown>[] = [];
  const seen = new Map<string, number>();
  for (let k = 0; k < table.records.length; k++) {
    rr.at(k);
    const a = siteAttributes(rr, opts, defaults);
    if (a.siteId) {
      const prev = seen.get(a.siteId as string);
      if (prev !== undefined) rr.problem(`site id '${a.siteId}' is used twice (also row ${prev})`, rr.name("siteId"));
      seen.set(a.siteId as string, rr.row);
    } else a.siteId = `row-${rr.row}`;
    rows.push({ ...a, x: pos.x[k], y: pos.y[k], sourceRow: rr.row });
  }
  problems.throwIfAny();
  siteWarnings(defaults, opts, warnings);
  const byContext: Record<string, number> = {};
  let restricted = 0;
  for (const r of rows) {
    byContext[r.context as string] = (byContext[r.context as string] ?? 0) + 1;
    if (r.sensitivity === "restricted") restricted++;
  }
  return {
    rows,
    extent: extentOf(pos.x, pos.y),
    summary: { columns: columnsFound(table, [X, Y, LON, LAT, ...SITE_COLUMNS], findColumns(table, [X, Y, LON, LAT, ...SITE_COLUMNS])), byContext, restricted, positions: pos.source, transformation: pos.transformation, sensitive: true },
  };
}

// ---- horizon picks -------------------------------------------------------------------------------

function horizonPicks(table: CsvTable, opts: ParseOptions, project: Crs, warnings: string[]) {
  const problems = new Problems("picks CSV");
  const cols = findColumns(table, PICK_COLUMNS, "picks CSV");
  const hasDepth = cols.depthBelowSeabedM >= 0;
  const hasTwt = cols.twtMs >= 0;
  if (hasDepth === hasTwt) {
    throw new EvidenceError(
      hasDepth
        ? 'the picks CSV has both "depth_below_seabed_m" and "twt_ms": keep one of them (depth in metres below the seabed, or two-way time in ms below the seabed reflector)'
        : `the picks CSV needs either "depth_below_seabed_m" (m below the seabed) or "twt_ms" (two-way time below the seabed reflector, ms); it has: ${table.header.map((h) => `"${h}"`).join(", ")}`,
      { row: table.headerLine },
    );
  }
  const pos = readPositions(table, problems, opts, project, "picks CSV");
  const rr = new RowReader(table, cols, problems);
  const rows: Record<string, unknown>[] = [];
  const perLine = new Map<string, number>();
  const horizons = new Set<string>();
  let defaultVelocity = 0;
  for (let k = 0; k < table.records.length; k++) {
    rr.at(k);
    const lineId = rr.str("lineId");
    if (!lineId) rr.problem("line_id is empty", rr.name("lineId"));
    perLine.set(lineId, (perLine.get(lineId) ?? 0) + 1);
    let depth: number | null;
    let twt: number | null = null;
    let velocity: number | null = null;
    if (hasDepth) depth = rr.num("depthBelowSeabedM", { required: true, min: 0 });
    else {
      twt = rr.num("twtMs", { required: true, min: 0 });
      velocity = rr.num("velocityMps", { min: 0, minExclusive: true });
      if (velocity === null && !rr.str("velocityMps")) {
        velocity = DEFAULT_SEDIMENT_VELOCITY_MPS;
        defaultVelocity++;
      }
      depth = twt !== null && velocity !== null ? twtToThicknessM(twt, velocity) : null;
    }
    const horizon = rr.str("horizon");
    if (horizon) horizons.add(horizon);
    rows.push({ lineId, fixId: rr.str("fixId") || null, x: pos.x[k], y: pos.y[k], depthBelowSeabedM: depth, twtMs: twt, velocityMps: velocity, horizon: horizon || null, sourceRow: rr.row });
  }
  problems.throwIfAny();
  if (defaultVelocity) warnings.push(`${defaultVelocity} picks in two-way time have no velocity: ${DEFAULT_SEDIMENT_VELOCITY_MPS} m/s was used (a common default for unconsolidated shelf sediment)`);
  let minPerLine = Infinity;
  let maxPerLine = 0;
  for (const c of perLine.values()) {
    if (c < minPerLine) minPerLine = c;
    if (c > maxPerLine) maxPerLine = c;
  }
  return {
    rows,
    extent: extentOf(pos.x, pos.y),
    summary: {
      measure: hasDepth ? "depth_below_seabed_m" : "twt_ms",
      horizons: [...horizons],
      lines: perLine.size,
      picksPerLine: { min: minPerLine, max: maxPerLine },
      defaultVelocityMps: hasTwt ? DEFAULT_SEDIMENT_VELOCITY_MPS : null,
      picksWithDefaultVelocity: defaultVelocity,
      depthFormula: hasTwt ? "depth below seabed = velocity × TWT / 2" : null,
      positions: pos.source,
      transformation: pos.transformation,
      columns: columnsFound(table, PICK_COLUMNS, cols),
    },
  };
}

// ---- survey lines (navigation CSV) -----------------------------------------------------------------

/** Fix-ordered lines → LineString features; shared by CSV and the checks of vector lines. */
export function lineSummary(features: { properties: Record<string, unknown> }[], opts: ParseOptions, warnings: string[]): Record<string, unknown> {
  const systems = new Set<string>();
  const resolutions = new Set<number>();
  for (const f of features) {
    if (f.properties.system) systems.add(String(f.properties.system));
    if (typeof f.properties.verticalResolutionM === "number") resolutions.add(f.properties.verticalResolutionM);
  }
  const system = opts.survey?.system ?? (systems.size === 1 ? [...systems][0] : systems.size > 1 ? "per line" : null);
  const verticalResolutionM = opts.survey?.verticalResolutionM ?? (resolutions.size === 1 ? [...resolutions][0] : resolutions.size > 1 ? "per line" : null);
  if (system === null) warnings.push("no survey system given (declare it, or add a \"system\" column)");
  if (verticalResolutionM === null) {
    warnings.push("no vertical resolution given (declare it, or add a \"vertical_resolution_m\" column): cover thinner than the system can resolve cannot be flagged");
  }
  if (opts.survey?.verticalResolutionM !== undefined && !(opts.survey.verticalResolutionM > 0)) {
    throw new EvidenceError(`the declared vertical resolution must be a positive number of metres, got ${opts.survey.verticalResolutionM}`);
  }
  return { system, verticalResolutionM, lines: features.length };
}

function surveyLinesCsv(table: CsvTable, opts: ParseOptions, project: Crs, warnings: string[]) {
  const problems = new Problems("survey-line CSV");
  const cols = findColumns(table, LINE_COLUMNS, "survey-line CSV");
  const pos = readPositions(table, problems, opts, project, "survey-line CSV", false);
  const rr = new RowReader(table, cols, problems);
  interface Acc { id: string; idx: number[]; fixes: string[]; system: string | null; res: number | null; firstRow: number }
  const lines = new Map<string, Acc>();
  for (let k = 0; k < table.records.length; k++) {
    rr.at(k);
    const id = rr.str("lineId");
    if (!id) {
      rr.problem("line_id is empty", rr.name("lineId"));
      continue;
    }
    let a = lines.get(id);
    if (!a) {
      a = { id, idx: [], fixes: [], system: null, res: null, firstRow: rr.row };
      lines.set(id, a);
    }
    a.idx.push(k);
    a.fixes.push(rr.str("fixId"));
    const sys = rr.str("system");
    if (sys) {
      if (a.system !== null && a.system !== sys) rr.problem(`system '${sys}' differs from '${a.system}' earlier on line ${id}`, rr.name("system"));
      a.system = sys;
    }
    const res = rr.num("verticalResolutionM", { min: 0, minExclusive: true });
    if (res !== null) {
      if (a.res !== null && a.res !== res) rr.problem(`vertical resolution ${res} m differs from ${a.res} m earlier on line ${id}`, rr.name("verticalResolutionM"));
      a.res = res;
    }
  }
  const features = [];
  let reordered = 0;
  for (const a of lines.values()) {
    if (a.idx.length < 2) {
      problems.add(`row ${a.firstRow}: line ${a.id} has only one fix; a line needs at least two`, { row: a.firstRow });
      continue;
    }
    // fix order: numeric fix ids must be strictly monotonic along the line; else sort by them
    const numeric = a.fixes.every((f) => f !== "" && Number.isFinite(Number(f)));
    let order = a.idx.map((_, j) => j);
    if (numeric) {
      const f = a.fixes.map(Number);
      const inc = f.every((v, j) => j === 0 || v > f[j - 1]);
      const dec = f.every((v, j) => j === 0 || v < f[j - 1]);
      if (!inc && !dec) {
        order = [...order].sort((p, q) => f[p] - f[q]);
        for (let j = 1; j < order.length; j++) {
          if (f[order[j]] === f[order[j - 1]]) problems.add(`row ${table.lines[a.idx[order[j]]]}: fix ${a.fixes[order[j]]} appears twice on line ${a.id}`, { row: table.lines[a.idx[order[j]]] });
        }
        reordered++;
      }
    }
    const coords = order.map((j) => [pos.x[a.idx[j]], pos.y[a.idx[j]]]);
    features.push({
      type: "Feature" as const,
      geometry: { type: "LineString", coordinates: coords },
      properties: { lineId: a.id, fixIds: order.map((j) => a.fixes[j] || null), system: a.system ?? opts.survey?.system ?? null, verticalResolutionM: a.res ?? opts.survey?.verticalResolutionM ?? null },
    });
  }
  problems.throwIfAny();
  if (reordered) warnings.push(`${reordered} lines were not in fix order in the file and were sorted by fix number`);
  return {
    features,
    extent: extentOf(pos.x, pos.y),
    summary: { ...lineSummary(features, opts, warnings), fixes: table.records.length, positions: pos.source, transformation: pos.transformation, columns: columnsFound(table, LINE_COLUMNS, cols) },
  };
}

// ---- sea level -----------------------------------------------------------------------------------

function seaLevelCurve(table: CsvTable, opts: ParseOptions) {
  const problems = new Problems("sea-level curve");
  const cols = findColumns(table, CURVE_COLUMNS, "sea-level curve");
  if (cols.ageKa < 0 && cols.ageYears < 0) {
    throw new EvidenceError(`the sea-level curve needs an "age_ka" column (ages in ka BP; or "age_bp" in years); it has: ${table.header.map((h) => `"${h}"`).join(", ")}`, { row: table.headerLine });
  }
  const inYears = cols.ageKa < 0;
  const rr = new RowReader(table, cols, problems);
  const rows: { ageKa: number; rslM: number; sigmaM: number | null; sourceRow: number }[] = [];
  let prev: { age: number; row: number } | null = null;
  let decreasing = 0;
  for (let k = 0; k < table.records.length; k++) {
    rr.at(k);
    const age = inYears ? rr.num("ageYears", { required: true, min: 0 }) : rr.num("ageKa", { required: true, min: 0 });
    const rsl = rr.num("rslM", { required: true });
    const sigma = rr.num("sigmaM", { min: 0 });
    if (age === null || rsl === null) continue;
    const ageKa = inYears ? age / 1000 : age;
    if (prev && !(ageKa > prev.age)) {
      decreasing++;
      rr.problem(`age ${ageKa} ka is not greater than ${prev.age} ka on row ${prev.row}: ages must increase strictly down the file (present first)`, rr.name(inYears ? "ageYears" : "ageKa"));
    }
    prev = { age: ageKa, row: rr.row };
    rows.push({ ageKa, rslM: rsl, sigmaM: sigma, sourceRow: rr.row });
  }
  if (decreasing === rows.length - 1 && rows.length > 2) {
    throw new EvidenceError("the sea-level curve's ages decrease all the way down the file: sort the rows from the present (0 ka) to the oldest age", { row: table.lines[1] });
  }
  problems.throwIfAny();
  if (rows.length < 2) throw new EvidenceError("the sea-level curve needs at least two rows");
  // the terrain engine's own parser must accept what we accept
  const csv = "age_ka,rsl_m,sigma_m\n" + rows.map((r) => `${r.ageKa},${r.rslM},${r.sigmaM ?? ""}`).join("\n");
  terrain(() => parseSeaLevelCsv(csv, { name: opts.fileName }));
  const noSigma = rows.filter((r) => r.sigmaM === null).length;
  return {
    rows,
    summary: {
      ages: { fromKa: rows[0].ageKa, toKa: rows[rows.length - 1].ageKa },
      rsl: { min: rows.reduce((m, r) => Math.min(m, r.rslM), Infinity), max: rows.reduce((m, r) => Math.max(m, r.rslM), -Infinity) },
      ageUnitInFile: inYears ? "years BP (divided by 1000)" : "ka BP",
      rowsWithoutSigma: noSigma,
      columns: columnsFound(table, CURVE_COLUMNS, cols),
    },
  };
}

function indexPoints(table: CsvTable, opts: ParseOptions, project: Crs, warnings: string[]) {
  const problems = new Problems("sea-level index points");
  const cols = findColumns(table, INDEX_POINT_COLUMNS, "sea-level index points");
  const hasPos = findColumns(table, [X, Y, LON, LAT]);
  const pos = (hasPos.x >= 0 && hasPos.y >= 0) || (hasPos.lon >= 0 && hasPos.lat >= 0) ? readPositions(table, problems, opts, project, "sea-level index points", false) : null;
  const v = opts.vertical ? checkVertical(opts.vertical, "sea-level index point", warnings) : null;
  const rr = new RowReader(table, cols, problems);
  const rows: Record<string, unknown>[] = [];
  const byKind: Record<string, number> = {};
  for (let k = 0; k < table.records.length; k++) {
    rr.at(k);
    const h = rr.num("heightM", { required: true });
    const kind = rr.word("kind", INDEX_KINDS, null, true);
    if (kind) byKind[kind] = (byKind[kind] ?? 0) + 1;
    const heightM = h === null ? null : v ? (v.sign === "depth_positive_down" ? -h : h) + v.offsetToMslM : h;
    rows.push({
      pointId: rr.str("pointId") || `row-${rr.row}`,
      ageKa: rr.num("ageKa", { required: true, min: 0 }),
      ageSigmaKa: rr.num("ageSigmaKa", { required: true, min: 0 }),
      heightM,
      heightSigmaM: rr.num("heightSigmaM", { required: true, min: 0 }),
      kind,
      labCode: rr.str("labCode") || null,
      indicator: rr.str("indicator") || null,
      x: pos ? pos.x[k] : null,
      y: pos ? pos.y[k] : null,
      sourceRow: rr.row,
    });
  }
  problems.throwIfAny();
  if (!v) warnings.push("no vertical declaration: heights were taken as metres relative to present mean sea level, positive up");
  return { rows, extent: pos ? extentOf(pos.x, pos.y) : null, summary: { byKind, vertical: v ?? "present MSL, positive up (assumed)", transformation: pos?.transformation ?? null, columns: columnsFound(table, INDEX_POINT_COLUMNS, cols) } };
}

// ---- cores ---------------------------------------------------------------------------------------

/**
 * Cores CSV: one row per core, or several rows per core sharing its core_id — the first gives the
 * position and core fields, later rows add units (unit_top_m, unit_base_m, unit_description) and dates
 * (lab_code, c14_age, c14_sigma, cal_from, cal_to, material) and may leave the core fields empty.
 */
function coresCsv(table: CsvTable, opts: ParseOptions, project: Crs, warnings: string[]) {
  const problems = new Problems("cores CSV");
  const cols = findColumns(table, CORE_COLUMNS, "cores CSV");
  const pos = readPositions(table, problems, opts, project, "cores CSV", true, true);
  const v = opts.vertical ? checkVertical(opts.vertical, "core water depth", warnings) : null;
  const rr = new RowReader(table, cols, problems);
  const cores = new Map<string, Record<string, unknown> & { units: unknown[]; dates: unknown[] }>();
  for (let k = 0; k < table.records.length; k++) {
    rr.at(k);
    const id = rr.str("coreId");
    if (!id) {
      rr.problem("core_id is empty", rr.name("coreId"));
      continue;
    }
    let c = cores.get(id);
    const waterDepthM = rr.num("waterDepthM", { min: 0 });
    const penetrationM = rr.num("penetrationM", { min: 0 });
    const recoveryM = rr.num("recoveryM", { min: 0 });
    const horizonReached = rr.word("horizonReached", HORIZON_REACHED, null);
    const preserved = rr.word("preservedLandSurface", YES_NO_UNKNOWN, null);
    const indicators = rr.str("archaeologicalIndicators");
    if (!c) {
      if (!Number.isFinite(pos.x[k]) && rr.str("x") === "" && rr.str("lon") === "") rr.problem(`core ${id} has no position on its first row`);
      if (penetrationM !== null && recoveryM !== null && recoveryM > penetrationM) {
        rr.problem(`recovery ${recoveryM} m is more than penetration ${penetrationM} m`, rr.name("recoveryM"));
      }
      c = {
        coreId: id,
        x: pos.x[k],
        y: pos.y[k],
        waterDepthM,
        seabedElevationM: waterDepthM !== null && v ? (v.sign === "depth_positive_down" ? -waterDepthM : waterDepthM) + v.offsetToMslM : null,
        penetrationM,
        recoveryM,
        horizonReached: horizonReached ?? "unknown",
        preservedLandSurface: preserved ?? "unknown",
        archaeologicalIndicators: indicatorsOrNull(indicators),
        units: [],
        dates: [],
        sourceRow: rr.row,
      };
      cores.set(id, c);
    } else {
      // later rows: core fields may be empty; if given, they must agree
      const same = (key: string, val: unknown) => {
        if (val !== null && val !== "" && c![key] !== val && !(key === "archaeologicalIndicators")) {
          rr.problem(`core ${id}: ${rr.name(key)} is ${String(val)} here but ${String(c![key])} on row ${c!.sourceRow}`, rr.name(key));
        }
      };
      same("waterDepthM", waterDepthM);
      same("penetrationM", penetrationM);
      same("recoveryM", recoveryM);
      same("horizonReached", horizonReached);
      same("preservedLandSurface", preserved);
      if (Number.isFinite(pos.x[k]) && rr.str("x") !== "" && (Math.abs(pos.x[k] - (c.x as number)) > 0.01 || Math.abs(pos.y[k] - (c.y as number)) > 0.01)) {
        rr.problem(`core ${id} has a different position here than on row ${c.sourceRow}`);
      }
    }
    const top = rr.num("unitTopM", { min: 0 });
    const base = rr.num("unitBaseM", { min: 0 });
    if (top !== null || base !== null || rr.str("unitDescription")) {
      if (top === null || base === null) rr.problem("a unit needs both unit_top_m and unit_base_m (m below seabed)");
      else if (base < top) rr.problem(`unit base ${base} m is above its top ${top} m`, rr.name("unitBaseM"));
      else {
        if (c.penetrationM !== null && base > (c.penetrationM as number) + 0.01) rr.problem(`unit base ${base} m is deeper than the core's penetration ${c.penetrationM} m`, rr.name("unitBaseM"));
        c.units.push({ topM: top, baseM: base, description: rr.str("unitDescription") || null });
      }
    }
    const lab = rr.str("labCode");
    const c14 = rr.num("c14Age", { min: 0 });
    const c14s = rr.num("c14Sigma", { min: 0 });
    let calFrom = rr.num("calFrom", { min: 0 });
    let calTo = rr.num("calTo", { min: 0 });
    if (lab || c14 !== null || calFrom !== null || calTo !== null) {
      if (c14 !== null && c14s === null) rr.problem("a radiocarbon age needs its c14_sigma", rr.name("c14Sigma"));
      if (calFrom !== null && calTo !== null && calFrom < calTo) [calFrom, calTo] = [calTo, calFrom];
      if (c14 === null && calFrom === null) rr.problem("a date needs c14_age ± c14_sigma or a calibrated range cal_from–cal_to");
      c.dates.push({ labCode: lab || null, c14AgeBp: c14, c14SigmaYears: c14s, calBpFrom: calFrom, calBpTo: calTo, material: rr.str("material") || null, sampleDepthM: rr.num("sampleDepthM", { min: 0 }) });
    }
  }
  problems.throwIfAny();
  const rows = [...cores.values()];
  const refused = rows.filter((r) => r.horizonReached === "refused").length;
  if (refused) warnings.push(`${refused} cores refused before the horizon: a refusal is not a negative result`);
  return {
    rows,
    extent: extentOf(rows.map((r) => r.x as number), rows.map((r) => r.y as number)),
    summary: {
      cores: rows.length,
      units: rows.reduce((s, r) => s + r.units.length, 0),
      dates: rows.reduce((s, r) => s + r.dates.length, 0),
      horizonReached: { yes: rows.filter((r) => r.horizonReached === "yes").length, no: rows.filter((r) => r.horizonReached === "no").length, refused, unknown: rows.filter((r) => r.horizonReached === "unknown").length },
      withArchaeologicalIndicators: rows.filter((r) => r.archaeologicalIndicators).length,
      transformation: pos.transformation,
      columns: columnsFound(table, CORE_COLUMNS, cols),
    },
  };
}

// ---- tidal range ---------------------------------------------------------------------------------

function tidalRange(text: string, limits: EvidenceLimits) {
  const bare = text.replace(/^\uFEFF/, "").trim();
  const one = parseNumber(bare, ";");
  if (one !== null && !Number.isNaN(one)) {
    if (one < 0) throw new EvidenceError(`the tidal range is ${one} m; a range is a height difference, ≥ 0`);
    return { rows: [{ ageKa: null, rangeM: one }], summary: { constantM: one } };
  }
  const table = parseCsv(text, { maxRows: limits.maxRows, what: "tidal-range CSV" });
  const cols = findColumns(table, TIDAL_COLUMNS, "tidal-range CSV");
  const problems = new Problems("tidal-range CSV");
  const rr = new RowReader(table, cols, problems);
  if (table.records.length === 0) throw new EvidenceError("the tidal-range CSV has no value");
  if (cols.ageKa < 0 && table.records.length > 1) {
    throw new EvidenceError(`the tidal-range CSV has ${table.records.length} values but no "age_ka" column: give one constant, or one range per age`, { row: table.lines[1] });
  }
  const rows = table.records.map((_, k) => {
    rr.at(k);
    return { ageKa: cols.ageKa >= 0 ? rr.num("ageKa", { required: true, min: 0 }) : null, rangeM: rr.num("rangeM", { required: true, min: 0 }), sourceRow: rr.row };
  });
  for (let k = 1; k < rows.length; k++) {
    if (rows[k].ageKa !== null && rows[k - 1].ageKa !== null && !(rows[k].ageKa! > rows[k - 1].ageKa!)) {
      problems.add(`row ${rows[k].sourceRow}: age ${rows[k].ageKa} ka is not greater than on row ${rows[k - 1].sourceRow}: ages must increase down the file`, { row: rows[k].sourceRow });
    }
  }
  problems.throwIfAny();
  return { rows, summary: rows.length === 1 ? { constantM: rows[0].rangeM } : { byAge: rows.length } };
}

// ---- dispatcher ----------------------------------------------------------------------------------

export async function parseTableEvidence(kind: EvidenceKind, format: EvidenceFormat, bytes: Uint8Array, opts: ParseOptions, limits: EvidenceLimits): Promise<ParsedEvidence> {
  const warnings: string[] = [];
  const project = projectCrs(opts.projectEpsg);
  const base = { kind, format, crsEpsg: project.epsg, warnings };
  if (format === "ags4") {
    if (kind !== "cores") throw new EvidenceError("AGS4 files are read for cores and boreholes only");
    const text = decodeText(bytes, "AGS4", warnings);
    const r = parseAgs4Cores(text, opts, project, limits, warnings);
    return { ...base, extent: r.extent, count: r.rows.length, rows: r.rows, summary: r.summary };
  }
  if (kind === "tidal_range") {
    const r = tidalRange(decodeText(bytes, "tidal-range", warnings), limits);
    return { ...base, extent: null, count: r.rows.length, rows: r.rows, summary: { ...r.summary, units: "tidal range, m" } };
  }
  const what = kind.replace(/_/g, " ");
  const table = readTable(bytes, limits, `${what} CSV`, warnings);
  const common = { delimiter: table.delimiter === "\t" ? "tab" : table.delimiter, rows: table.records.length };
  switch (kind) {
    case "known_sites": {
      const r = knownSites(table, opts, project, warnings);
      return { ...base, extent: r.extent, count: r.rows.length, rows: r.rows, summary: { ...common, ...r.summary } };
    }
    case "horizon_picks": {
      const r = horizonPicks(table, opts, project, warnings);
      return { ...base, extent: r.extent, count: r.rows.length, rows: r.rows, summary: { ...common, ...r.summary } };
    }
    case "survey_lines": {
      const r = surveyLinesCsv(table, opts, project, warnings);
      return { ...base, extent: r.extent, count: r.features.length, features: { type: "FeatureCollection", features: r.features }, summary: { ...common, ...r.summary } };
    }
    case "sea_level_curve": {
      const r = seaLevelCurve(table, opts);
      return { ...base, extent: null, count: r.rows.length, rows: r.rows, summary: { ...common, ...r.summary } };
    }
    case "sea_level_index_points": {
      const r = indexPoints(table, opts, project, warnings);
      return { ...base, extent: r.extent, count: r.rows.length, rows: r.rows, summary: { ...common, ...r.summary } };
    }
    case "cores": {
      const r = coresCsv(table, opts, project, warnings);
      return { ...base, extent: r.extent, count: r.rows.length, rows: r.rows, summary: { ...common, ...r.summary } };
    }
    default:
      throw new EvidenceError(`a ${what} upload is not a CSV`);
  }
}
