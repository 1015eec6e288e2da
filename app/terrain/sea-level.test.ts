import { readFileSync } from "node:fs";
import { createHash } from "node:crypto";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { LAMBECK_2014_CSV } from "./data/sea-level-global-lambeck2014";
import { TerrainInputError } from "./grid";
import {
  GLOBAL_FAR_FIELD_LABEL,
  clipCurve,
  curveRange,
  defaultGlobalCurve,
  parseSeaLevelCsv,
  riseRateAt,
  seaLevelAt,
  seaLevelLayerAt,
  sigmaAt,
  withVerticalLandMotion,
} from "./sea-level";
import { spec } from "./test-utils";

const here = path.dirname(new URL(import.meta.url).pathname);
/** SHA-256 of shared/data/sea-level-global-lambeck2014.csv when it was copied (see data/README.md). */
const SHARED_COPY_SHA256 = "cd5c64c80e0bccca08ad930339f624c8fb65ea507cf34e06382e4713087b8cf0";

describe("default sea-level curve — Lambeck, Rouby, Purcell, Sun & Sambridge (2014), PNAS 111(43)", () => {
  const curve = defaultGlobalCurve();

  it("ships the whole table, byte for byte the shared copy, labelled a global far-field approximation", () => {
    const shipped = readFileSync(path.join(here, "data/sea-level-global-lambeck2014.csv"), "utf8");
    expect(LAMBECK_2014_CSV).toBe(shipped);
    // The copy is the team's shared transcription byte for byte: its SHA-256 is recorded in
    // data/README.md (the shared folder itself is not part of a clone, so CI cannot read it).
    expect(createHash("sha256").update(shipped).digest("hex")).toBe(SHARED_COPY_SHA256);
    expect(curve.ageKa.length).toBe(shipped.trim().split("\n").length - 1); // every row
    expect(curve.label).toBe(GLOBAL_FAR_FIELD_LABEL);
    expect(curve.citation).toMatch(/Lambeck.*2014.*PNAS 111\(43\)/);
    expect(curve.warnings.join(" ")).toMatch(/far-field/);
    expect(curveRange(curve)).toEqual([0, 34.783]);
  });

  it("interpolates esl_m to the tabulated check values (±0.01 m transcription tolerance)", () => {
    // (paper, table as transcribed) check-values.md
    const expected: [number, number][] = [
      [20, -131.97],
      [18, -122.4],
      [16, -116.81],
      [14, -86.86],
      [12, -62.58],
      [10, -39.01],
      [8, -12.22],
      [6, -2.93],
    ];
    for (const [age, level] of expected) expect(Math.abs(seaLevelAt(curve, age) - level)).toBeLessThanOrEqual(0.01);
  });

  it("has its minimum of −134.28 m near 20.5–20.6 ka, on a plateau from about 29 to 21 ka", () => {
    // (paper) lowest about −134 m; table minimum −134.28 m near 20.5–20.6 ka (not at 20 ka)
    let min = Infinity;
    let at = 0;
    for (let k = 0; k < curve.ageKa.length; k++) if (curve.levelM[k] < min) (min = curve.levelM[k]), (at = curve.ageKa[k]);
    expect(min).toBeCloseTo(-134.28, 2);
    expect(at).toBeGreaterThanOrEqual(20.5);
    expect(at).toBeLessThanOrEqual(20.6);
    // (paper) plateau: within a few metres of the minimum from 29 to 21 ka (tolerance ours: 10 m)
    for (let a = 21; a <= 29; a += 0.5) expect(seaLevelAt(curve, a)).toBeLessThan(min + 10);
  });

  it("is not monotonic: falls about 1.2 m between 18.0 and 16.7 ka and about 3.7 m between 14.9 and 14.5 ka", () => {
    // (paper) check-values.md; tolerance 0.3 m (ours: "about")
    expect(seaLevelAt(curve, 18.0) - seaLevelAt(curve, 16.7)).toBeCloseTo(1.2, 0);
    expect(Math.abs(seaLevelAt(curve, 18.0) - seaLevelAt(curve, 16.7) - 1.2)).toBeLessThan(0.3);
    expect(Math.abs(seaLevelAt(curve, 14.9) - seaLevelAt(curve, 14.5) - 3.7)).toBeLessThan(0.3);
    expect(riseRateAt(curve, 17.3)).toBeLessThan(0); // falling towards the present there
  });

  it("rises about 12 m/ka on average through the main deglaciation, 16.5–8.2 ka", () => {
    // (paper) "averaging about 12 m/ka"; tolerance ±1.5 m/ka (ours)
    const rate = (seaLevelAt(curve, 8.2) - seaLevelAt(curve, 16.5)) / (16.5 - 8.2);
    expect(Math.abs(rate - 12)).toBeLessThan(1.5);
  });

  it("has its fastest rise of the deglaciation at Meltwater Pulse 1A", () => {
    // (paper) Deschamps et al. (2012) Nature 483: MWP-1A between 14.65 and 14.31 ka. Our check (tolerance
    // ours): the steepest 0.34 ka window of the curve between 8 and 20 ka starts within 0.4 ka of 14.65 ka
    // and rises at more than twice the deglacial average of about 12 m/ka.
    let best = 0;
    let start = 0;
    for (let t = 8; t <= 19.66; t += 0.01) {
      const rate = (seaLevelAt(curve, t) - seaLevelAt(curve, t + 0.34)) / 0.34;
      if (rate > best) (best = rate), (start = t + 0.34);
    }
    expect(Math.abs(start - 14.65)).toBeLessThan(0.4);
    expect(best).toBeGreaterThan(24);
  });

  it("puts the glacial maximum 120–135 m below present around 20 ka", () => {
    // (practice) check-values.md: about 20 000 years ago, 120–135 m below present depending on the reconstruction
    const l = seaLevelAt(curve, 20);
    expect(l).toBeLessThanOrEqual(-120);
    expect(l).toBeGreaterThanOrEqual(-135);
  });

  it("carries σ as published (0.07 to 5.9 m from the LGM to the present)", () => {
    // (paper, table as transcribed) check-values.md gives the σ column as 0.07–5.9 m; that holds for
    // 0–29 ka. Older rows (29.7–30.6 ka, before the LGM) reach 6.78 m in the file — checked here too.
    let lo = Infinity;
    let hi = -Infinity;
    let hiAll = -Infinity;
    for (let k = 1; k < curve.sigmaM.length; k++) {
      hiAll = Math.max(hiAll, curve.sigmaM[k]);
      if (curve.ageKa[k] > 29) continue;
      lo = Math.min(lo, curve.sigmaM[k]);
      hi = Math.max(hi, curve.sigmaM[k]);
    }
    expect(lo).toBeCloseTo(0.07, 2);
    expect(Math.abs(hi - 5.9)).toBeLessThan(0.02);
    expect(hiAll).toBeCloseTo(6.78, 2);
    expect(sigmaAt(curve, 10)).toBeGreaterThan(0);
  });

  it("refuses ages outside the curve, naming the age and the range", () => {
    expect(() => seaLevelAt(curve, 40)).toThrow(TerrainInputError);
    expect(() => seaLevelAt(curve, 40)).toThrow(/40 ka is outside.*0–34.783 ka/);
    expect(() => seaLevelAt(curve, -1)).toThrow(TerrainInputError);
    expect(() => seaLevelLayerAt({ kind: "curve", curve }, spec(3, 3), 35)).toThrow(/outside/);
  });
});

describe("vertical land motion", () => {
  it("adds u·t with a warning: esl(10 ka) = −39.01, u = −1 mm/yr → −49.01 m", () => {
    // (formula) check-values.md: RSL(t) = esl(t) + u·t
    const vlm = withVerticalLandMotion(defaultGlobalCurve(), -1);
    expect(seaLevelAt(vlm, 10)).toBeCloseTo(-49.01, 2);
    expect(seaLevelAt(vlm, 0)).toBe(0);
    expect(vlm.warnings.some((w) => /constant vertical-land-motion rate/.test(w))).toBe(true);
    expect(defaultGlobalCurve().warnings.some((w) => /vertical-land-motion/.test(w))).toBe(false);
  });
});

describe("user curves, regional curves and RSL grids", () => {
  const text = "# invented test curve\nage_ka,rsl_m,sigma_m\n0,0,0.1\n10,-40,1\n5,-10,0.5\n";
  it("parses any row order and interpolates linearly", () => {
    const c = parseSeaLevelCsv(text, { name: "test" });
    expect(Array.from(c.ageKa)).toEqual([0, 5, 10]);
    expect(seaLevelAt(c, 7.5)).toBe(-25);
    expect(sigmaAt(c, 7.5)).toBeCloseTo(0.75, 10);
    expect(riseRateAt(c, 7.5)).toBe(6); // (formula) 30 m over 5 ka
    expect(riseRateAt(c, 5)).toBe(2); // at a row: the younger segment, 10 m over 5 ka
    const clipped = clipCurve(c, 2, 7.5);
    expect(Array.from(clipped.ageKa)).toEqual([2, 5, 7.5]);
    expect(clipped.levelM[0]).toBe(-4);
  });
  it("names the line of a bad row", () => {
    expect(() => parseSeaLevelCsv("age_ka,rsl_m\n0,0\n1,abc\n", { name: "x" })).toThrow(/line 3: sea level "abc"/);
    expect(() => parseSeaLevelCsv("age_ka,rsl_m\n0,0\n0,1\n", { name: "x" })).toThrow(/line 3: age 0 ka appears twice/);
    expect(() => parseSeaLevelCsv("age,depth\n0,0\n", { name: "x" })).toThrow(/rsl_m/);
    expect(() => parseSeaLevelCsv("age_ka,rsl_m\n-1,0\n1,0\n", { name: "x" })).toThrow(/negative/);
  });
  it("gives per-cell sea level for regional zones and per-age grids", () => {
    const a = parseSeaLevelCsv(text, { name: "a" });
    const b = parseSeaLevelCsv("age_ka,rsl_m\n0,0\n10,-20\n", { name: "b" });
    const s = spec(3, 3);
    const zone = Uint8Array.from([0, 0, 0, 1, 1, 1, 255, 255, 255]);
    const lv = seaLevelLayerAt({ kind: "regional", curves: [a, b], zone }, s, 10);
    expect(Array.from(lv.slice(0, 6))).toEqual([-40, -40, -40, -20, -20, -20]);
    expect(Number.isNaN(lv[6])).toBe(true);
    const g0 = new Float32Array(9).fill(0);
    const g1 = new Float32Array(9).fill(-30);
    g1[4] = -50;
    const grids = { kind: "grids" as const, label: "invented GIA", citation: "", agesKa: Float64Array.of(0, 10), levels: [g0, g1] };
    const lg = seaLevelLayerAt(grids, s, 5);
    expect(lg[0]).toBe(-15);
    expect(lg[4]).toBe(-25);
    expect(() => seaLevelLayerAt(grids, s, 11)).toThrow(/outside/);
  });
});
