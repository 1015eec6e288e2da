// Turning a layer into something a screen can show quickly: a quantised copy (8 or 16 bits with a
// scale and offset, for the map) and a small PNG preview. Pure: typed arrays in, bytes out.

import type { MaskGrid } from "./scoring/polygon-mask";

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
 * in viridis between min and max (the data's, or a fixed `range`), classes in the given colours or a qualitative set; nodata transparent.
 */
export function previewRgba(
  values: ArrayLike<number>,
  width: number,
  height: number,
  nodata: number | "NaN",
  opts: { classes?: Record<number, [number, number, number]> | "categories"; maxSide?: number; range?: { min: number; max: number } } = {},
) {
  const maxSide = opts.maxSide ?? 256;
  const step = Math.max(1, Math.ceil(Math.max(width, height) / maxSide));
  const w = Math.ceil(width / step);
  const h = Math.ceil(height / step);
  const isNodata = (v: number) => (nodata === "NaN" ? v !== v : v === nodata || v !== v);
  let min = Infinity;
  let max = -Infinity;
  if (opts.range) {
    min = opts.range.min;
    max = opts.range.max;
  } else if (!opts.classes) {
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

// ---------------------------------------------------------------------------------------------
// The display grid: what the map and the live scoring work on. A reconstruction larger than the
// display's longest side is reduced by a whole step (step × step cells become one), each layer by
// the reduction docs/layers.md names for it ("Display reduction"): the mean for continuous values
// (ignoring nodata), the maximum for masks and counts, the majority for classes and codes, and the
// mean of unit vectors for aspect. The layer API, the scoring job's display check and the browser
// all use these functions, so what the browser scores is what the job checks.

export type Reduction = "mean" | "max" | "majority" | "aspect";

/** Per layer, as docs/layers.md lists it (a test holds the two together); other layers: mean. */
export const LAYER_REDUCTION: Readonly<Record<string, Reduction>> = {
  flooding_status: "majority",
  land_class: "majority",
  flow_direction: "majority",
  surface_source: "majority",
  reexposures: "max",
  stream_order: "max",
  shoreline: "max",
  river_mouths: "max",
  confluences: "max",
  unassessed: "max",
  thin_cover: "max",
  aspect: "aspect",
};

export function reductionOf(layer: string): Reduction {
  return LAYER_REDUCTION[layer] ?? "mean";
}

/** A grid placed in the project CRS (the shape every grid here has) with its reduction step. */
export interface DisplayGrid extends MaskGrid {
  /** cells of the full grid per display cell, along each side (1 = full resolution) */
  step: number;
}

/** The longest display side a map and the live scoring work with by default. */
export const DEFAULT_DISPLAY_MAX_SIDE = 1024;

/**
 * The display grid of a full grid: the smallest whole step that brings the longer side to at most
 * `maxSide` cells; the last row and column may cover fewer full cells. Same origin. O(1).
 */
export function displayGridOf(grid: MaskGrid, maxSide = DEFAULT_DISPLAY_MAX_SIDE): DisplayGrid {
  const step = Math.max(1, Math.ceil(Math.max(grid.width, grid.height) / Math.max(1, Math.floor(maxSide))));
  return {
    width: Math.ceil(grid.width / step),
    height: Math.ceil(grid.height / step),
    originX: grid.originX,
    originY: grid.originY,
    cellSizeX: grid.cellSizeX * step,
    cellSizeY: grid.cellSizeY * step,
    step,
  };
}

/**
 * Common practice, no source (block reduction of a raster to a coarser grid).
 *
 * Reduces a row-major `width` × `height` raster by `step` with `reduction`; nodata cells (NaN, or
 * `nodata`) are left out of every block, and a block with none left is NaN. Majority ties go to the
 * smaller value; aspect (degrees clockwise from north) is the direction of the summed unit vectors,
 * NaN when they cancel. With step 1 the values come back unchanged (as Float32). O(width × height).
 */
export function reduceToDisplay(values: ArrayLike<number>, width: number, height: number, step: number, reduction: Reduction, nodata: number | "NaN" = "NaN"): Float32Array {
  if (step <= 1) {
    const out = Float32Array.from(values as ArrayLike<number>);
    if (nodata !== "NaN") for (let i = 0; i < out.length; i++) if (out[i] === nodata) out[i] = NaN;
    return out;
  }
  const w = Math.ceil(width / step);
  const h = Math.ceil(height / step);
  const out = new Float32Array(w * h);
  const bag: number[] = [];
  const counts = new Uint16Array(256);
  const touched: number[] = [];
  const DEG = Math.PI / 180;
  for (let R = 0; R < h; R++) {
    const r0 = R * step;
    const r1 = Math.min(height, r0 + step);
    for (let C = 0; C < w; C++) {
      const c0 = C * step;
      const c1 = Math.min(width, c0 + step);
      let n = 0;
      let sum = 0;
      let sumY = 0;
      let best = -Infinity;
      bag.length = 0;
      for (const code of touched) counts[code] = 0;
      touched.length = 0;
      let notSmall = false;
      for (let r = r0; r < r1; r++) {
        const base = r * width;
        for (let c = c0; c < c1; c++) {
          const v = values[base + c];
          if (v !== v || (nodata !== "NaN" && v === nodata)) continue;
          n++;
          if (reduction === "mean") sum += v;
          else if (reduction === "max") best = v > best ? v : best;
          else if (reduction === "aspect") {
            sum += Math.cos(v * DEG);
            sumY += Math.sin(v * DEG);
          } else if (!notSmall && v >= 0 && v < 256 && v === Math.floor(v)) {
            // class codes are small whole numbers: count them instead of sorting
            if (counts[v]++ === 0) touched.push(v);
          } else {
            if (!notSmall) {
              // the first value that is not a small code: the block is sorted instead, from what was counted
              notSmall = true;
              for (const code of touched) for (let k = 0; k < counts[code]; k++) bag.push(code);
            }
            bag.push(v);
          }
        }
      }
      let result = NaN;
      if (n > 0) {
        if (reduction === "mean") result = sum / n;
        else if (reduction === "max") result = best;
        else if (reduction === "aspect") {
          if (Math.hypot(sum, sumY) > 1e-9 * n) {
            const deg = Math.atan2(sumY, sum) / DEG;
            result = deg < 0 ? deg + 360 : deg;
          }
        } else if (!notSmall) {
          let bestCount = 0;
          for (const code of touched) {
            const k = counts[code];
            if (k > bestCount || (k === bestCount && code < result)) {
              bestCount = k;
              result = code;
            }
          }
        } else {
          bag.sort((a, b) => a - b);
          let run = 1;
          let bestRun = 0;
          for (let k = 1; k <= bag.length; k++) {
            if (k < bag.length && bag[k] === bag[k - 1]) run++;
            else {
              if (run > bestRun) {
                bestRun = run;
                result = bag[k - 1];
              }
              run = 1;
            }
          }
        }
      }
      out[R * w + C] = result;
    }
  }
  return out;
}

/** A layer's display copy: reduced to the display grid (the layer's own reduction), then quantised. */
export function displayCopy(values: ArrayLike<number>, width: number, height: number, step: number, layer: string, bits: 8 | 16, nodata: number | "NaN" = "NaN"): Quantised & { width: number; height: number } {
  const reduced = step > 1 || nodata !== "NaN" ? reduceToDisplay(values, width, height, step, reductionOf(layer), nodata) : values;
  return { ...quantise(reduced, "NaN", bits), width: Math.ceil(width / step), height: Math.ceil(height / step) };
}
