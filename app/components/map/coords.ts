// The cursor's position in words: project CRS metres, and WGS 84 in decimal degrees and in
// degrees and decimal minutes (proj4, from the project's proj4 definition).
import proj4 from "proj4";

export type ToWgs84 = (x: number, y: number) => [number, number] | null;

export function wgs84Converter(projDef: string | null): ToWgs84 | null {
  if (!projDef) return null;
  try {
    const conv = proj4(projDef, "WGS84");
    return (x, y) => {
      const [lon, lat] = conv.forward([x, y]);
      return Number.isFinite(lon) && Number.isFinite(lat) ? [lon, lat] : null;
    };
  } catch {
    return null;
  }
}

/** 45.123456° → "45° 07.407′" with the hemisphere letter. */
export function degreesDecimalMinutes(deg: number, axis: "lat" | "lon"): string {
  const hemi = axis === "lat" ? (deg < 0 ? "S" : "N") : deg < 0 ? "W" : "E";
  const a = Math.abs(deg);
  let d = Math.floor(a);
  let m = (a - d) * 60;
  if (Number(m.toFixed(3)) >= 60) {
    d += 1;
    m = 0;
  }
  return `${d}° ${m.toFixed(3).padStart(6, "0")}′ ${hemi}`;
}

export function decimalDegrees(deg: number, axis: "lat" | "lon"): string {
  return `${deg.toFixed(6).replace("-", "−")}° ${axis === "lat" ? "lat" : "lon"}`;
}
