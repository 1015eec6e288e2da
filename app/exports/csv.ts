/**
 * Core targets as CSV for the ship (RFC 4180: Shafranovich, Y. (2005) "Common Format and MIME Type
 * for Comma-Separated Values (CSV) Files", IETF RFC 4180): CRLF line ends, fields holding a comma,
 * quote, CR or LF quoted with doubled quotes, one header row. UTF-8 (the degree and minute signs of
 * the DDM columns are not ASCII).
 *
 * Before the header: comment lines starting with "# " — the title, CRS, time, notes, and the
 * cautions of design §10. RFC 4180 has no comments; spreadsheets show them as rows, and most readers
 * skip them when told (pandas `comment="#"`, the project's own CSV reader skips them before the
 * header). Text fields starting with = + - @ are prefixed with an apostrophe so a spreadsheet does not
 * run them as formulas (OWASP "CSV Injection"); numbers are written as numbers.
 */
import { CAUTIONS } from "../cautions.ts";
import { type ExportMeta, type ExportTarget, TARGET_FIELDS, targetRecord } from "./target-fields.ts";

/** One field per RFC 4180 §2 rules 5–7. O(length). */
export function csvField(v: string | number | null, text: boolean): string {
  if (v === null) return "";
  let s = typeof v === "number" ? String(v) : v;
  if (text && /^[=+\-@]/.test(s)) s = `'${s}`;
  return /[",\r\n]/.test(s) || /^\s|\s$/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

function comment(s: string): string {
  return `# ${s.replace(/[\r\n]+/g, " ")}`;
}

/**
 * RFC 4180 (CSV); OWASP CSV injection guard; common practice, no source.
 *
 * The target list as CSV text: comment lines (title, CRS, generated at, notes, cautions), the header
 * (TARGET_FIELDS names), one row per target in rank order. O(targets · fields).
 */
export function targetsToCsv(targets: readonly ExportTarget[], meta: ExportMeta): string {
  const lines: string[] = [
    comment(meta.title),
    comment(`Coordinates: x_m/y_m in ${meta.crsLabel}; lat/lon in WGS 84 (EPSG:4326). Generated ${meta.generatedAt}.`),
    ...(meta.notes ?? []).map(comment),
    comment("Cautions:"),
    ...CAUTIONS.map((c) => comment(`- ${c}`)),
    TARGET_FIELDS.map((f) => f.name).join(","),
  ];
  for (const t of targets) {
    const r = targetRecord(t);
    lines.push(TARGET_FIELDS.map((f) => csvField(r[f.name], f.type === "text")).join(","));
  }
  return `${lines.join("\r\n")}\r\n`;
}
