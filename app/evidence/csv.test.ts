import { describe, expect, it } from "vitest";
import { Problems, RowReader, findColumns, normaliseName, parseCsv, parseNumber } from "./csv";
import { EvidenceError } from "./types";

const big = { maxRows: 1000 };

describe("parseCsv — what spreadsheets write (RFC 4180 and around it)", () => {
  it("reads a plain comma file", () => {
    const t = parseCsv("a,b,c\n1,2,3\n4,5,6\n", big);
    expect(t.header).toEqual(["a", "b", "c"]);
    expect(t.records).toEqual([["1", "2", "3"], ["4", "5", "6"]]);
    expect(t.lines).toEqual([2, 3]);
    expect(t.delimiter).toBe(",");
  });

  it("accepts a byte-order mark, CRLF and semicolons together, and decimal commas under semicolons", () => {
    const t = parseCsv("\uFEFFx;y;depth (m)\r\n495000;6680000;12,5\r\n495010;6680000;13\r\n", big);
    expect(t.header).toEqual(["x", "y", "depth (m)"]);
    expect(t.keys).toEqual(["x", "y", "depth_m"]);
    expect(t.delimiter).toBe(";");
    expect(t.records[0]).toEqual(["495000", "6680000", "12,5"]);
    expect(parseNumber(t.records[0][2], t.delimiter)).toBe(12.5);
    expect(parseNumber("12,5", ",")).toBeNaN();
  });

  it("detects tabs, and takes old Mac CR line ends", () => {
    const t = parseCsv("a\tb\n1\t2\n", big);
    expect(t.delimiter).toBe("\t");
    expect(parseCsv("a,b\r1,2\r3,4", big).records).toEqual([["1", "2"], ["3", "4"]]);
  });

  it("keeps delimiters, doubled quotes and line breaks inside quoted fields, and counts lines across them", () => {
    const t = parseCsv('id,note,v\n1,"flint, burnt",2\n2,"said ""ok""",3\n3,"two\nlines",4\n4,x,5\n', big);
    expect(t.records.map((r) => r[1])).toEqual(["flint, burnt", 'said "ok"', "two\nlines", "x"]);
    expect(t.lines).toEqual([2, 3, 4, 6]);
  });

  it("skips blank lines and leading # comments; a trailing delimiter makes an empty last field", () => {
    const t = parseCsv("# made by hand\n\na,b\n\n1,\n", big);
    expect(t.headerLine).toBe(3);
    expect(t.records).toEqual([["1", ""]]);
    expect(t.lines).toEqual([5]);
  });

  it("reports a quote never closed with the row where it opened", () => {
    let e: unknown;
    try {
      parseCsv('a,b\n1,2\n3,"open\n5,6\n', big);
    } catch (x) {
      e = x;
    }
    expect(e).toBeInstanceOf(EvidenceError);
    expect((e as EvidenceError).message).toMatch(/^row 3: a quoted field opened on line 3 .* is never closed/);
    expect((e as EvidenceError).where).toEqual({ row: 3 });
  });

  it("reports text after a closing quote (an undoubled quote inside a quoted field)", () => {
    expect(() => parseCsv('a,b\n1,"say "hi" now"\n', big)).toThrow(/row 2, field 2: text after a closing quote.*must be doubled/);
  });

  it("refuses an empty file, a file of comments only, and more rows than the cap", () => {
    expect(() => parseCsv("", big)).toThrow(/no header row/);
    expect(() => parseCsv("# nothing\n\n", big)).toThrow(/no header row/);
    expect(() => parseCsv("a\n1\n2\n3\n", { maxRows: 2 })).toThrow(/more than 2 rows, over the limit/);
  });
});

describe("columns and row checks", () => {
  it("normalises names and finds columns case-insensitively through synonyms", () => {
    expect(normaliseName("  Water Depth [m] ")).toBe("water_depth_m");
    const t = parseCsv("EASTING,Northing,Site ID\n1,2,a\n", big);
    const c = findColumns(t, [{ key: "x", names: ["x", "easting"] }, { key: "y", names: ["y", "northing"] }, { key: "id", names: ["site_id"] }]);
    expect(c).toEqual({ x: 0, y: 1, id: 2 });
  });

  it("names every missing required column, its synonyms and what the header holds", () => {
    const t = parseCsv("line,foo\n1,2\n", big);
    expect(() =>
      findColumns(t, [{ key: "x", names: ["x", "easting"], required: true }, { key: "y", names: ["y"], required: true }, { key: "l", names: ["line"], required: true }]),
    ).toThrow(/header \(row 1\) lacks the columns "x" \(or "easting"\); "y"; it has: "line", "foo"/);
  });

  it("collects up to 20 bad rows into one message, naming row, column and value", () => {
    const rows = Array.from({ length: 25 }, (_, i) => `${i},abc`).join("\n");
    const t = parseCsv(`id,depth_m\n${rows}\n`, big);
    const p = new Problems("test CSV");
    const rr = new RowReader(t, { depth: 1 }, p);
    for (let k = 0; k < t.records.length; k++) rr.at(k).num("depth");
    expect(p.total).toBe(25);
    let e: unknown;
    try {
      p.throwIfAny();
    } catch (x) {
      e = x;
    }
    const msg = (e as EvidenceError).message;
    expect(msg).toMatch(/^the test CSV has 25 problems \(first 20 shown\): row 2: depth_m is 'abc', not a number; row 3:/);
    expect(msg.match(/not a number/g)).toHaveLength(20);
    expect((e as EvidenceError).where).toEqual({ row: 2, column: "depth_m" });
  });

  it("checks ranges and allowed words", () => {
    const t = parseCsv("v,w\n-1,maybe\n5,High\n", big);
    const p = new Problems("t");
    const rr = new RowReader(t, { v: 0, w: 1 }, p);
    const lv = { high: "high", low: "low" } as const;
    expect(rr.at(0).num("v", { min: 0 })).toBeNull();
    expect(rr.at(0).word("w", lv, null)).toBeNull();
    expect(rr.at(1).word("w", lv, null)).toBe("high");
    expect(() => p.throwIfAny()).toThrow(/row 2: v is -1; it must be at least 0; row 2: w is 'maybe'; use one of high, low/);
  });
});
