import { describe, expect, it } from "vitest";
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";
import {
  type ConstraintLayers,
  type ConstraintSet,
  checkConstraintSet,
  checkFeatureWidth,
  constraintMask,
  DEFAULT_COVER_TYPES,
  defaultConstraintSet,
  explainCell,
  penetrationTable,
  REASON_ALLOWED,
  REASON_EXCLUSION,
  REASON_FAR_FROM_LINE,
  REASON_HORIZON_BEYOND_PENETRATION,
  REASON_HORIZON_UNASSESSED,
  REASON_NARROWER_THAN_TOLERANCE,
  REASON_NODATA,
  REASON_OUTSIDE_SURVEY_AREA,
  REASON_TEXT,
  REASON_TOO_DEEP,
  REASON_TOO_SHALLOW,
  REASON_TOO_STEEP,
} from "./target-constraints.ts";

/** A w×h grid of one uniform cell, everything allowed by the default set unless changed. */
function uniform(w: number, h: number, over: Partial<Record<keyof ConstraintLayers, unknown>> = {}): ConstraintLayers {
  const n = w * h;
  return {
    grid: { width: w, height: h, cellSizeX: 10, cellSizeY: 10 },
    seabedElevationM: new Float32Array(n).fill(-30),
    seabedSlopeDeg: new Float32Array(n).fill(1),
    coverThicknessM: new Float32Array(n).fill(1.5),
    coverType: null,
    distSurveyLineM: new Float32Array(n).fill(20),
    surveyArea: null,
    exclusion: null,
    ...over,
  } as ConstraintLayers;
}

function loose(set: Partial<ConstraintSet> = {}): ConstraintSet {
  return { ...defaultConstraintSet(), positioningToleranceM: 0, ...set };
}

describe("constraintMask: facts of the trade", () => {
  it("refuses a core whose horizon plus the depth into the older unit lies beyond the refusal depth of its cover", () => {
    // practice (check-values.md "Facts of the trade"): gravel lag refuses at 1–3 m (default 1 m); a useful
    // core passes the cover and 0.5–1 m into the older unit (default 1 m). Cover 1.5 m + 1 m = 2.5 m.
    const gravel = DEFAULT_COVER_TYPES.findIndex((c) => c.id === "gravel_lag");
    const mud = DEFAULT_COVER_TYPES.findIndex((c) => c.id === "soft_mud");
    const coverType = new Uint8Array([gravel, mud, 255, mud]);
    const cover = new Float32Array([1.5, 1.5, 1.5, 5.5]);
    const r = constraintMask(loose(), uniform(4, 1, { coverType, coverThicknessM: cover }));
    expect(r.reason[0]).toBe(REASON_HORIZON_BEYOND_PENETRATION); // 2.5 m > 1 m (gravel lag)
    expect(r.reason[1]).toBe(REASON_ALLOWED); // 2.5 m ≤ 6 m barrel (soft mud: no early refusal)
    expect(r.reason[2]).toBe(REASON_ALLOWED); // unknown cover → default type (soft mud)
    expect(r.reason[3]).toBe(REASON_HORIZON_BEYOND_PENETRATION); // 6.5 m > the 6 m barrel (practice: barrels 3 or 6 m)
    // the same cover in a 3 m barrel: 2.5 m still fits, 3.5 m does not
    const r3 = constraintMask(
      loose({ barrelLengthM: 3, coverTypes: DEFAULT_COVER_TYPES.map((c) => ({ ...c })) }),
      uniform(2, 1, { coverThicknessM: new Float32Array([1.5, 2.5]) }),
    );
    expect([...r3.reason]).toEqual([REASON_ALLOWED, REASON_HORIZON_BEYOND_PENETRATION]);
  });

  it("tests the constraints in their stated order and names the first that fails", () => {
    const n = 11;
    const L = uniform(n, 1, {
      surveyArea: new Uint8Array(n).fill(1),
      exclusion: new Uint8Array(n),
    });
    L.seabedElevationM[1] = NaN; // nodata
    L.surveyArea![2] = 0; // outside, and also too deep: outside wins
    L.seabedElevationM[2] = -500;
    L.exclusion![3] = 1; // exclusion, and also too steep: exclusion wins
    L.seabedSlopeDeg[3] = 30;
    L.seabedElevationM[4] = -2; // 2 m of water < 5 m minimum
    L.seabedElevationM[5] = -200; // > 120 m maximum
    L.seabedSlopeDeg[6] = 10; // > 5°
    L.coverThicknessM![7] = NaN; // horizon unassessed
    L.coverThicknessM![8] = 5.5; // 6.5 m > 6 m barrel
    L.distSurveyLineM![9] = 400; // > 250 m
    L.distSurveyLineM![10] = NaN; // no distance: too far
    const r = constraintMask(loose(), L);
    expect([...r.reason]).toEqual([
      REASON_ALLOWED,
      REASON_NODATA,
      REASON_OUTSIDE_SURVEY_AREA,
      REASON_EXCLUSION,
      REASON_TOO_SHALLOW,
      REASON_TOO_DEEP,
      REASON_TOO_STEEP,
      REASON_HORIZON_UNASSESSED,
      REASON_HORIZON_BEYOND_PENETRATION,
      REASON_FAR_FROM_LINE,
      REASON_FAR_FROM_LINE,
    ]);
    expect(r.counts.reduce((a, b) => a + b, 0)).toBe(n);
    expect(r.counts[REASON_FAR_FROM_LINE]).toBe(2);
    expect(explainCell(loose(), L, r, 8)).toMatchObject({ reason: REASON_HORIZON_BEYOND_PENETRATION, plannedPenetrationM: 6.5, expectedPenetrationM: 6, coverTypeId: "soft_mud" });
    expect(explainCell(loose(), L, r, 5).text).toBe(REASON_TEXT[REASON_TOO_DEEP]);
  });

  it("allows limits exactly at the bounds, and cores an unassessed horizon to refusal when asked", () => {
    const L = uniform(3, 1);
    L.seabedElevationM.set([-5, -120, -30]);
    L.seabedSlopeDeg[0] = 5;
    L.coverThicknessM![2] = NaN;
    const r = constraintMask(loose({ unassessedHorizon: "core-to-refusal" }), L);
    expect([...r.allowed]).toEqual([1, 1, 1]);
    expect(explainCell(loose({ unassessedHorizon: "core-to-refusal" }), L, r, 2).plannedPenetrationM).toBe(6);
  });

  it("refuses allowed ground narrower than the positioning tolerance", () => {
    // a 1-cell-wide allowed strip (10 m cells) inside refused ground: with a 10 m tolerance every strip
    // cell is 10 m (centre to centre) from refused ground → refused; with 5 m it stays allowed
    const w = 7;
    const h = 7;
    const L = uniform(w, h, { exclusion: new Uint8Array(w * h).fill(1) });
    for (let r = 0; r < h; r++) L.exclusion![r * w + 3] = 0;
    expect(constraintMask(loose({ positioningToleranceM: 5 }), L).counts[REASON_ALLOWED]).toBe(h);
    const r10 = constraintMask(loose({ positioningToleranceM: 10.5 }), L);
    expect(r10.counts[REASON_ALLOWED]).toBe(0);
    expect(r10.counts[REASON_NARROWER_THAN_TOLERANCE]).toBe(h);
  });

  it("refuses a transect feature narrower than the positioning tolerance", () => {
    expect(() => checkFeatureWidth(8, 10)).toThrow(/narrower than the positioning tolerance of 10 m/);
    expect(() => checkFeatureWidth(10, 10)).not.toThrow();
  });
});

describe("constraint sets: bad input is named", () => {
  it("refuses impossible sets with the field", () => {
    const bad: Array<[Partial<ConstraintSet>, RegExp]> = [
      [{ minWaterDepthM: 50, maxWaterDepthM: 20 }, /minimum water depth \(50 m\) is greater/],
      [{ maxSlopeDeg: 0 }, /slope limit/],
      [{ barrelLengthM: -3 }, /barrel length/],
      [{ defaultCoverTypeId: "peat" }, /default cover type "peat"/],
      [{ coverTypes: [] }, /at least one row/],
      [{ barrelLengthM: 1.5 }, /longer than the barrel/],
      [{ requiredIntoOlderUnitM: NaN }, /required depth/],
    ];
    for (const [s, re] of bad) {
      const set = loose(s);
      expect(() => checkConstraintSet(set)).toThrow(ScoringInputError);
      expect(() => checkConstraintSet(set)).toThrow(re);
    }
  });

  it("asks for the survey-line layer when a distance limit is set without it", () => {
    expect(() => constraintMask(loose(), uniform(2, 2, { distSurveyLineM: null }))).toThrow(/dist_survey_line/);
    expect(constraintMask(loose({ maxDistanceToSurveyLineM: null }), uniform(2, 2, { distSurveyLineM: null })).counts[0]).toBe(4);
  });

  it("refuses a cover-type code the table does not have", () => {
    expect(() => constraintMask(loose(), uniform(2, 1, { coverType: new Uint8Array([0, 9]) }))).toThrow(/code 9/);
  });
});

describe("constraintMask: property over random constraint sets", () => {
  it("never allows a cell that breaks a constraint, and every refusal names a constraint that fails", () => {
    // common practice, no source: each constraint re-evaluated independently, tolerance by brute force
    const rng = new Mulberry32(20240611);
    const u = (a: number, b: number) => a + (b - a) * rng.next();
    for (let trial = 0; trial < 60; trial++) {
      const w = 6 + rng.nextInt(10);
      const h = 6 + rng.nextInt(10);
      const n = w * h;
      const dx = u(5, 50);
      const dy = u(5, 50);
      const coverTypes = DEFAULT_COVER_TYPES.map((c) => ({ ...c }));
      const minD = u(0, 40);
      const set: ConstraintSet = {
        minWaterDepthM: minD,
        maxWaterDepthM: minD + u(0, 80),
        maxSlopeDeg: u(0.5, 10),
        barrelLengthM: rng.next() < 0.5 ? 3 : 6,
        requiredIntoOlderUnitM: u(0.5, 1),
        coverTypes: coverTypes.map((c) => ({ ...c, expectedPenetrationM: c.expectedPenetrationM === null ? null : Math.min(c.expectedPenetrationM, 3) })),
        defaultCoverTypeId: coverTypes[rng.nextInt(coverTypes.length)].id,
        maxDistanceToSurveyLineM: rng.next() < 0.3 ? null : u(0, 400),
        positioningToleranceM: rng.next() < 0.3 ? 0 : u(0, 60),
        unassessedHorizon: rng.next() < 0.5 ? "refuse" : "core-to-refusal",
      };
      const noHorizon = rng.next() < 0.15;
      const L: ConstraintLayers = {
        grid: { width: w, height: h, cellSizeX: dx, cellSizeY: dy },
        seabedElevationM: Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? NaN : -u(0, 130))),
        seabedSlopeDeg: Float32Array.from({ length: n }, () => u(0, 12)),
        coverThicknessM: noHorizon ? null : Float32Array.from({ length: n }, () => (rng.next() < 0.1 ? NaN : u(0, 6))),
        coverType: rng.next() < 0.5 ? null : Uint8Array.from({ length: n }, () => (rng.next() < 0.2 ? 255 : rng.nextInt(coverTypes.length))),
        distSurveyLineM: Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? NaN : u(0, 600))),
        surveyArea: rng.next() < 0.5 ? null : Uint8Array.from({ length: n }, () => (rng.next() < 0.9 ? 1 : 0)),
        exclusion: rng.next() < 0.5 ? null : Uint8Array.from({ length: n }, () => (rng.next() < 0.1 ? 1 : 0)),
      };
      const r = constraintMask(set, L);
      const pen = penetrationTable(set);
      const fails = (i: number): boolean[] => {
        const e = L.seabedElevationM[i];
        const c = L.coverThicknessM?.[i] ?? NaN;
        const p = pen[L.coverType?.[i] ?? 255];
        const dl = L.distSurveyLineM![i];
        return [
          false,
          Number.isNaN(e),
          L.surveyArea !== null && L.surveyArea[i] !== 1,
          L.exclusion !== null && L.exclusion[i] === 1,
          -e < set.minWaterDepthM,
          -e > set.maxWaterDepthM,
          L.seabedSlopeDeg[i] > set.maxSlopeDeg,
          L.coverThicknessM !== null && Number.isNaN(c) && set.unassessedHorizon === "refuse",
          L.coverThicknessM !== null && !Number.isNaN(c) && c + set.requiredIntoOlderUnitM > p,
          set.maxDistanceToSurveyLineM !== null && !(dl <= set.maxDistanceToSurveyLineM),
        ];
      };
      const refusedBefore = new Uint8Array(n); // refused by one of the constraints before the tolerance test
      for (let i = 0; i < n; i++) refusedBefore[i] = fails(i).some(Boolean) ? 1 : 0;
      for (let i = 0; i < n; i++) {
        const f = fails(i);
        const code = r.reason[i];
        expect(r.allowed[i]).toBe(code === REASON_ALLOWED ? 1 : 0);
        if (code === REASON_NARROWER_THAN_TOLERANCE || code === REASON_ALLOWED) {
          expect(f.some(Boolean)).toBe(false);
          // brute force: nearest refused cell centre
          let near = Infinity;
          const ci = i % w;
          const ri = Math.floor(i / w);
          for (let j = 0; j < n; j++)
            if (refusedBefore[j]) near = Math.min(near, Math.hypot(((j % w) - ci) * dx, (Math.floor(j / w) - ri) * dy));
          if (code === REASON_ALLOWED) expect(near + 1e-3 * Math.min(dx, dy)).toBeGreaterThanOrEqual(set.positioningToleranceM);
          else expect(near - 1e-3 * Math.min(dx, dy)).toBeLessThan(set.positioningToleranceM);
        } else {
          expect(f[code]).toBe(true);
          for (let k = 1; k < code; k++) expect(f[k]).toBe(false);
        }
      }
    }
  });
});
