/**
 * Well-Known Binary geometries (OGC Simple Features Access, Part 1: Common Architecture, §8.2 —
 * OGC 06-103r4) to GeoJSON geometries: Point, LineString, Polygon and their Multi- forms, with the
 * ISO Z/M/ZM type codes (+1000/+2000/+3000) and the EWKB flag bits; Z and M are dropped.
 */
import { EvidenceError } from "./types";

export interface WkbGeometry {
  type: string;
  coordinates: unknown;
}

/** Reads one WKB geometry from `bytes` at `offset`; returns it and the offset after it. Throws EvidenceError when damaged. */
export function readWkb(bytes: Uint8Array, offset = 0, where = ""): { geometry: WkbGeometry; end: number } {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let o = offset;
  const need = (k: number) => {
    if (o + k > bytes.length) throw new EvidenceError(`${where}the geometry (WKB) is cut short`);
  };
  const read = (): WkbGeometry => {
    need(5);
    const le = bytes[o] === 1;
    o += 1;
    let type = view.getUint32(o, le);
    o += 4;
    let dims = 2;
    if (type & 0x80000000) dims++;
    if (type & 0x40000000) dims++;
    if (type & 0x20000000) {
      need(4);
      o += 4;
    }
    type &= 0x0fffffff;
    const base = type % 1000;
    const iso = Math.floor(type / 1000);
    if (iso === 1 || iso === 2) dims = 3;
    else if (iso === 3) dims = 4;
    const u32 = () => {
      need(4);
      const v = view.getUint32(o, le);
      o += 4;
      return v;
    };
    const point = (): number[] => {
      need(8 * dims);
      const x = view.getFloat64(o, le);
      const y = view.getFloat64(o + 8, le);
      o += 8 * dims;
      return [x, y];
    };
    const points = (): number[][] => {
      const n = u32();
      if (n * 8 * dims > bytes.length - o) throw new EvidenceError(`${where}the geometry (WKB) declares ${n} points but is shorter`);
      const out = new Array<number[]>(n);
      for (let i = 0; i < n; i++) out[i] = point();
      return out;
    };
    const parts = (inner: () => WkbGeometry, expect: string): unknown[] => {
      const n = u32();
      const out: unknown[] = [];
      for (let i = 0; i < n; i++) {
        const g = inner();
        if (g.type !== expect) throw new EvidenceError(`${where}a multi-geometry holds a ${g.type} where a ${expect} was expected`);
        out.push(g.coordinates);
      }
      return out;
    };
    switch (base) {
      case 1: {
        const p = point();
        if (Number.isNaN(p[0]) && Number.isNaN(p[1])) return { type: "Point", coordinates: [] };
        return { type: "Point", coordinates: p };
      }
      case 2:
        return { type: "LineString", coordinates: points() };
      case 3: {
        const n = u32();
        const rings: number[][][] = [];
        for (let i = 0; i < n; i++) rings.push(points());
        return { type: "Polygon", coordinates: rings };
      }
      case 4:
        return { type: "MultiPoint", coordinates: parts(read, "Point") };
      case 5:
        return { type: "MultiLineString", coordinates: parts(read, "LineString") };
      case 6:
        return { type: "MultiPolygon", coordinates: parts(read, "Polygon") };
      case 7:
        return { type: "GeometryCollection", coordinates: null };
      default:
        throw new EvidenceError(`${where}geometry type code ${type} (curves, surfaces, TINs) is not supported: convert to simple lines and polygons`);
    }
  };
  const geometry = read();
  return { geometry, end: o };
}
