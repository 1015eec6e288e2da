// Perceptually uniform, colour-blind-safe scales for the map's continuous layers, sampled at nine
// stops and interpolated linearly in sRGB.
type Rgb = [number, number, number];

// viridis (van der Walt & Smith, matplotlib 2015; CC0), the same stops as app/raster-display.ts
const VIRIDIS: Rgb[] = [
  [68, 1, 84], [71, 44, 122], [59, 81, 139], [44, 113, 142], [33, 144, 141], [39, 173, 129], [92, 200, 99], [170, 220, 50], [253, 231, 37],
];
// cividis (Nuñez, Anderton & Renslow 2018, PLoS ONE 13(7): e0199239), stops from memory of the
// published table at 0, 1/8, …, 1
const CIVIDIS: Rgb[] = [
  [0, 32, 77], [0, 51, 111], [57, 72, 107], [87, 92, 109], [112, 113, 115], [138, 135, 121], [166, 157, 117], [196, 181, 108], [255, 234, 70],
];

export type ScaleName = "viridis" | "cividis";
const SCALES: Record<ScaleName, Rgb[]> = { viridis: VIRIDIS, cividis: CIVIDIS };

/** The colour at t ∈ [0, 1] (clamped). */
export function scaleColour(name: ScaleName, t: number): Rgb {
  const stops = SCALES[name];
  const x = Math.min(1, Math.max(0, t)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  const a = stops[i];
  const b = stops[i + 1];
  return [Math.round(a[0] + (b[0] - a[0]) * f), Math.round(a[1] + (b[1] - a[1]) * f), Math.round(a[2] + (b[2] - a[2]) * f)];
}

/** A CSS linear-gradient of the scale, for legends. */
export function scaleGradient(name: ScaleName): string {
  const stops = SCALES[name];
  return `linear-gradient(to right, ${stops.map((c, i) => `rgb(${c.join(",")}) ${Math.round((i / (stops.length - 1)) * 100)}%`).join(", ")})`;
}

export const rgbCss = (c: Rgb, a = 1) => (a === 1 ? `rgb(${c.join(",")})` : `rgba(${c.join(",")},${a})`);

// PuOr, 9 classes (Brewer, C.A., colorbrewer.org; Harrower & Brewer 2003, The Cartographic Journal
// 40(1)), a colour-blind-safe diverging scale for differences: purple below 0, orange above.
const PUOR: Rgb[] = [
  [84, 39, 136], [128, 115, 172], [178, 171, 210], [216, 218, 235], [247, 247, 247], [254, 224, 182], [253, 184, 99], [224, 130, 20], [179, 88, 6],
];

/** The diverging colour at d ∈ [−1, 1] (clamped): purple for negative, near-white at 0, orange for positive. */
export function divergingColour(d: number): Rgb {
  const stops = PUOR;
  const x = (Math.min(1, Math.max(-1, d)) + 1) / 2 * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  const a = stops[i];
  const b = stops[i + 1];
  return [Math.round(a[0] + (b[0] - a[0]) * f), Math.round(a[1] + (b[1] - a[1]) * f), Math.round(a[2] + (b[2] - a[2]) * f)];
}

/** A CSS gradient of the diverging scale, for legends. */
export function divergingGradient(): string {
  return `linear-gradient(to right, ${PUOR.map((c, i) => `rgb(${c.join(",")}) ${Math.round((i / (PUOR.length - 1)) * 100)}%`).join(", ")})`;
}
