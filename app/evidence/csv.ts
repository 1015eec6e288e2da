/**
 * A CSV reader for uploads (RFC 4180 and what spreadsheets really write): byte-order mark, CRLF/LF/CR
 * line ends, `,` `;` or tab delimiters detected from the header line, quoted fields holding
 * delimiters, doubled quotes and line breaks; broken quoting reported with its row. Plus column
 * matching (case-insensitive, with synonyms) and a collector that reports up to 20 bad rows at once.
 *
 * Rows are numbered as a text editor or spreadsheet shows them: the line where the record starts,
 * header = its own line (usually 1).
 */
import { EvidenceError, type EvidenceWhere } from "./types";

export type Delimiter = "," | ";" | "\t";

export interface CsvTable {
  header: string[];
  /** header names normalised: lower case, non-alphanumeric runs → "_" ("Depth (m)" → "depth_m") */
  keys: string[];
  delimiter: Delimiter;
  records: string[][];
  /** line where each record starts */
  lines: number[];
  headerLine: number;
  /** what a record is called in messages: "row" (CSV, default) or "feature" (vector attributes) */
  unit?: "row" | "feature";
}

/** Lower case, runs of anything but letters and digits → "_", no leading/trailing "_". */
export function normaliseName(s: string): string {
  return s
    .trim()
    .toLowerCase()
    .replace(/[^a-z0-9µ]+/g, "_")
    .replace(/^_+|_+$/g, "");
}

function detectDelimiter(line: string): Delimiter {
  let comma = 0;
  let semi = 0;
  let tab = 0;
  let q = false;
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (c === '"') q = !q;
    else if (!q) {
      if (c === ",") comma++;
      else if (c === ";") semi++;
      else if (c === "\t") tab++;
    }
  }
  if (tab > comma && tab > semi) return "\t";
  if (semi > 0 && semi >= comma) return ";";
  return ",";
}

function quoteSnippet(s: string): string {
  const t = s.length > 30 ? `${s.slice(0, 30)}…` : s;
  return t.replace(/\r?\n/g, "⏎");
}

/**
 * Parses CSV text (BOM already dropped or not). Blank lines are skipped; lines starting with `#`
 * before the header are comments. Throws EvidenceError for no header, broken quoting (a quote never
 * closed, or text after a closing quote), and more than `maxRows` records. O(characters).
 */
export function parseCsv(text: string, opts: { maxRows: number; delimiter?: Delimiter; what?: string }): CsvTable {
  const what = opts.what ?? "CSV";
  const t = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const n = t.length;
  let i = 0;
  let line = 1;
  // skip blank and comment lines before the header
  for (;;) {
    let e = t.indexOf("\n", i);
    if (e < 0) e = n;
    const l = t.slice(i, e).trim();
    if (i < n && (l === "" || l.startsWith("#"))) {
      i = e + 1;
      line++;
      continue;
    }
    break;
  }
  if (i >= n) throw new EvidenceError(`the ${what} file has no header row (it is empty or only comments)`);
  let firstEnd = t.indexOf("\n", i);
  if (firstEnd < 0) firstEnd = n;
  const delimiter = opts.delimiter ?? detectDelimiter(t.slice(i, firstEnd));
  const d = delimiter.charCodeAt(0);
  const records: string[][] = [];
  const lines: number[] = [];
  let header: string[] | null = null;
  let headerLine = line;
  while (i < n) {
    const recLine = line;
    const fields: string[] = [];
    for (;;) {
      if (i < n && t.charCodeAt(i) === 34) {
        // quoted field
        const openLine = line;
        i++;
        let s = "";
        let chunk = i;
        for (;;) {
          const j = t.indexOf('"', i);
          if (j < 0) {
            throw new EvidenceError(
              `row ${recLine}: a quoted field opened on line ${openLine} ("${quoteSnippet(t.slice(chunk, chunk + 30))}") is never closed: check the quotes in that row`,
              { row: recLine },
            );
          }
          for (let k = i; k < j; k++) if (t.charCodeAt(k) === 10) line++;
          if (t.charCodeAt(j + 1) === 34) {
            s += t.slice(chunk, j + 1);
            i = j + 2;
            chunk = i;
            continue;
          }
          s += t.slice(chunk, j);
          i = j + 1;
          break;
        }
        while (i < n && (t.charCodeAt(i) === 32 || (t.charCodeAt(i) === 9 && d !== 9))) i++;
        const c = i < n ? t.charCodeAt(i) : -1;
        if (c !== -1 && c !== d && c !== 10 && c !== 13) {
          let e = i;
          while (e < n && t.charCodeAt(e) !== d && t.charCodeAt(e) !== 10) e++;
          throw new EvidenceError(
            `row ${recLine}, field ${fields.length + 1}: text after a closing quote ("${quoteSnippet(s)}" then "${quoteSnippet(t.slice(i, e))}"): a quote inside a quoted field must be doubled ("")`,
            { row: recLine },
          );
        }
        fields.push(s);
      } else {
        let e = i;
        while (e < n) {
          const c = t.charCodeAt(e);
          if (c === d || c === 10 || c === 13) break;
          e++;
        }
        fields.push(t.slice(i, e).trim());
        i = e;
      }
      if (i < n && t.charCodeAt(i) === d) {
        i++;
        if (i >= n) fields.push("");
        continue;
      }
      // end of record
      if (i < n && t.charCodeAt(i) === 13) i++;
      if (i < n && t.charCodeAt(i) === 10) i++;
      line++;
      break;
    }
    if (fields.length === 1 && fields[0] === "") continue; // blank line
    if (header === null) {
      header = fields;
      headerLine = recLine;
      continue;
    }
    if (records.length >= opts.maxRows) {
      throw new EvidenceError(`the ${what} file has more than ${opts.maxRows} rows, over the limit: split it or thin it first`, { row: recLine });
    }
    records.push(fields);
    lines.push(recLine);
  }
  if (header === null) throw new EvidenceError(`the ${what} file has no header row`);
  return { header, keys: header.map(normaliseName), delimiter, records, lines, headerLine };
}

export interface ColumnSpec {
  key: string;
  /** accepted header names, normalised (see normaliseName); the first is the documented one */
  names: string[];
  required?: boolean;
}

/**
 * Finds each wanted column by its names (in the order given) among the normalised header names.
 * Throws EvidenceError listing every missing required column, what else it may be called, and what
 * the header holds. O(columns × names).
 */
export function findColumns(table: Pick<CsvTable, "keys" | "header" | "headerLine" | "unit">, specs: ColumnSpec[], what = "CSV"): Record<string, number> {
  const out: Record<string, number> = {};
  const missing: string[] = [];
  for (const s of specs) {
    let idx = -1;
    for (const name of s.names) {
      idx = table.keys.indexOf(name);
      if (idx >= 0) break;
    }
    // Shapefile (dBASE) field names are cut to 10 characters: "impact_depth_m" arrives as "impact_dep"
    if (idx < 0) idx = table.keys.findIndex((k) => k.length === 10 && s.names.some((name) => name.length > 10 && name.startsWith(k)));
    out[s.key] = idx;
    if (idx < 0 && s.required) missing.push(s.names.length > 1 ? `"${s.names[0]}" (or ${s.names.slice(1).map((x) => `"${x}"`).join(", ")})` : `"${s.names[0]}"`);
  }
  if (missing.length) {
    const has = table.header.length ? table.header.map((h) => `"${h}"`).join(", ") : "nothing";
    if (table.unit === "feature") {
      throw new EvidenceError(`the ${what}'s features lack the propert${missing.length > 1 ? "ies" : "y"} ${missing.join("; ")}; they have: ${has}`);
    }
    throw new EvidenceError(
      `the ${what} header (row ${table.headerLine}) lacks the column${missing.length > 1 ? "s" : ""} ${missing.join("; ")}; it has: ${has}`,
      { row: table.headerLine },
    );
  }
  return out;
}

/** Every column matching each spec's names, in name order (for RowReader's alternates). */
export function alternateColumns(table: Pick<CsvTable, "keys">, specs: ColumnSpec[]): Record<string, number[]> {
  const out: Record<string, number[]> = {};
  for (const s of specs) out[s.key] = s.names.map((n) => table.keys.indexOf(n)).filter((i) => i >= 0);
  return out;
}

/** Collects problems row by row and throws them together (the first 20 shown). */
export class Problems {
  private list: { msg: string; where: EvidenceWhere }[] = [];
  total = 0;
  constructor(
    private readonly what: string,
    private readonly max = 20,
  ) {}
  add(msg: string, where: EvidenceWhere = {}): void {
    this.total++;
    if (this.list.length < this.max) this.list.push({ msg, where });
  }
  get any(): boolean {
    return this.total > 0;
  }
  /** Throws an EvidenceError listing the problems, if there are any. */
  throwIfAny(): void {
    if (this.total === 0) return;
    const shown = this.list.map((p) => p.msg).join("; ");
    const more = this.total > this.list.length ? ` (first ${this.list.length} shown)` : "";
    const head = this.total === 1 ? `the ${this.what} has a problem: ` : `the ${this.what} has ${this.total} problems${more}: `;
    throw new EvidenceError(head + shown, this.list[0].where);
  }
}

const NUM = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const DECIMAL_COMMA = /^[+-]?\d*,\d+$/;

/**
 * A number from a field: plain decimal or exponent notation; a decimal comma ("12,5") is accepted
 * when the file's delimiter is `;` or tab. Empty → null; anything else → NaN.
 */
export function parseNumber(s: string | undefined, delimiter: Delimiter = ","): number | null {
  if (s === undefined) return null;
  const t = s.trim();
  if (t === "") return null;
  if (NUM.test(t)) return Number(t);
  if (delimiter !== "," && DECIMAL_COMMA.test(t)) return Number(t.replace(",", "."));
  return NaN;
}

/** Reads typed values from one record, reporting problems with row and column. */
export class RowReader {
  fields: string[] = [];
  row = 0;
  /**
   * `alternates`: further columns per key tried when the chosen one is empty in a record (vector
   * attributes, where one feature may say "type" and the next "kind"); see alternateColumns.
   */
  constructor(
    private readonly table: CsvTable,
    private readonly cols: Record<string, number>,
    private readonly problems: Problems,
    private readonly alternates?: Record<string, number[]>,
  ) {}
  at(k: number): this {
    this.fields = this.table.records[k];
    this.row = this.table.lines[k];
    return this;
  }
  /** "row 14" or "feature 3" */
  get label(): string {
    return `${this.table.unit ?? "row"} ${this.row}`;
  }
  /** where, for EvidenceError */
  where(column?: string): EvidenceWhere {
    return this.table.unit === "feature" ? { feature: this.row, column } : { row: this.row, column };
  }
  problem(msg: string, column?: string): void {
    this.problems.add(`${this.label}: ${msg}`, this.where(column));
  }
  has(key: string): boolean {
    return (this.cols[key] ?? -1) >= 0;
  }
  name(key: string): string {
    const i = this.cols[key];
    return i >= 0 ? this.table.header[i] : key;
  }
  str(key: string): string {
    const i = this.cols[key] ?? -1;
    const v = i >= 0 ? (this.fields[i] ?? "").trim() : "";
    if (v !== "" || !this.alternates?.[key]) return v;
    for (const j of this.alternates[key]) {
      const w = (this.fields[j] ?? "").trim();
      if (w !== "") return w;
    }
    return "";
  }
  /** A number, or null when empty and not required. Out-of-range and non-numbers are problems (→ null). */
  num(key: string, o: { required?: boolean; min?: number; max?: number; minExclusive?: boolean } = {}): number | null {
    const s = this.str(key);
    const v = parseNumber(s, this.table.delimiter);
    if (v === null) {
      if (o.required) this.problem(`${this.name(key)} is empty`, this.name(key));
      return null;
    }
    if (!Number.isFinite(v)) {
      this.problem(`${this.name(key)} is '${s}', not a number`, this.name(key));
      return null;
    }
    if (o.min !== undefined && (o.minExclusive ? v <= o.min : v < o.min)) {
      this.problem(`${this.name(key)} is ${v}; it must be ${o.minExclusive ? "more than" : "at least"} ${o.min}`, this.name(key));
      return null;
    }
    if (o.max !== undefined && v > o.max) {
      this.problem(`${this.name(key)} is ${v}; it must be at most ${o.max}`, this.name(key));
      return null;
    }
    return v;
  }
  /** One of the allowed words (matched after normaliseName, through `synonyms`), or `fallback` when empty. */
  word<T extends string>(key: string, synonyms: Record<string, T>, fallback: T | null, required = false): T | null {
    const s = this.str(key);
    if (s === "") {
      if (required) this.problem(`${this.name(key)} is empty`, this.name(key));
      return fallback;
    }
    const v = synonyms[normaliseName(s)];
    if (v === undefined) {
      const allowed = [...new Set(Object.values(synonyms))].join(", ");
      this.problem(`${this.name(key)} is '${s}'; use one of ${allowed}`, this.name(key));
      return null;
    }
    return v;
  }
}

/** Builds a synonyms table: each word maps to itself, plus the extra spellings given. */
export function words<T extends string>(list: readonly T[], extra: Record<string, T> = {}): Record<string, T> {
  const out: Record<string, T> = {};
  for (const w of list) out[normaliseName(w)] = w;
  for (const [k, v] of Object.entries(extra)) out[normaliseName(k)] = v;
  return out;
}
