// The demo's in-situ sites stand where the demo's own reconstruction has land at their age
// (scripts/demo/demo-files.ts DEMO_SITES): the demo files go through the same readers as an upload
// and the same engine as the seeded reconstruction (scripts/seed.ts: the global curve, east ocean
// side, 2 m tidal range, 0.5 km² streams, picks unassessed beyond 600 m), at the two ages the
// sites' dates fall on. Without this, a change to the synthetic shelf or the engine could leave a
// site in the sea, and the demo's model and validation would quietly lose it.
import { describe, expect, it } from "vitest";
import { parseEvidence } from "../../app/evidence";
import { readGeoTiff } from "../../app/terrain/geotiff-read";
import { gridHorizon } from "../../app/terrain/horizon";
import { defaultGlobalCurve } from "../../app/terrain/sea-level";
import { inlineAgeRunner, reconstruct } from "../../app/terrain/reconstruct";
import { CLASS_LAND, CLASS_SEA } from "../../app/terrain/flooding";
import { DEMO_EPSG, DEMO_SITES, demoFiles } from "./demo-files";

/** The seeded reconstruction's ages (scripts/seed.ts). */
const SEED_AGES = [20, 16, 14, 12, 10, 8];
/** The model and validation match a dated site to the nearest reconstructed age within 1 ka (app/models.server.ts ageToleranceKa). */
function nearestAge(calFrom: number, calTo: number): number {
  const mid = (calFrom + calTo) / 2000;
  return SEED_AGES.reduce((best, a) => (Math.abs(a - mid) < Math.abs(best - mid) ? a : best));
}

describe("the demo's known sites", () => {
  it("are invented positions off the round hundreds, with precise positions and dates on 12 and 10 ka for the 2026 campaign", () => {
    const ids = DEMO_SITES.map((s) => s.id);
    expect(new Set(ids).size).toBe(ids.length);
    const campaign = DEMO_SITES.filter((s) => s.set === "2026");
    expect(campaign.length).toBe(12);
    for (const s of campaign) {
      expect(s.context).toBe("in_situ");
      expect(s.precisionM).toBeGreaterThanOrEqual(5);
      expect(s.precisionM).toBeLessThanOrEqual(25); // within the default adequate precision, one 25 m cell
      expect(s.calFrom! >= s.calTo! && s.calFrom! <= 12_400 && s.calTo! >= 9_600).toBe(true);
      expect([12, 10]).toContain(nearestAge(s.calFrom!, s.calTo!));
      // the browser tests look for these numbers in what a viewer receives; survey fixes sit on round hundreds
      expect(s.x % 100).not.toBe(0);
      expect(s.y % 100).not.toBe(0);
    }
    expect(campaign.filter((s) => nearestAge(s.calFrom!, s.calTo!) === 12).length).toBe(6);
  });

  it("in situ and dated stand on land at their age in the demo's reconstruction — all but the stake weir VEL-003, in the water at 10 ka", async () => {
    const files = demoFiles();
    const file = (name: string) => files.find((f) => f.fileName === name)!;
    const seabed = (await readGeoTiff(file("velmar-multibeam-25m.tif").bytes)).grid;
    const parsed = await parseEvidence("horizon_picks", file("velmar-ts-picks.csv").bytes, { fileName: "velmar-ts-picks.csv", projectEpsg: DEMO_EPSG });
    const rows = parsed.rows! as unknown as Array<{ lineId: string; x: number; y: number; depthBelowSeabedM: number }>;
    const horizon = gridHorizon(seabed.data, seabed.spec, { lineId: rows.map((r) => r.lineId), x: rows.map((r) => r.x), y: rows.map((r) => r.y), depthBelowSeabedM: rows.map((r) => r.depthBelowSeabedM) }, { unassessedBeyondM: 600, verticalResolutionM: 0.3 });
    const landClass = new Map<number, Uint8Array>();
    await reconstruct(
      { seabed, horizon: { name: "picks", result: horizon }, seaLevel: { kind: "curve", curve: defaultGlobalCurve() }, agesKa: [12, 10], oceanBoundary: { kind: "sides", sides: ["east"] }, tidalRangeM: 2, streamThresholdKm2: 0.5 },
      {
        runAges: inlineAgeRunner,
        sink: (l) => {
          if (l.name === "land_class" && l.ageKa !== null) landClass.set(l.ageKa, l.data as Uint8Array);
        },
      },
    );
    const { originX, originY, cellSizeX, cellSizeY, width } = seabed.spec;
    const classAt = (x: number, y: number, age: number) => landClass.get(age)![Math.floor((originY - y) / cellSizeY) * width + Math.floor((x - originX) / cellSizeX)];
    const dated = DEMO_SITES.filter((s) => s.context === "in_situ" && s.calFrom !== null && s.calTo !== null);
    expect(dated.length).toBe(16);
    const notLand = dated.filter((s) => classAt(s.x, s.y, nearestAge(s.calFrom!, s.calTo!)) !== CLASS_LAND).map((s) => s.id);
    expect(notLand).toEqual(["VEL-003"]);
    expect(classAt(486760, 5020330, 10)).toBe(CLASS_SEA);
    // …and the 2026 campaign's whole 7 × 7 cells around each site is land then: a nudge of the shoreline does not drown one
    for (const s of dated.filter((d) => d.set === "2026")) {
      const age = nearestAge(s.calFrom!, s.calTo!);
      for (let dy = -3; dy <= 3; dy++) for (let dx = -3; dx <= 3; dx++) expect(classAt(s.x + dx * cellSizeX, s.y + dy * cellSizeY, age), `${s.id} at ${age} ka`).toBe(CLASS_LAND);
    }
  });
});
