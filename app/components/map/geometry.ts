// Coordinates on the map are metres relative to the grid origin (top-left corner): float32 shaders
// lose precision at millions of metres, so nothing reaches deck.gl in raw projected coordinates.
import type { FeatureCollection, Geometry, Position } from "geojson";

export interface Origin {
  originX: number;
  originY: number;
}

function shiftPositions(c: unknown, ox: number, oy: number): unknown {
  if (Array.isArray(c) && typeof c[0] === "number") {
    const p = c as Position;
    return [p[0] - ox, p[1] - oy];
  }
  return (c as unknown[]).map((x) => shiftPositions(x, ox, oy));
}

function shiftGeometry(g: Geometry | null, ox: number, oy: number): Geometry | null {
  if (!g) return g;
  if (g.type === "GeometryCollection") return { ...g, geometries: g.geometries.map((x) => shiftGeometry(x, ox, oy) as Geometry) };
  return { ...g, coordinates: shiftPositions(g.coordinates, ox, oy) } as Geometry;
}

/** The collection with every coordinate made relative to the origin (2-D; heights dropped). */
export function relativeCollection(fc: FeatureCollection, o: Origin): FeatureCollection {
  return { ...fc, features: fc.features.map((f) => ({ ...f, geometry: shiftGeometry(f.geometry, o.originX, o.originY) as Geometry })) };
}

/** The centre of a geometry's bounding box (for labels). */
export function bboxCentre(g: Geometry | null): [number, number] | null {
  if (!g) return null;
  let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
  const walk = (c: unknown) => {
    if (Array.isArray(c) && typeof c[0] === "number") {
      const p = c as number[];
      if (p[0] < minX) minX = p[0];
      if (p[0] > maxX) maxX = p[0];
      if (p[1] < minY) minY = p[1];
      if (p[1] > maxY) maxY = p[1];
    } else if (Array.isArray(c)) c.forEach(walk);
  };
  if (g.type === "GeometryCollection") g.geometries.forEach((x) => walk("coordinates" in x ? x.coordinates : []));
  else walk(g.coordinates);
  return minX === Infinity ? null : [(minX + maxX) / 2, (minY + maxY) / 2];
}
