// Raster layers for the map: the quantised display copy from the layer API (8-bit codes with a
// scale and offset), turned into RGBA on the client, and read back under the cursor.
import { scaleColour, type ScaleName } from "./colour-scales";

export interface DisplayRaster {
  width: number;
  height: number;
  /** value = code × scale + offset */
  scale: number;
  offset: number;
  nodataCode: number;
  units: string;
  codes: Uint8Array;
}

/** GET /api/reconstructions/:id/layers/:layer?age=&display=8, parsed. */
export async function fetchDisplayRaster(reconstructionId: number, name: string, ageKa: number | null, signal?: AbortSignal): Promise<DisplayRaster> {
  const qs = new URLSearchParams({ display: "8" });
  if (ageKa !== null) qs.set("age", String(ageKa));
  const res = await fetch(`/api/reconstructions/${reconstructionId}/layers/${encodeURIComponent(name)}?${qs}`, { signal });
  if (!res.ok) throw new Error(`The ${name.replace(/_/g, " ")} layer could not be loaded (${res.status}).`);
  const h = (k: string) => res.headers.get(`X-Lowstand-${k}`);
  const width = Number(h("Width"));
  const height = Number(h("Height"));
  const codes = new Uint8Array(await res.arrayBuffer());
  if (!(width > 0 && height > 0) || codes.length !== width * height) throw new Error(`The ${name.replace(/_/g, " ")} layer arrived damaged.`);
  return { width, height, scale: Number(h("Scale")), offset: Number(h("Offset")), nodataCode: Number(h("Nodata-Code")), units: decodeUnits(h("Units")), codes };
}

/** Header values are Latin-1 only: units may arrive percent-encoded (e.g. "grey level 1%E2%80%93255"). */
function decodeUnits(v: string | null): string {
  if (!v) return "";
  try {
    return decodeURIComponent(v);
  } catch {
    return v;
  }
}

/** The value in the cell (col, row), or null off the grid or on nodata. */
export function rasterValue(r: DisplayRaster, col: number, row: number): number | null {
  if (col < 0 || row < 0 || col >= r.width || row >= r.height) return null;
  const code = r.codes[row * r.width + col];
  return code === r.nodataCode ? null : code * r.scale + r.offset;
}

export interface ClassEntry {
  value: number;
  label: string;
  rgb: [number, number, number];
  /** 0–255, default opaque (land lets the hillshade through) */
  alpha?: number;
}

export type RasterStyle =
  | { kind: "grey" }
  | { kind: "classes"; classes: ClassEntry[] }
  | { kind: "continuous"; scale: ScaleName }
  | { kind: "mask"; rgb: [number, number, number] };

/**
 * RGBA bytes for the raster (one texel per cell, row 0 north): a look-up table over the 255 codes,
 * so the work per cell is one table read. Continuous values run over [min, max]; nodata is
 * transparent; masks are drawn as diagonal hatching (pattern, not colour alone).
 */
export function colourise(r: DisplayRaster, style: RasterStyle, range: { min: number; max: number } | null): Uint8ClampedArray {
  const lut = new Uint8ClampedArray(256 * 4);
  for (let code = 0; code < 256; code++) {
    if (code === r.nodataCode) continue;
    const v = code * r.scale + r.offset;
    let rgba: [number, number, number, number] | null = null;
    if (style.kind === "grey") {
      const g = Math.round(Math.min(255, Math.max(0, v)));
      rgba = [g, g, g, 255];
    } else if (style.kind === "classes") {
      const c = style.classes.find((e) => e.value === Math.round(v));
      rgba = c ? [...c.rgb, c.alpha ?? 255] : null;
    } else if (style.kind === "continuous") {
      const lo = range?.min ?? r.offset;
      const hi = range?.max ?? r.offset + 254 * r.scale;
      rgba = [...scaleColour(style.scale, hi > lo ? (v - lo) / (hi - lo) : 0.5), 255];
    } else {
      rgba = Math.round(v) >= 1 ? [...style.rgb, 255] : null;
    }
    if (rgba) lut.set(rgba, code * 4);
  }
  const out = new Uint8ClampedArray(r.width * r.height * 4);
  const hatch = style.kind === "mask";
  for (let row = 0, i = 0; row < r.height; row++) {
    for (let col = 0; col < r.width; col++, i++) {
      const code = r.codes[i];
      const o = code * 4;
      if (lut[o + 3] === 0) continue;
      if (hatch && (col + row) % 8 !== 0) continue;
      out[i * 4] = lut[o];
      out[i * 4 + 1] = lut[o + 1];
      out[i * 4 + 2] = lut[o + 2];
      out[i * 4 + 3] = lut[o + 3];
    }
  }
  return out;
}

/** A canvas holding the RGBA bytes, for a deck.gl BitmapLayer. Browser only. */
export function rasterCanvas(rgba: Uint8ClampedArray, width: number, height: number): HTMLCanvasElement {
  const canvas = document.createElement("canvas");
  canvas.width = width;
  canvas.height = height;
  const ctx = canvas.getContext("2d");
  if (ctx) ctx.putImageData(new ImageData(rgba as Uint8ClampedArray<ArrayBuffer>, width, height), 0, 0);
  return canvas;
}
