// Pictures of a potential for the map: viridis over 0–1 (look.md: potential), unassessed cells
// hatched in grey (their own class, never drawn as low — a pattern, not colour alone), cells that
// were sea or lake left transparent; and the difference of two potentials on a diverging scale.
import { divergingColour, scaleColour } from "~/components/map/colour-scales";

const STEPS = 1024;
let viridisLut: Uint8Array | null = null;
let divergingLut: Uint8Array | null = null;

function lut(kind: "viridis" | "diverging"): Uint8Array {
  if (kind === "viridis" && viridisLut) return viridisLut;
  if (kind === "diverging" && divergingLut) return divergingLut;
  const t = new Uint8Array(STEPS * 3);
  for (let k = 0; k < STEPS; k++) {
    const x = k / (STEPS - 1);
    const c = kind === "viridis" ? scaleColour("viridis", x) : divergingColour(2 * x - 1);
    t[k * 3] = c[0];
    t[k * 3 + 1] = c[1];
    t[k * 3 + 2] = c[2];
  }
  if (kind === "viridis") viridisLut = t;
  else divergingLut = t;
  return t;
}

/** The hatching of unassessed cells: grey diagonal stripes, every third diagonal. */
function hatch(out: Uint8ClampedArray, o: number, col: number, row: number) {
  if ((col + row) % 3 === 0) {
    out[o] = 120;
    out[o + 1] = 120;
    out[o + 2] = 120;
    out[o + 3] = 230;
  } else {
    out[o] = 225;
    out[o + 1] = 222;
    out[o + 2] = 215;
    out[o + 3] = 110;
  }
}

/** RGBA of a potential (0–1, NaN transparent), unassessed cells hatched. O(n), one table read per cell. */
export function potentialRgba(potential: Float32Array, unassessed: Uint8Array | null, width: number, height: number, out?: Uint8ClampedArray): Uint8ClampedArray {
  const t = lut("viridis");
  const res = out ?? new Uint8ClampedArray(width * height * 4);
  for (let row = 0, i = 0; row < height; row++) {
    for (let col = 0; col < width; col++, i++) {
      const o = i * 4;
      const v = potential[i];
      if (v === v) {
        const k = Math.min(STEPS - 1, Math.max(0, Math.round(v * (STEPS - 1)))) * 3;
        res[o] = t[k];
        res[o + 1] = t[k + 1];
        res[o + 2] = t[k + 2];
        res[o + 3] = 255;
      } else if (unassessed !== null && unassessed[i] === 1) {
        hatch(res, o, col, row);
      } else {
        res[o + 3] = 0;
      }
    }
  }
  return res;
}

/** RGBA of a − b on the diverging scale over [−range, range]; cells where either is NaN are transparent. O(n). */
export function differenceRgba(a: Float32Array, b: Float32Array, width: number, height: number, range = 0.5, out?: Uint8ClampedArray): Uint8ClampedArray {
  const t = lut("diverging");
  const res = out ?? new Uint8ClampedArray(width * height * 4);
  for (let i = 0; i < width * height; i++) {
    const o = i * 4;
    const d = a[i] - b[i];
    if (d === d) {
      const x = (Math.min(range, Math.max(-range, d)) / range + 1) / 2;
      const k = Math.round(x * (STEPS - 1)) * 3;
      res[o] = t[k];
      res[o + 1] = t[k + 1];
      res[o + 2] = t[k + 2];
      res[o + 3] = 255;
    } else res[o + 3] = 0;
  }
  return res;
}

/** RGBA of a spread (≥ 0) on the warm half of the diverging scale: 0 near-white, ≥ top dark orange; NaN transparent. O(n). */
export function spreadRgba(spread: Float32Array, top: number, out?: Uint8ClampedArray): Uint8ClampedArray {
  const t = lut("diverging");
  const res = out ?? new Uint8ClampedArray(spread.length * 4);
  const half = (STEPS - 1) / 2;
  for (let i = 0; i < spread.length; i++) {
    const o = i * 4;
    const v = spread[i];
    if (v === v) {
      const k = Math.round(half + Math.min(1, v / top) * half) * 3;
      res[o] = t[k];
      res[o + 1] = t[k + 1];
      res[o + 2] = t[k + 2];
      res[o + 3] = 255;
    } else res[o + 3] = 0;
  }
  return res;
}
