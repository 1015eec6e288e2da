/**
 * AGS4 files (the geotechnical data-transfer format of the Association of Geotechnical and
 * Geoenvironmental Specialists, edition 4): quoted comma-separated lines of GROUP, HEADING, UNIT,
 * TYPE and DATA rows. Lowstand reads the LOCA group (location: LOCA_ID, LOCA_NATE/LOCA_NATN national
 * grid easting/northing, LOCA_GL ground level, LOCA_FDEP final depth) and the GEOL group (field
 * geological descriptions: LOCA_ID, GEOL_TOP, GEOL_BASE, GEOL_DESC, GEOL_LEG, GEOL_GEOL).
 */
import type { Crs } from "../terrain/crs";
import { Problems, parseCsv, parseNumber } from "./csv";
import { checkPositions, extentOf, makeTransformer, sourceFromEpsg } from "./crs-transform";
import { checkVertical } from "./grids";
import { EvidenceError, type EvidenceLimits, type ParseOptions } from "./types";

interface Ags4Group {
  name: string;
  headings: string[];
  rows: string[][];
  lines: number[];
  line: number;
}

/** Splits AGS4 text into groups. Throws EvidenceError for DATA before HEADING and rows of the wrong width. */
export function readAgs4Groups(text: string, maxRows: number): Map<string, Ags4Group> {
  const t = parseCsv("_\n" + text.replace(/^\uFEFF/, ""), { maxRows, delimiter: ",", what: "AGS4 file" });
  const groups = new Map<string, Ags4Group>();
  let g: Ags4Group | null = null;
  const problems = new Problems("AGS4 file");
  for (let k = 0; k < t.records.length; k++) {
    const rec = t.records[k];
    const line = t.lines[k] - 1;
    const tag = rec[0];
    if (tag === "GROUP") {
      g = { name: rec[1] ?? "", headings: [], rows: [], lines: [], line };
      groups.set(g.name, g);
    } else if (tag === "HEADING") {
      if (!g) problems.add(`line ${line}: a HEADING row before any GROUP row`, { row: line });
      else g.headings = rec.slice(1);
    } else if (tag === "DATA") {
      if (!g || g.headings.length === 0) problems.add(`line ${line}: a DATA row before its group's HEADING row`, { row: line });
      else if (rec.length - 1 !== g.headings.length) problems.add(`line ${line}: ${rec.length - 1} values in a ${g.name} row with ${g.headings.length} headings`, { row: line });
      else {
        g.rows.push(rec.slice(1));
        g.lines.push(line);
      }
    } else if (tag !== "UNIT" && tag !== "TYPE") {
      problems.add(`line ${line}: '${tag}' is not an AGS4 row type (GROUP, HEADING, UNIT, TYPE, DATA)`, { row: line });
    }
  }
  problems.throwIfAny();
  return groups;
}

export function parseAgs4Cores(text: string, opts: ParseOptions, project: Crs, limits: EvidenceLimits, warnings: string[]) {
  const groups = readAgs4Groups(text, limits.maxRows);
  const loca = groups.get("LOCA");
  if (!loca) throw new EvidenceError(`the AGS4 file has no LOCA group (locations); it has: ${[...groups.keys()].join(", ") || "no groups"}`);
  const h = (g: Ags4Group, name: string) => g.headings.indexOf(name);
  const iId = h(loca, "LOCA_ID");
  const iE = h(loca, "LOCA_NATE");
  const iN = h(loca, "LOCA_NATN");
  const iGl = h(loca, "LOCA_GL");
  const iFd = h(loca, "LOCA_FDEP");
  const iType = h(loca, "LOCA_TYPE");
  const missing = [["LOCA_ID", iId], ["LOCA_NATE", iE], ["LOCA_NATN", iN]].filter(([, i]) => (i as number) < 0).map(([n]) => n);
  if (missing.length) throw new EvidenceError(`the AGS4 LOCA group (line ${loca.line}) lacks ${missing.join(", ")}`, { row: loca.line });
  const problems = new Problems("AGS4 file");
  const n = loca.rows.length;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const num = (row: string[], i: number, line: number, name: string, required: boolean): number | null => {
    if (i < 0) return null;
    const v = parseNumber(row[i]);
    if (v === null) {
      if (required) problems.add(`line ${line}: ${name} is empty`, { row: line, column: name });
      return null;
    }
    if (Number.isNaN(v)) {
      problems.add(`line ${line}: ${name} is '${row[i]}', not a number`, { row: line, column: name });
      return null;
    }
    return v;
  };
  for (let k = 0; k < n; k++) {
    x[k] = num(loca.rows[k], iE, loca.lines[k], "LOCA_NATE", true) ?? NaN;
    y[k] = num(loca.rows[k], iN, loca.lines[k], "LOCA_NATN", true) ?? NaN;
  }
  if (opts.declaredEpsg === undefined) warnings.push(`LOCA_NATE/LOCA_NATN were taken to be in the project CRS EPSG:${project.epsg} (no CRS was declared)`);
  const t = makeTransformer(sourceFromEpsg(opts.declaredEpsg ?? project.epsg), project);
  t.run(x, y);
  checkPositions(x, y, project, opts.withinExtent, (i, why) => problems.add(`line ${loca.lines[i]}: ${why}`, { row: loca.lines[i] }));
  const v = opts.vertical ? checkVertical(opts.vertical, "AGS4 ground level", warnings) : null;
  const byId = new Map<string, Record<string, unknown> & { units: unknown[] }>();
  for (let k = 0; k < n; k++) {
    const r = loca.rows[k];
    const id = r[iId];
    if (!id) problems.add(`line ${loca.lines[k]}: LOCA_ID is empty`, { row: loca.lines[k] });
    if (byId.has(id)) problems.add(`line ${loca.lines[k]}: LOCA_ID '${id}' appears twice`, { row: loca.lines[k] });
    const gl = num(r, iGl, loca.lines[k], "LOCA_GL", false);
    byId.set(id, {
      coreId: id,
      locationType: iType >= 0 ? r[iType] || null : null,
      x: x[k],
      y: y[k],
      groundLevelM: gl,
      waterDepthM: gl !== null && gl < 0 ? -gl : null,
      seabedElevationM: gl !== null && v ? (v.sign === "depth_positive_down" ? -gl : gl) + v.offsetToMslM : null,
      penetrationM: num(r, iFd, loca.lines[k], "LOCA_FDEP", false),
      recoveryM: null,
      horizonReached: "unknown",
      preservedLandSurface: "unknown",
      archaeologicalIndicators: null,
      units: [],
      dates: [],
      sourceRow: loca.lines[k],
    });
  }
  const geol = groups.get("GEOL");
  let units = 0;
  if (geol) {
    const gi = { id: h(geol, "LOCA_ID"), top: h(geol, "GEOL_TOP"), base: h(geol, "GEOL_BASE"), desc: h(geol, "GEOL_DESC"), leg: h(geol, "GEOL_LEG"), geo: h(geol, "GEOL_GEOL") };
    if (gi.id < 0 || gi.top < 0) throw new EvidenceError(`the AGS4 GEOL group (line ${geol.line}) lacks LOCA_ID or GEOL_TOP`, { row: geol.line });
    for (let k = 0; k < geol.rows.length; k++) {
      const r = geol.rows[k];
      const line = geol.lines[k];
      const core = byId.get(r[gi.id]);
      if (!core) {
        problems.add(`line ${line}: GEOL row for LOCA_ID '${r[gi.id]}', which is not in the LOCA group`, { row: line });
        continue;
      }
      const top = num(r, gi.top, line, "GEOL_TOP", true);
      const base = num(r, gi.base, line, "GEOL_BASE", false);
      if (top !== null && base !== null && base < top) problems.add(`line ${line}: GEOL_BASE ${base} m is above GEOL_TOP ${top} m`, { row: line });
      core.units.push({ topM: top, baseM: base, description: gi.desc >= 0 ? r[gi.desc] || null : null, legendCode: gi.leg >= 0 ? r[gi.leg] || null : null, geology: gi.geo >= 0 ? r[gi.geo] || null : null });
      units++;
    }
  } else warnings.push("the AGS4 file has no GEOL group: cores were read without their units");
  problems.throwIfAny();
  const rows = [...byId.values()];
  return {
    rows,
    extent: extentOf(x, y),
    summary: { cores: rows.length, units, groups: [...groups.keys()], transformation: t.description, vertical: v ?? null },
  };
}
