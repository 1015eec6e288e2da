import { describe, expect, it } from "vitest";
import { parseXyz } from "./xyz";
import { prng, utf8 } from "./test-support";

describe("parseXyz — numbers read straight from the bytes", () => {
  it("gives exactly what Number() gives for plain decimals, exponents and signs (reference: the JavaScript number parser)", () => {
    const r = prng(9);
    const tokens: string[] = [];
    for (let i = 0; i < 3000; i++) {
      const v = (r() - 0.5) * 10 ** Math.floor(r() * 12);
      tokens.push(v.toFixed(Math.floor(r() * 8)));
    }
    tokens.push("1e3", "-2.5E-2", "+7", "0.000000000000000001234", "123456789012345678", ".5", "5.", "-0");
    while (tokens.length % 3) tokens.push("0");
    const lines: string[] = [];
    for (let i = 0; i < tokens.length; i += 3) lines.push(tokens.slice(i, i + 3).join(i % 2 ? "," : " "));
    const p = parseXyz(utf8(lines.join("\r\n")), 1e6);
    const all = [] as number[];
    for (let i = 0; i < p.n; i++) all.push(p.x[i], p.y[i], p.z[i]);
    expect(all).toEqual(tokens.map(Number));
  });

  it("skips a BOM, a header, comments and blank lines; leaves out NaN z with a count", () => {
    const p = parseXyz(utf8("\uFEFFeasting northing depth\n# survey INV-7\n\n1 2 3\n4 5 nan\n6 7 8\n"), 100);
    expect(p.n).toBe(2);
    expect(p.headerSkipped).toBe(true);
    expect(p.skippedNoValue).toBe(1);
    expect(Array.from(p.z)).toEqual([3, 8]);
  });

  it("refuses bad tokens and short lines after the data has started, by line number", () => {
    expect(() => parseXyz(utf8("1 2 3\n4 x 6\n7 8\n"), 100)).toThrow(/line 2: 'x' is not a number; line 3: 2 values \("7 8"\), need x y z/);
    expect(() => parseXyz(utf8("1 2 3\n4 5 Infinity\n"), 100)).toThrow(/line 2: 'Infinity' is not a number/);
    expect(() => parseXyz(utf8("# only a comment\n"), 100)).toThrow(/holds no points/);
  });
});
