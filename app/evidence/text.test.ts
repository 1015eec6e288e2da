import { describe, expect, it } from "vitest";
import { MAX_TEXT_BYTES, decodeText } from "./text";

describe("decodeText", () => {
  it("drops a UTF-8 byte-order mark and reads UTF-16 with its mark", () => {
    expect(decodeText(Uint8Array.of(0xef, 0xbb, 0xbf, 0x61, 0x2c, 0x62), "CSV")).toBe("a,b");
    expect(decodeText(Uint8Array.of(0xff, 0xfe, 0x61, 0, 0x2c, 0, 0x62, 0), "CSV")).toBe("a,b");
  });
  it("falls back to Windows-1252 for non-UTF-8 text, with a warning", () => {
    const w: string[] = [];
    // "Île" in Windows-1252: 0xCE is not valid UTF-8 here
    expect(decodeText(Uint8Array.of(0xce, 0x6c, 0x65), "CSV", w)).toBe("Île");
    expect(w[0]).toMatch(/not UTF-8; it was read as Windows-1252/);
  });
  it("refuses empty and binary files, naming the byte", () => {
    expect(() => decodeText(new Uint8Array(0), "CSV")).toThrow(/the CSV file is empty/);
    expect(() => decodeText(Uint8Array.of(0x61, 0x62, 0, 0x63), "CSV")).toThrow(/binary \(a zero byte at byte 2\)/);
  });
  it("refuses text longer than a JavaScript string can hold, before decoding it", () => {
    // only the length is read before refusing, so a stand-in object avoids allocating 512 MiB
    const huge = { length: MAX_TEXT_BYTES + 1 } as unknown as Uint8Array;
    expect(() => decodeText(huge, "ESRI ASCII grid")).toThrow(/is 512 MiB, more than the 512 MiB Lowstand reads as text: .*GeoTIFF/);
  });
});
