import { describe, expect, it } from "vitest";
import { readGpkgGeometry } from "./gpkg";
import { EvidenceError } from "./types";
import { readWkb } from "./wkb";

/** Writes WKB by hand from the OGC Simple Features layout (06-103r4 §8.2): byte order, uint32 type, then the numbers. */
class W {
  private b: number[] = [];
  constructor(private le = true) {}
  u8(v: number) {
    this.b.push(v);
    return this;
  }
  u32(v: number) {
    const d = new DataView(new ArrayBuffer(4));
    d.setUint32(0, v, this.le);
    this.b.push(...new Uint8Array(d.buffer));
    return this;
  }
  f64(...vs: number[]) {
    for (const v of vs) {
      const d = new DataView(new ArrayBuffer(8));
      d.setFloat64(0, v, this.le);
      this.b.push(...new Uint8Array(d.buffer));
    }
    return this;
  }
  head(type: number) {
    return this.u8(this.le ? 1 : 0).u32(type);
  }
  bytes() {
    return Uint8Array.from(this.b);
  }
}

describe("readWkb — OGC Well-Known Binary", () => {
  it("reads a little-endian Point and a big-endian LineString", () => {
    expect(readWkb(new W().head(1).f64(496000.5, 6675000.25).bytes()).geometry).toEqual({ type: "Point", coordinates: [496000.5, 6675000.25] });
    const ls = new W(false).head(2).u32(2).f64(1, 2, 3, 4).bytes();
    expect(readWkb(ls).geometry).toEqual({ type: "LineString", coordinates: [[1, 2], [3, 4]] });
  });
  it("drops Z from an ISO PolygonZ (type 1003) and from an EWKB MultiPoint with Z and SRID flags", () => {
    const poly = new W().head(1003).u32(1).u32(4).f64(0, 0, 9, 1, 0, 9, 1, 1, 9, 0, 0, 9).bytes();
    expect(readWkb(poly).geometry).toEqual({ type: "Polygon", coordinates: [[[0, 0], [1, 0], [1, 1], [0, 0]]] });
    const ewkb = new W().head(0x80000000 | 0x20000000 | 4).u32(32731).u32(2).head(0x80000001).f64(5, 6, 7).head(0x80000001).f64(8, 9, 10).bytes();
    expect(readWkb(ewkb).geometry).toEqual({ type: "MultiPoint", coordinates: [[5, 6], [8, 9]] });
  });
  it("reads a MultiPolygon of two polygons", () => {
    const ring = (w: W, x: number) => w.u32(4).f64(x, 0, x + 1, 0, x + 1, 1, x, 0);
    const w = new W().head(6).u32(2);
    ring(w.head(3).u32(1), 0);
    ring(w.head(3).u32(1), 5);
    const g = readWkb(w.bytes()).geometry;
    expect(g.type).toBe("MultiPolygon");
    expect((g.coordinates as number[][][][])[1][0][0]).toEqual([5, 0]);
  });
  it("refuses cut-short geometries, curves, and a multi-geometry holding the wrong part", () => {
    const full = new W().head(2).u32(3).f64(1, 2, 3, 4, 5, 6).bytes();
    expect(() => readWkb(full.subarray(0, 20))).toThrow(EvidenceError);
    expect(() => readWkb(full.subarray(0, 20))).toThrow(/declares 3 points but is shorter|cut short/);
    expect(() => readWkb(new W().head(8).u32(0).bytes())).toThrow(/type code 8 .* not supported/);
    expect(() => readWkb(new W().head(5).u32(1).head(1).f64(1, 2).bytes())).toThrow(/holds a Point where a LineString was expected/);
  });
});

describe("GeoPackage geometry blobs (OGC 12-128r18 §2.1.3)", () => {
  const gp = (flags: number, envelope: number[], wkb: Uint8Array) => {
    const head = new W().u8(0x47).u8(0x50).u8(0).u8(flags).u32(32731).f64(...envelope).bytes();
    return Uint8Array.from([...head, ...wkb]);
  };
  it("skips the header and its envelope (none, or the 32-byte xy envelope) before the WKB", () => {
    const pt = new W().head(1).f64(7, 8).bytes();
    expect(readGpkgGeometry(gp(0b0000_0001, [], pt), 1)).toEqual({ type: "Point", coordinates: [7, 8] });
    expect(readGpkgGeometry(gp(0b0000_0011, [7, 7, 8, 8], pt), 1)).toEqual({ type: "Point", coordinates: [7, 8] });
  });
  it("returns null for an empty geometry and refuses a blob without the GP magic", () => {
    expect(readGpkgGeometry(gp(0b0001_0001, [], new Uint8Array(0)), 3)).toBeNull();
    expect(() => readGpkgGeometry(new W().head(1).f64(7, 8).bytes(), 4)).toThrow(/feature 4: the geometry is not a GeoPackage geometry blob/);
  });
});
