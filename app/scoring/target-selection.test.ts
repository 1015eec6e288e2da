import { describe, expect, it } from "vitest";
import { resolveCrs } from "../terrain/crs.ts";
import { ScoringInputError } from "./errors.ts";
import { Mulberry32 } from "./random.ts";
import { type ConstraintLayers, type ConstraintSet, constraintMask, DEFAULT_COVER_TYPES, defaultConstraintSet } from "./target-constraints.ts";
import {
  cellAt,
  cellCentre,
  countsFromShares,
  describeTargets,
  formatAgeRuns,
  formatDdm,
  horizonUncertainty,
  type PlacedGrid,
  type Pick,
  SpacingState,
  selectBestFirst,
  selectControl,
  selectTargets,
  selectTransect,
  SurveyLineIndex,
  type TargetContext,
  twoWayTimeMs,
  voteSpread,
  waypointName,
} from "./target-selection.ts";
import { weightedLinearCombination } from "./weighted-sum.ts";

function grid(w: number, h: number, cell = 10, originX = 500_000, originY = 6_300_000): PlacedGrid {
  return { width: w, height: h, cellSizeX: cell, cellSizeY: cell, originX, originY };
}

function minPairDistance(picks: readonly Pick[]): number {
  let m = Infinity;
  for (let a = 0; a < picks.length; a++)
    for (let b = a + 1; b < picks.length; b++) m = Math.min(m, Math.hypot(picks[a].x - picks[b].x, picks[a].y - picks[b].y));
  return m;
}

/** Independent greedy by brute force: O(n²). */
function bruteGreedy(g: PlacedGrid, allowed: Uint8Array, key: Float32Array, spacing: number, count: number): number[] {
  const cells = [...key.keys()].filter((i) => allowed[i] === 1 && !Number.isNaN(key[i])).sort((a, b) => key[b] - key[a] || a - b);
  const out: number[] = [];
  for (const c of cells) {
    if (out.length >= count) break;
    const [x, y] = cellCentre(g, c);
    if (out.every((o) => Math.hypot(cellCentre(g, o)[0] - x, cellCentre(g, o)[1] - y) >= spacing)) out.push(c);
  }
  return out;
}

describe("cells and coordinates", () => {
  it("puts cell centres half a cell in from the top-left corner, row 0 north", () => {
    const g = grid(4, 3, 10);
    expect(cellCentre(g, 0)).toEqual([500_005, 6_299_995]);
    expect(cellCentre(g, 7)).toEqual([500_035, 6_299_985]);
    expect(cellAt(g, 500_035, 6_299_985)).toBe(7);
    expect(cellAt(g, 499_999, 6_299_995)).toBe(-1);
  });

  it("formats degrees and decimal minutes with the hemisphere", () => {
    // formula: 0.5125° × 60 = 30.750′
    expect(formatDdm(-33.5125, "lat")).toBe("33°30.750′S");
    expect(formatDdm(151.25, "lon")).toBe("151°15.000′E");
    expect(formatDdm(-4.0875, "lon")).toBe("4°05.250′W");
    // formula: 59.99999′ rounds to 60.000′ → carries into the next degree
    expect(formatDdm(12 + 59.99999 / 60, "lat")).toBe("13°00.000′N");
    expect(formatDdm(-1e-9, "lat")).toBe("0°00.000′N");
    expect(formatDdm(0.5, "lat", 1)).toBe("0°30.0′N");
    expect(() => formatDdm(91, "lat")).toThrow(ScoringInputError);
  });

  it("gives two-way time from depth below seabed", () => {
    // formula (check-values.md "Sub-bottom picks"): thickness = v·TWT/2 → 2.0 m at 1600 m/s ↔ 2.5 ms; 7.5 m at 1500 ↔ 10 ms
    expect(twoWayTimeMs(2.0, 1600)).toBeCloseTo(2.5, 12);
    expect(twoWayTimeMs(7.5, 1500)).toBeCloseTo(10, 12);
    expect(twoWayTimeMs(8.5, 1700)).toBeCloseTo(10, 12);
  });

  it("names waypoints with a prefix and a padded rank", () => {
    expect(waypointName("CT", 1, 40)).toBe("CT01");
    expect(waypointName("CT", 7, 120)).toBe("CT007");
  });

  it("splits a total between modes by largest remainder", () => {
    // formula (Hamilton's method): 10 × (0.7, 0.2, 0.1) = 7, 2, 1; 7 × thirds = 2.33 each → 3, 2, 2
    expect(countsFromShares(10, [0.7, 0.2, 0.1])).toEqual([7, 2, 1]);
    expect(countsFromShares(7, [1, 1, 1])).toEqual([3, 2, 2]);
    expect(countsFromShares(0, [1, 2])).toEqual([0, 0]);
    expect(() => countsFromShares(5, [0, 0])).toThrow(/at least one above zero/);
  });

  it("writes age runs over the reconstruction's own ages", () => {
    expect(formatAgeRuns([20, 18, 16, 14, 12, 10, 8], [20, 18, 16, 10])).toBe("20–16 ka, 10 ka");
    expect(formatAgeRuns([20, 10], [])).toBe("never land in the reconstructed ages");
  });
});

describe("best-first with a minimum spacing", () => {
  it("takes the best cell, then the best cell far enough from it, as a brute-force greedy does", () => {
    // common practice, no source: greedy suppression checked against an O(n²) brute force
    const rng = new Mulberry32(11);
    for (let t = 0; t < 30; t++) {
      const g = grid(5 + rng.nextInt(25), 5 + rng.nextInt(25), 5 + rng.next() * 40);
      const n = g.width * g.height;
      const allowed = Uint8Array.from({ length: n }, () => (rng.next() < 0.7 ? 1 : 0));
      const key = Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? NaN : Math.round(rng.next() * 20) / 20));
      const spacing = rng.next() * 8 * g.cellSizeX;
      const count = 1 + rng.nextInt(30);
      const st = new SpacingState(g, allowed, spacing);
      const picks = selectBestFirst(st, key, count);
      expect(picks.map((p) => p.cell)).toEqual(bruteGreedy(g, allowed, key, spacing, count));
    }
  });

  it("respects the spacing exactly at the boundary: a pair exactly the spacing apart is kept", () => {
    const g = grid(5, 1, 100);
    const key = new Float32Array([0.9, 0.8, 0.7, 0.6, 0.5]);
    const picks = selectBestFirst(new SpacingState(g, new Uint8Array(5).fill(1), 200), key, 5);
    expect(picks.map((p) => p.cell)).toEqual([0, 2, 4]);
  });
});

describe("control cores and learn most", () => {
  it("draws control cores only from the wanted classes, evenly, reproducibly from the seed", () => {
    const g = grid(30, 30, 10);
    const n = 900;
    const classes = Uint8Array.from({ length: n }, (_, i) => i % 4);
    const score = Float32Array.from({ length: n }, (_, i) => 1 - (i % 4) / 4);
    const allowed = new Uint8Array(n).fill(1);
    const run = (seed: number) => selectControl(new SpacingState(g, allowed, 25), classes, [2, 3], 10, seed, score);
    const a = run(5);
    expect(a).toHaveLength(10);
    expect(a.every((p) => classes[p.cell] === 2 || classes[p.cell] === 3)).toBe(true);
    expect(a.filter((p) => p.classIndex === 2)).toHaveLength(5);
    expect(a.map((p) => p.cell)).toEqual(run(5).map((p) => p.cell));
    expect(a.map((p) => p.cell)).not.toEqual(run(6).map((p) => p.cell));
    expect(minPairDistance(a)).toBeGreaterThanOrEqual(25);
  });

  it("measures uncertainty as vote spread and as distance from picks", () => {
    // formula: p(1 − p) is 0 at 0 and 1, 0.25 at 0.5, 0.21 at 0.3
    expect([...voteSpread(new Float32Array([0, 0.5, 1, 0.3]))].map((v) => Number(v.toFixed(6)))).toEqual([0, 0.25, 0, 0.21]);
    expect(Number.isNaN(voteSpread(new Float32Array([NaN]))[0])).toBe(true);
    const u = horizonUncertainty(new Float32Array([0, 250, 2000, NaN, NaN]), new Uint8Array([0, 0, 0, 1, 0]), 500);
    expect([...u.slice(0, 4)]).toEqual([0, 0.5, 1, 1]);
    expect(Number.isNaN(u[4])).toBe(true);
  });
});

describe("transects across a mapped feature", () => {
  // an east–west channel axis through the middle of a 60 × 60 grid of 10 m cells
  const g = grid(60, 60, 10, 0, 600);
  const allowed = new Uint8Array(3600).fill(1);
  const req = {
    name: "Channel A",
    axis: [
      [0, 300],
      [600, 300],
    ] as Array<[number, number]>,
    featureWidthM: 40,
    marginWidthM: 60,
    halfLengthM: 200,
    stationSpacingM: 50,
    chainagesM: [105, 405],
  };

  it("places stations across the axis, axis first, with their roles", () => {
    const r = selectTransect(new SpacingState(g, allowed, 50), req, 10);
    // 2 transects × (1 + 2·4) stations at offsets 0, ±50, …, ±200
    expect(r.picks).toHaveLength(18);
    expect(r.skipped).toBe(0);
    const first = r.picks.filter((p) => p.transect!.number === 1);
    expect(first[0].transect).toMatchObject({ offsetM: 0, role: "axis" });
    // the perpendicular to an eastward axis runs north–south: x stays on the chainage's cell centre
    for (const p of first) expect(p.x).toBe(105);
    const roles = first.map((p) => [p.transect!.offsetM, p.transect!.role]);
    expect(roles).toContainEqual([50, "margin"]); // 20 < 50 ≤ 20 + 60
    expect(roles).toContainEqual([-100, "interfluve"]);
    expect(minPairDistance(r.picks)).toBeGreaterThanOrEqual(50);
  });

  it("crosses a bent axis on the segment holding the chainage, skipping repeated vertices", () => {
    const bent = {
      ...req,
      axis: [
        [0, 300],
        [300, 300],
        [300, 300],
        [300, 0],
      ] as Array<[number, number]>,
      halfLengthM: 0,
      chainagesM: [150, 300, 450, 600],
    };
    const r = selectTransect(new SpacingState(g, allowed, 50), bent, 10);
    // formula: 150 m along the first leg → (150, 300); 300 m → the corner, on the second leg (the one that
    // starts there); 450 m → (300, 150); 600 m → the end (300, 0), which is the grid's southern edge: off the grid
    expect(r.picks.map((p) => [p.x, p.y])).toEqual([
      [155, 295],
      [305, 295],
      [305, 145],
    ]);
    expect(r.skipped).toBe(1);
  });

  it("skips stations on refused ground and refuses bad requests with the reason", () => {
    const holes = allowed.slice();
    holes[cellAt(g, 105, 300)] = 0; // the first axis station
    const r = selectTransect(new SpacingState(g, holes, 50), req, 10);
    expect(r.picks).toHaveLength(17);
    expect(r.notes[0]).toMatch(/1 station of "Channel A"/);
    expect(() => selectTransect(new SpacingState(g, allowed, 50), { ...req, featureWidthM: 8 }, 10)).toThrow(/narrower than the positioning tolerance/);
    expect(() => selectTransect(new SpacingState(g, allowed, 80), req, 10)).toThrow(/below the minimum spacing/);
    expect(() => selectTransect(new SpacingState(g, allowed, 50), { ...req, chainagesM: [900] }, 10)).toThrow(/600.0 m long/);
  });
});

describe("mixed selection: properties over random constraint sets", () => {
  it("every pair of targets respects the spacing and no target violates a constraint", () => {
    // common practice, no source: spacing by brute force over all pairs; constraints by the reason layer
    const rng = new Mulberry32(77);
    const u = (a: number, b: number) => a + (b - a) * rng.next();
    const taken = { transect: 0, "best-first": 0, control: 0, "learn-most": 0 };
    for (let t = 0; t < 25; t++) {
      const w = 20 + rng.nextInt(30);
      const h = 20 + rng.nextInt(30);
      const n = w * h;
      const cell = u(10, 40);
      const g = grid(w, h, cell);
      const set: ConstraintSet = {
        ...defaultConstraintSet(),
        minWaterDepthM: u(0, 30),
        maxWaterDepthM: u(40, 120),
        maxSlopeDeg: u(1, 8),
        barrelLengthM: rng.next() < 0.5 ? 3 : 6,
        coverTypes: DEFAULT_COVER_TYPES.map((c) => ({ ...c })),
        maxDistanceToSurveyLineM: u(50, 500),
        positioningToleranceM: u(0, 1.5 * cell),
      };
      const layers: ConstraintLayers = {
        grid: g,
        // mostly workable ground with scattered refusals of every kind, so transects find stations
        seabedElevationM: Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? -u(0, 130) : -u(30, 40))),
        seabedSlopeDeg: Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? u(0, 10) : u(0, 1))),
        coverThicknessM: Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? NaN : u(0, 1.5))),
        coverType: Uint8Array.from({ length: n }, () => (rng.next() < 0.05 ? rng.nextInt(DEFAULT_COVER_TYPES.length) : 0)),
        distSurveyLineM: Float32Array.from({ length: n }, () => (rng.next() < 0.05 ? u(0, 700) : u(0, 50))),
        surveyArea: null,
        exclusion: Uint8Array.from({ length: n }, () => (rng.next() < 0.02 ? 1 : 0)),
      };
      const cm = constraintMask(set, layers);
      const score = Float32Array.from({ length: n }, () => (rng.next() < 0.1 ? NaN : rng.next()));
      const classes = Uint8Array.from(score, (s) => (Number.isNaN(s) ? 255 : s >= 0.75 ? 0 : s >= 0.5 ? 1 : s >= 0.25 ? 2 : 3));
      const spacing = u(0, 6) * cell;
      const res = selectTargets(
        { grid: g, allowed: cm.allowed, score, classes, uncertainty: Float32Array.from({ length: n }, () => rng.next()) },
        [
          {
            kind: "transect",
            transect: {
              name: "T",
              axis: [
                [g.originX, g.originY - (h * cell) / 2],
                [g.originX + w * cell, g.originY - (h * cell) / 3],
              ],
              featureWidthM: 3 * cell,
              marginWidthM: 2 * cell,
              halfLengthM: 10 * cell,
              stationSpacingM: Math.max(spacing, cell),
              chainagesM: [(w * cell) / 3],
            },
          },
          { kind: "best-first", count: 8 },
          { kind: "control", count: 4, classes: [2, 3], seed: t },
          { kind: "learn-most", count: 3 },
        ],
        { minSpacingM: spacing, positioningToleranceM: set.positioningToleranceM },
      );
      expect(res.modes.map((m) => m.kind)).toEqual(["transect", "best-first", "control", "learn-most"]);
      expect(res.modes.reduce((s, m) => s + m.taken, 0)).toBe(res.picks.length);
      expect(minPairDistance(res.picks)).toBeGreaterThanOrEqual(spacing);
      for (const p of res.picks) {
        expect(cm.reason[p.cell]).toBe(0);
        expect(cellCentre(g, p.cell)).toEqual([p.x, p.y]);
      }
      for (const p of res.picks.filter((q) => q.mode === "control")) expect([2, 3]).toContain(classes[p.cell]);
      for (const p of res.picks) taken[p.mode]++;
    }
    // the property is not vacuous: every mode placed targets over the trials
    for (const k of Object.values(taken)) expect(k).toBeGreaterThan(10);
  });

  it("says what it could not find, and what a mode needs", () => {
    const g = grid(3, 3, 10);
    const allowed = new Uint8Array(9).fill(1);
    const score = new Float32Array(9).fill(0.5);
    const r = selectTargets({ grid: g, allowed, score }, [{ kind: "best-first", count: 5 }], { minSpacingM: 30, positioningToleranceM: 0 });
    // 3 × 3 cells of 10 m: the farthest centres are 28.3 m apart, under the 30 m spacing
    expect(r.picks).toHaveLength(1);
    expect(r.notes[0]).toMatch(/1 of 5 found/);
    expect(() => selectTargets({ grid: g, allowed, score }, [{ kind: "learn-most", count: 1 }], { minSpacingM: 0, positioningToleranceM: 0 })).toThrow(/uncertainty layer/);
    expect(() => selectTargets({ grid: g, allowed, score }, [{ kind: "control", count: 1, classes: [2], seed: 1 }], { minSpacingM: 0, positioningToleranceM: 0 })).toThrow(
      /classified/,
    );
  });
});

describe("survey lines", () => {
  it("finds the nearest line and fix as a brute force does", () => {
    const rng = new Mulberry32(3);
    const lines = Array.from({ length: 6 }, (_, l) => ({
      name: `L${l}`,
      fixes: Array.from({ length: 2 + rng.nextInt(12) }, (_, k) => ({ x: rng.next() * 5000, y: rng.next() * 5000, fix: `${l}-${k}` })),
    }));
    const index = new SurveyLineIndex(lines);
    for (let q = 0; q < 200; q++) {
      const x = rng.next() * 6000 - 500;
      const y = rng.next() * 6000 - 500;
      let best = Infinity;
      for (const l of lines)
        for (let k = 0; k + 1 < l.fixes.length; k++) {
          const a = l.fixes[k];
          const b = l.fixes[k + 1];
          const dx = b.x - a.x;
          const dy = b.y - a.y;
          const tt = Math.max(0, Math.min(1, ((x - a.x) * dx + (y - a.y) * dy) / (dx * dx + dy * dy)));
          best = Math.min(best, Math.hypot(x - a.x - tt * dx, y - a.y - tt * dy));
        }
      const r = index.nearest(x, y)!;
      expect(r.distanceM).toBeCloseTo(best, 6);
      const line = lines.find((l) => l.name === r.line)!;
      const fixD = Math.min(...line.fixes.map((f) => Math.hypot(f.x - x, f.y - y)));
      expect(r.fixDistanceM).toBeCloseTo(fixD, 6);
    }
    expect(new SurveyLineIndex([]).nearest(0, 0)).toBeNull();
  });
});

describe("describeTargets", () => {
  it("fills in coordinates, depths, penetration, line, exclusions, land ages and contributions", () => {
    // UTM zone 56 south (EPSG:32756): the central meridian is 153° E, the false northing 10 000 km, so the
    // point (500 000, 10 000 000) is 0°, 153° E (formula: the definition of the projection)
    const crs = resolveCrs(32756);
    const g = grid(3, 2, 100, 499_850, 10_000_100);
    const n = 6;
    const set: ConstraintSet = defaultConstraintSet();
    const picks: Pick[] = [{ cell: 1, ...xy(g, 1), mode: "best-first", key: 0.8 }, { cell: 4, ...xy(g, 4), mode: "transect", key: -50, transect: { name: "Channel A", number: 1, offsetM: -50, role: "margin" } }];
    expect([picks[0].x, picks[0].y]).toEqual([500_000, 10_000_050]);
    const f1 = Float32Array.from({ length: n }, (_, i) => i / 10);
    const f2 = Float32Array.from({ length: n }, (_, i) => 1 - i / 10);
    const factors = [
      { name: "dist_river", weight: 3, scores: f1 },
      { name: "tpi", weight: 1, scores: f2 },
    ];
    const ctx: TargetContext = {
      grid: g,
      crs,
      score: new Float32Array([0.1, 0.8, 0.3, 0.2, 0.6, 0.4]),
      seabedElevationM: new Float32Array([-20, -32.5, -20, -20, -40, -20]),
      coverThicknessM: new Float32Array([1, 2, 1, 1, NaN, 1]),
      coverType: null,
      constraints: set,
      velocityMps: 1600,
      surveyLines: [{ name: "L7", fixes: [{ x: 499_000, y: 10_000_000, fix: "SP100" }, { x: 501_500, y: 10_000_000, fix: "SP200" }] }],
      exclusions: [
        { name: "Wreck 3", kind: "wreck", bufferM: 100, parts: [[[500_300, 10_000_050]]] },
        { name: "Anomaly 9", kind: "anomaly", bufferM: 50, parts: [[[510_000, 10_000_050]]] },
      ],
      nearbyExclusionM: 500,
      agesKa: [20, 14, 10],
      landClassByAge: [new Uint8Array(n).fill(0), new Uint8Array([1, 2, 1, 1, 0, 1]), new Uint8Array(n).fill(1)],
      factors,
      waypointPrefix: "CT",
    };
    const [a, b] = describeTargets(picks, ctx);
    expect(a.waypoint).toBe("CT01");
    expect(b.rank).toBe(2);
    expect(a.lon).toBeCloseTo(153, 9);
    // formula: 50 m of northing above the false northing lies north of the equator, ≈ 50 / 110 574 m per
    // degree of meridian arc ≈ 0.000452° N (the 0.9996 scale factor changes it by 2e-7°, below the tolerance)
    expect(a.lat).toBeCloseTo(50 / 110_574, 5);
    expect(a.latDdm).toBe(formatDdm(a.lat, "lat"));
    expect(a.lonDdm).toBe("153°00.000′E");
    expect(a.waterDepthM).toBe(32.5);
    expect(a.horizonDepthM).toBe(2);
    expect(a.horizonTwtMs).toBeCloseTo(2.5, 9); // check-values.md: 2.0 m at 1600 m/s ↔ 2.5 ms
    expect(a.plannedPenetrationM).toBe(3); // 2 m cover + 1 m into the older unit (practice default)
    expect(a.expectedPenetrationM).toBe(6); // soft mud (default): the 6 m barrel
    expect(b.horizonDepthM).toBeNull();
    expect(b.plannedPenetrationM).toBe(6); // unassessed: cored to refusal
    expect(b.modeDetail).toBe("Channel A transect 1, margin, −50 m");
    expect(a.nearestLine).toEqual({ line: "L7", distanceM: 50, fix: "SP100", fixDistanceM: Math.hypot(1000, 50) });
    expect(a.nearbyExclusions).toEqual([{ name: "Wreck 3", kind: "wreck", distanceM: 300, bufferM: 100 }]);
    expect(a.landAgesKa).toEqual([20, 14]);
    expect(b.landAgesKa).toEqual([20, 14]);
    // Malczewski (2000) WLC: Σ w·s equals the repo's weighted linear combination at the cell
    const wlc = weightedLinearCombination(factors, null);
    expect(a.occupation).toBeCloseTo(wlc[1], 6);
    expect(a.contributions.map((c) => c.weight)).toEqual([0.75, 0.25]);
    expect(a.contributions[0].contribution).toBeCloseTo(0.75 * 0.1, 6);
    expect(a.contributions.reduce((s, c) => s + c.contribution, 0)).toBeCloseTo(a.occupation!, 12);
    expect(a.score).toBeCloseTo(0.8, 6);
  });
});

function xy(g: PlacedGrid, cell: number): { x: number; y: number } {
  const [x, y] = cellCentre(g, cell);
  return { x, y };
}
