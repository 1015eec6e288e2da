// Turning a layer into something a screen can show quickly: a quantised copy (8 or 16 bits with a
// scale and offset, for the map) and a small PNG preview. Pure: typed arrays in, bytes out.

export interface Quantised {
  bits: 8 | 16;
  /** value = code × scale + offset; the top code (255 or 65535) is nodata */
  scale: number;
  offset: number;
  nodataCode: number;
  data: Uint8Array | Uint16Array;
}

/** Linear quantisation between the layer's finite min and max. O(n). */
export function quantise(values: ArrayLike<number>, nodata: number | "NaN", bits: 8 | 16): Quantised {
  const n = values.length;
  const isNodata = (v: number) => (nodata === "NaN" ? v !== v : v === nodata || v !== v);
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    if (isNodata(v)) continue;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  const top = bits === 8 ? 255 : 65535;
  const levels = top - 1; // codes 0…top−1 hold values
  if (min === Infinity) {
    min = 0;
    max = 0;
  }
  const scale = max > min ? (max - min) / levels : 1;
  const out = bits === 8 ? new Uint8Array(n) : new Uint16Array(n);
  for (let i = 0; i < n; i++) {
    const v = values[i];
    out[i] = isNodata(v) ? top : Math.round((v - min) / scale);
  }
  return { bits, scale, offset: min, nodataCode: top, data: out };
}

// viridis, sampled at 9 stops (van der Walt & Smith, matplotlib 2015; CC0)
const VIRIDIS = [
  [68, 1, 84], [71, 44, 122], [59, 81, 139], [44, 113, 142], [33, 144, 141], [39, 173, 129], [92, 200, 99], [170, 220, 50], [253, 231, 37],
];

function viridis(t: number): [number, number, number] {
  const x = Math.min(1, Math.max(0, t)) * (VIRIDIS.length - 1);
  const i = Math.min(VIRIDIS.length - 2, Math.floor(x));
  const f = x - i;
  const a = VIRIDIS[i];
  const b = VIRIDIS[i + 1];
  return [Math.round(a[0] + (b[0] - a[0]) * f), Math.round(a[1] + (b[1] - a[1]) * f), Math.round(a[2] + (b[2] - a[2]) * f)];
}

/** Land/water classes (flooding.ts): land in sand, sea and lake in muted blues (look.md). */
export const LAND_CLASS_COLOURS: Record<number, [number, number, number]> = { 0: [196, 182, 150], 1: [63, 106, 140], 2: [127, 157, 180], 3: [110, 160, 190] };
/** Other categories and masks: a colour-blind-safe qualitative set (Okabe & Ito 2008). */
const CATEGORY_COLOURS: [number, number, number][] = [[230, 159, 0], [86, 180, 233], [0, 158, 115], [240, 228, 66], [0, 114, 178], [213, 94, 0], [204, 121, 167], [120, 120, 120]];

/**
 * An RGBA preview at most `maxSide` cells on its longer side (nearest sample): continuous values
 * in viridis between min and max, classes in the given colours or a qualitative set; nodata transparent.
 */
export function previewRgba(
  values: ArrayLike<number>,
  width: number,
  height: number,
  nodata: number | "NaN",
  opts: { classes?: Record<number, [number, number, number]> | "categories"; maxSide?: number } = {},
) {
  const maxSide = opts.maxSide ?? 256;
  const step = Math.max(1, Math.ceil(Math.max(width, height) / maxSide));
  const w = Math.ceil(width / step);
  const h = Math.ceil(height / step);
  const isNodata = (v: number) => (nodata === "NaN" ? v !== v : v === nodata || v !== v);
  let min = Infinity;
  let max = -Infinity;
  if (!opts.classes) {
    for (let i = 0; i < values.length; i++) {
      const v = values[i];
      if (!isNodata(v)) {
        if (v < min) min = v;
        if (v > max) max = v;
      }
    }
  }
  const rgba = new Uint8Array(w * h * 4);
  for (let r = 0; r < h; r++) {
    for (let c = 0; c < w; c++) {
      const v = values[r * step * width + c * step];
      const o = (r * w + c) * 4;
      if (isNodata(v)) continue;
      const rgb =
        opts.classes === "categories"
          ? CATEGORY_COLOURS[Math.abs(Math.round(v)) % CATEGORY_COLOURS.length]
          : opts.classes
            ? (opts.classes[v] ?? [200, 200, 200])
            : viridis(max > min ? (v - min) / (max - min) : 0.5);
      rgba[o] = rgb[0];
      rgba[o + 1] = rgb[1];
      rgba[o + 2] = rgb[2];
      rgba[o + 3] = 255;
    }
  }
  return { width: w, height: h, rgba, min: min === Infinity ? null : min, max: max === -Infinity ? null : max };
}
