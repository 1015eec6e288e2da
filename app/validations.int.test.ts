// Validation end to end with the real database and storage: hand-made potential rasters published
// as scorings, hand-made site records and cores, the API routes called as a browser would. The
// gain, capture and AUC cases are check-values.md's (Kvamme 1988; Hanley & McNeil 1982).
import { beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { db } from "~/db.server";
import { auditLog, datasets, projects, reconstructions, scorings, siteRecords, validations } from "~/db/schema";
import { store } from "~/storage.server";
import { writeGeoTiff } from "~/terrain/geotiff-write";
import { resolveCrs } from "~/terrain/crs";
import { createWeightSet } from "~/weight-sets.server";
import { ageWindowOf, computeValidation, placeEvidence } from "~/validations.server";
import { fixedClassification } from "~/scoring/classification";
import * as apiValidation from "~/routes/api.scoring-validation";
import * as apiClassification from "~/routes/api.project-classification";
import * as apiHoldout from "~/routes/api.project-holdout";
import { buildWorld, call, headersFor, type World } from "../tests/support/world";

const ORIGIN_X = 480_000;
const ORIGIN_Y = 5_030_000;
const CELL = 25;
const W = 10;
const H = 10;
/** the centre of cell i in the project CRS */
const centre = (i: number) => ({ x: ORIGIN_X + ((i % W) + 0.5) * CELL, y: ORIGIN_Y - (Math.floor(i / W) + 0.5) * CELL });

let world: World;
let gainScoringId: number;
let aucScoringId: number;
let sitesDatasetId: number;
const gainSiteIds: number[] = [];

async function publishScoring(reconstructionId: number, versionId: number, ageKa: number, potential: Float32Array, unassessed: Uint8Array | null) {
  const crs = resolveCrs(32733);
  const spec = { width: W, height: H, originX: ORIGIN_X, originY: ORIGIN_Y, cellSizeX: CELL, cellSizeY: CELL, crs: { epsg: crs.epsg, proj4: crs.proj4 } };
  const prefix = `scorings/p${world.projectId}/hand-${ageKa}`;
  const nodata = Uint8Array.from(potential, (v) => (v !== v ? 1 : 0));
  await store().put(`${prefix}/potential.tif`, writeGeoTiff({ spec, data: potential, nodata }), "image/tiff");
  const files = [{ name: "potential", file: "potential.tif" }];
  if (unassessed) {
    await store().put(`${prefix}/unassessed.tif`, writeGeoTiff({ spec, data: unassessed, nodata: new Uint8Array(W * H) }), "image/tiff");
    files.push({ name: "unassessed", file: "unassessed.tif" });
  }
  const [s] = await db()
    .insert(scorings)
    .values({
      projectId: world.projectId,
      reconstructionId,
      weightSetVersionId: versionId,
      target: { kind: "age", ageKa },
      inputsHash: `hand-${ageKa}`,
      status: "published",
      layerPrefix: prefix,
      publishedAt: new Date(),
      result: { grid: { width: W, height: H, originX: ORIGIN_X, originY: ORIGIN_Y, cellSizeX: CELL, cellSizeY: CELL }, files },
    })
    .returning({ id: scorings.id });
  return s.id;
}

async function addSite(label: string, cell: number, o: { context?: string; precisionM?: number | null; from?: number | null; to?: number | null; visibility?: "normal" | "restricted" | "withheld" } = {}) {
  const { x, y } = centre(cell);
  const [r] = await db()
    .insert(siteRecords)
    .values({
      projectId: world.projectId,
      datasetId: sitesDatasetId,
      rowNumber: 1,
      label,
      x,
      y,
      precisionM: o.precisionM === undefined ? 5 : o.precisionM,
      context: o.context ?? "in_situ",
      calBpFrom: o.from === undefined ? 10_500 : o.from,
      calBpTo: o.to === undefined ? 10_200 : o.to,
      visibility: o.visibility ?? "normal",
    })
    .returning({ id: siteRecords.id });
  return r.id;
}

type Row = { key: string; label: string; used: boolean; reason: string | null; className: string | null; score: number | null; x?: number; y?: number };
type Gain = { label: string; areaShare: number; sites: number; gain: { estimate: number | string; lower: number | string; upper: number | string }; cumulative: { gain: { estimate: number | string } } | null };
interface Body {
  validation: {
    status: string;
    counts: { presences: number; sites: number; cores: number; withScore: number; inUnassessed: number };
    gain: { rows: Gain[]; unassessed: Gain | null };
    capture: { points: { areaShare: number; siteShare: number }[] };
    auc: { estimate: number; lower: number; upper: number; presences: number; background: number } | null;
    evidence: Row[];
    holdout: { heldOut: number; revealed: boolean };
    surveyArea: { datasets: string[]; note: string };
    area: { landCells: number };
    reused: boolean;
    inputsHash: string;
    set: string;
  };
  error?: { message: string };
}

async function validation(who: "lead" | "analyst" | "viewer", scoringId: number, query = ""): Promise<{ status: number; body: Body; text: string }> {
  const res = await call(apiValidation.loader, `/api/scorings/${scoringId}/validation${query}`, { headers: headersFor(world, who), params: { id: String(scoringId) } });
  const text = await res.text();
  return { status: res.status, body: JSON.parse(text) as Body, text };
}

beforeAll(async () => {
  world = await buildWorld("val");
  const [rec] = await db()
    .insert(reconstructions)
    .values({ projectId: world.projectId, inputsHash: "hand", params: {}, engineVersion: "hand", status: "published", manifest: { agesKa: [8, 10, 12] }, publishedAt: new Date() })
    .returning({ id: reconstructions.id });
  const { version } = await createWeightSet({ projectId: world.projectId, name: "Hand-made", userId: world.userIds.analyst });
  const [d] = await db()
    .insert(datasets)
    .values({ projectId: world.projectId, kind: "known_sites", name: "Hand sites", format: "csv", originalKey: "x", originalName: "x.csv", sizeBytes: 1, sha256: "s", derivedKey: "x", derivedFormat: "json", crsEpsg: 32733, count: 0 })
    .returning({ id: datasets.id });
  sitesDatasetId = d.id;

  // Scoring at 10 ka (window 9–11 ka): three zones — 10 cells at 0.9, 30 at 0.6, 60 at 0.2 — i.e.
  // areas 0.10 / 0.30 / 0.60 (check-values.md, Kvamme's gain case).
  const gainPotential = new Float32Array(W * H);
  for (let i = 0; i < W * H; i++) gainPotential[i] = i < 10 ? 0.9 : i < 40 ? 0.6 : 0.2;
  gainScoringId = await publishScoring(rec.id, version.id, 10, gainPotential, null);
  // 24 / 12 / 4 of 40 in-situ sites (dated 10.2–10.5 ka) in the high / medium / low zones
  for (let k = 0; k < 24; k++) gainSiteIds.push(await addSite(`H${k}`, k % 10));
  for (let k = 0; k < 12; k++) gainSiteIds.push(await addSite(`M${k}`, 10 + k));
  for (let k = 0; k < 4; k++) gainSiteIds.push(await addSite(`L${k}`, 40 + k));
  // finds that must never enter gain: derived, trawled, dredged, unknown context — all on high cells
  await addSite("Derived-1", 0, { context: "derived" });
  await addSite("Trawled-1", 1, { context: "trawled" });
  await addSite("Dredged-1", 2, { context: "dredged" });
  await addSite("Unknown-1", 3, { context: "unknown" });
  // an imprecise in-situ site, an undated one, one withheld by its custodian: not scored either
  await addSite("Imprecise-1", 4, { precisionM: 500 });
  await addSite("Undated-1", 5, { from: null, to: null });
  await addSite("Withheld-1", 6, { visibility: "withheld" });

  // Scoring at 12 ka (window 11–13 ka): the AUC case's background values on 10 cells, the sites'
  // values on 5 more, every other cell sea (NaN). Four sites and one core with archaeological
  // material sit on the five; a core without material sits on the highest cell.
  const aucPotential = new Float32Array(W * H).fill(NaN);
  const background = [0.75, 0.5, 0.4, 0.3, 0.2, 0.1, 0.65, 0.55, 0.25, 0.15];
  const sitesAt = [0.9, 0.8, 0.7, 0.6, 0.35];
  background.forEach((v, k) => (aucPotential[50 + k] = v));
  sitesAt.forEach((v, k) => (aucPotential[60 + k] = v));
  // one unassessed cell (NaN potential, unassessed = 1) — its own class
  const unassessed = new Uint8Array(W * H);
  unassessed[70] = 1;
  aucScoringId = await publishScoring(rec.id, version.id, 12, aucPotential, unassessed);
  for (let k = 0; k < 4; k++) await addSite(`A${k}`, 60 + k, { from: 12_300, to: 12_000 });
  const cores = {
    rows: [
      { coreId: "C-pos", ...centre(64), archaeologicalIndicators: "burnt flint", dates: [{ calBpFrom: 12_200, calBpTo: 12_050 }] },
      { coreId: "C-neg", ...centre(60), archaeologicalIndicators: null, dates: [{ calBpFrom: 12_200, calBpTo: 12_050 }] },
    ],
  };
  await store().put("datasets/hand-cores.json", new TextEncoder().encode(JSON.stringify(cores)), "application/json");
  await db()
    .insert(datasets)
    .values({ projectId: world.projectId, kind: "cores", name: "Hand cores", format: "csv", originalKey: "y", originalName: "y.csv", sizeBytes: 1, sha256: "c", derivedKey: "datasets/hand-cores.json", derivedFormat: "json", crsEpsg: 32733, count: 2 });
});

describe("validation of a scoring against known sites", () => {
  it("gives Kvamme's gain per class and cumulative for the check-values case, with the number of sites", async () => {
    await call(apiClassification.action, `/api/projects/${world.projectId}/classification`, {
      method: "PUT",
      headers: headersFor(world, "lead"),
      params: { projectId: String(world.projectId) },
      json: { kind: "fixed", thresholds: [0.4, 0.8], labels: ["low", "medium", "high"] },
    });
    const { status, body } = await validation("lead", gainScoringId);
    expect(status).toBe(200);
    const v = body.validation;
    expect(v.counts.presences).toBe(40);
    expect(v.counts.sites).toBe(40);
    const [high, medium, low] = v.gain.rows;
    expect([high.label, medium.label, low.label]).toEqual(["high", "medium", "low"]);
    expect([high.areaShare, medium.areaShare, low.areaShare]).toEqual([0.1, 0.3, 0.6]);
    expect([high.sites, medium.sites, low.sites]).toEqual([24, 12, 4]);
    // (formula) check-values.md: per-zone gain 0.8333 / 0 / −5.0; cumulative 0.8333 / 0.5556 / 0
    expect(high.gain.estimate as number).toBeCloseTo(0.8333, 4);
    expect(medium.gain.estimate as number).toBeCloseTo(0, 10);
    expect(low.gain.estimate as number).toBeCloseTo(-5, 10);
    expect(high.cumulative!.gain.estimate as number).toBeCloseTo(0.8333, 4);
    expect(medium.cumulative!.gain.estimate as number).toBeCloseTo(0.5556, 4);
    expect(low.cumulative!.gain.estimate as number).toBeCloseTo(0, 10);
    // bootstrap intervals (Efron & Tibshirani 1993, percentile) bracket the estimate
    for (const r of v.gain.rows) {
      expect(r.gain.lower as number).toBeLessThanOrEqual(r.gain.estimate as number);
      expect(r.gain.upper as number).toBeGreaterThanOrEqual(r.gain.estimate as number);
    }
    expect(v.gain.unassessed).toBeNull();
    // (formula) capture curve: ranked by score, 10 % of the area holds 60 % of the sites, 40 % holds 90 %
    expect(v.capture.points.map((p) => [p.areaShare, p.siteShare])).toEqual([[0, 0], [0.1, 0.6], [0.4, 0.9], [1, 1]]);
    expect(v.surveyArea.datasets).toEqual([]);
    expect(v.surveyArea.note).toMatch(/no survey-area dataset/);
  });

  it("never scores derived, trawled, dredged or unknown-context finds, imprecise or undated ones: they are listed with the reason", async () => {
    const { body, text } = await validation("lead", gainScoringId);
    const rows = new Map(body.validation.evidence.map((r) => [r.label, r]));
    expect(rows.get("Derived-1")).toMatchObject({ used: false, className: null, score: null });
    expect(rows.get("Derived-1")!.reason).toMatch(/^derived find/);
    expect(rows.get("Trawled-1")!.reason).toMatch(/^trawled find/);
    expect(rows.get("Dredged-1")!.reason).toMatch(/^dredged find/);
    expect(rows.get("Unknown-1")!.reason).toMatch(/^context unknown/);
    expect(rows.get("Imprecise-1")!.reason).toMatch(/too imprecise \(500 m > 35\.4 m\)/); // default: the cell diagonal, 25·√2 m
    expect(rows.get("Undated-1")!.reason).toMatch(/undated/);
    expect(rows.get("A0")!.reason).toMatch(/another age/);
    // a record withheld by its custodian is not used, nor named
    expect(text).not.toContain("Withheld-1");
    // the high class holds exactly the 24 in-situ sites, though four moved finds lie on high cells
    expect(body.validation.gain.rows[0].sites).toBe(24);
    // a looser precision setting lets the imprecise site in (a new validation, not the stored one)
    const loose = await validation("lead", gainScoringId, "?maxPrecisionM=1000");
    expect(loose.body.validation.counts.presences).toBe(41);
    expect(loose.body.validation.reused).toBe(false);
    const bad = await validation("lead", gainScoringId, "?maxPrecisionM=-3");
    expect(bad.status).toBe(422);
    expect(bad.body.error!.message).toMatch(/maxPrecisionM must be above 0/);
  });

  it("gives ROC AUC of presences against the background cells, cores with material counted and cores without not", async () => {
    const { body } = await validation("analyst", aucScoringId);
    const v = body.validation;
    expect(v.counts).toMatchObject({ presences: 5, sites: 4, cores: 1, withScore: 5, inUnassessed: 0 });
    // (formula) check-values.md: sites {0.9, 0.8, 0.7, 0.6, 0.35} against background {0.75, …, 0.15}
    // → 42 of 50 pairs = 0.84. Here the background is every land cell, the five site cells too, as
    // in presence–background practice: + (4 + 3 + 2 + 1 + 0) wins and 5 × ½ ties among the sites
    // themselves → (42 + 10 + 2.5) / (5 × 15) = 54.5 / 75.
    expect(v.auc!.presences).toBe(5);
    expect(v.auc!.background).toBe(15);
    expect(v.auc!.estimate).toBeCloseTo(54.5 / 75, 12);
    expect(v.auc!.lower).toBeLessThanOrEqual(v.auc!.estimate);
    expect(v.auc!.upper).toBeGreaterThanOrEqual(v.auc!.estimate);
    const rows = new Map(v.evidence.map((r) => [r.label, r]));
    expect(rows.get("C-pos")).toMatchObject({ used: true, score: Math.fround(0.35) });
    expect(rows.get("C-neg")!.used).toBe(false);
    expect(rows.get("C-neg")!.reason).toMatch(/not an absence/);
    // the unassessed cell is a class of its own with no site, not part of the low class
    expect(v.gain.unassessed).toMatchObject({ label: "unassessed", sites: 0 });
    expect(v.area.landCells).toBe(16);
    expect(v.gain.rows.reduce((s, r) => s + r.areaShare, 0) + v.gain.unassessed!.areaShare).toBeCloseTo(1, 12);
  });

  it("stores a validation and reuses it for identical inputs", async () => {
    const a = await validation("lead", gainScoringId);
    const b = await validation("viewer", gainScoringId);
    expect(b.body.validation.reused).toBe(true);
    expect(b.body.validation.inputsHash).toBe(a.body.validation.inputsHash);
    const stored = await db().select().from(validations).where(and(eq(validations.subjectKind, "scoring"), eq(validations.subjectId, gainScoringId)));
    expect(stored.length).toBe(2); // the default precision and the looser one of the test above
  });

  it("gives a viewer no exact coordinates; a lead gets them", async () => {
    const lead = await validation("lead", gainScoringId);
    expect(lead.body.validation.evidence.find((r) => r.label === "H0")).toMatchObject(centre(0));
    for (const scoringId of [gainScoringId, aucScoringId]) {
      const { body, text } = await validation("viewer", scoringId);
      for (const r of body.validation.evidence) {
        expect(r).not.toHaveProperty("x");
        expect(r).not.toHaveProperty("y");
      }
      // no site's easting or northing appears anywhere in the response
      for (let i = 0; i < 70; i++) {
        expect(text).not.toContain(String(centre(i).x));
        expect(text).not.toContain(String(centre(i).y));
      }
    }
  });

  it("takes area shares inside the survey area when the project has one", async () => {
    // the northern half of the grid (rows 0–4): the 24 high and 12 medium sites' cells and the first 10 low cells... rows 0–3 hold cells 0–39
    const ring = [[ORIGIN_X, ORIGIN_Y], [ORIGIN_X + W * CELL, ORIGIN_Y], [ORIGIN_X + W * CELL, ORIGIN_Y - 4 * CELL], [ORIGIN_X, ORIGIN_Y - 4 * CELL], [ORIGIN_X, ORIGIN_Y]];
    const fc = { type: "FeatureCollection", features: [{ type: "Feature", properties: { name: "North" }, geometry: { type: "Polygon", coordinates: [ring] } }] };
    await store().put("datasets/hand-survey.json", new TextEncoder().encode(JSON.stringify(fc)), "application/json");
    const [d] = await db()
      .insert(datasets)
      .values({ projectId: world.projectId, kind: "survey_area", name: "North survey", format: "geojson", originalKey: "z", originalName: "z.geojson", sizeBytes: 1, sha256: "a", derivedKey: "datasets/hand-survey.json", derivedFormat: "geojson", crsEpsg: 32733, count: 1 })
      .returning({ id: datasets.id });
    try {
      const { body } = await validation("lead", gainScoringId);
      const v = body.validation;
      expect(v.surveyArea.datasets).toEqual(["North survey"]);
      expect(v.area.landCells).toBe(40);
      // the four low-zone sites lie outside it now: listed, not scored
      expect(v.counts.presences).toBe(36);
      expect(v.evidence.find((r) => r.label === "L0")!.reason).toBe("outside the surveyed area");
      // (formula) areas 10/40 and 30/40 with 24 and 12 of 36 sites: gain 1 − 0.25/(24/36) = 0.625 and 1 − 0.75/(12/36) = −1.25
      expect(v.gain.rows[0].gain.estimate as number).toBeCloseTo(0.625, 12);
      expect(v.gain.rows[1].gain.estimate as number).toBeCloseTo(-1.25, 12);
    } finally {
      await db().delete(datasets).where(eq(datasets.id, d.id));
    }
  });
});

describe("the hold-out set", () => {
  it("is absent from validation responses until a lead reveals it, and the reveal is in the audit log", async () => {
    const held = gainSiteIds.slice(36); // the four low-zone sites L0–L3
    const put = await call(apiHoldout.action, `/api/projects/${world.projectId}/holdout`, { method: "PUT", headers: headersFor(world, "lead"), params: { projectId: String(world.projectId) }, json: { siteIds: held } });
    expect(put.status).toBe(200);
    for (const who of ["analyst", "lead", "viewer"] as const) {
      const { body, text } = await validation(who, gainScoringId);
      expect(body.validation.counts.presences).toBe(36);
      expect(body.validation.holdout).toMatchObject({ heldOut: 4, revealed: false });
      for (const l of ["L0", "L1", "L2", "L3"]) expect(text).not.toContain(`"${l}"`);
      expect(body.validation.gain.rows[2].sites).toBe(0);
    }
    const early = await validation("lead", gainScoringId, "?set=holdout");
    expect(early.status).toBe(409);
    expect(early.body.error!.message).toMatch(/hold-out is hidden/);

    // an analyst may not reveal it
    const refused = await call(apiHoldout.action, `/api/projects/${world.projectId}/holdout`, { method: "POST", headers: headersFor(world, "analyst"), params: { projectId: String(world.projectId) }, json: { action: "reveal" } });
    expect(refused.status).toBe(403);

    const reveal = await call(apiHoldout.action, `/api/projects/${world.projectId}/holdout`, { method: "POST", headers: headersFor(world, "lead"), params: { projectId: String(world.projectId) }, json: { action: "reveal" } });
    expect(reveal.status).toBe(200);
    const [p] = await db().select({ at: projects.holdoutRevealedAt }).from(projects).where(eq(projects.id, world.projectId));
    expect(p.at).not.toBeNull();
    const audit = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "holdout.revealed")));
    expect(audit).toHaveLength(1);
    expect(audit[0].actorUserId).toBe(world.userIds.lead);

    const all = await validation("analyst", gainScoringId);
    expect(all.body.validation.set).toBe("all");
    expect(all.body.validation.counts.presences).toBe(40);
    const only = await validation("analyst", gainScoringId, "?set=holdout");
    expect(only.body.validation.counts.presences).toBe(4);
    expect(only.body.validation.gain.rows[2].sites).toBe(4);

    // hiding it again is logged too, and the figures leave it out again
    await call(apiHoldout.action, `/api/projects/${world.projectId}/holdout`, { method: "POST", headers: headersFor(world, "lead"), params: { projectId: String(world.projectId) }, json: { action: "hide" } });
    expect((await validation("analyst", gainScoringId)).body.validation.counts.presences).toBe(36);
    expect(await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "holdout.hidden")))).toHaveLength(1);
    await call(apiHoldout.action, `/api/projects/${world.projectId}/holdout`, { method: "PUT", headers: headersFor(world, "lead"), params: { projectId: String(world.projectId) }, json: { siteIds: [] } });
  });

  it("refuses unknown site ids with their ids and changes nothing", async () => {
    const res = await call(apiHoldout.action, `/api/projects/${world.projectId}/holdout`, { method: "PUT", headers: headersFor(world, "lead"), params: { projectId: String(world.projectId) }, json: { siteIds: [gainSiteIds[0], 987654] } });
    expect(res.status).toBe(422);
    expect(((await res.json()) as Body).error!.message).toMatch(/987654/);
    const [s] = await db().select({ h: siteRecords.heldOut }).from(siteRecords).where(eq(siteRecords.id, gainSiteIds[0]));
    expect(s.h).toBe(false);
  });
});

describe("the project classification", () => {
  const put = (json: unknown, who: "lead" | "analyst" = "lead") =>
    call(apiClassification.action, `/api/projects/${world.projectId}/classification`, { method: "PUT", headers: headersFor(world, who), params: { projectId: String(world.projectId) }, json });
  const current = async () => {
    const res = await call(apiClassification.loader, `/api/projects/${world.projectId}/classification`, { headers: headersFor(world, "viewer"), params: { projectId: String(world.projectId) } });
    return ((await res.json()) as { classification: { thresholds: number[]; labels: string[]; kind: string } }).classification;
  };
  const audits = async () => (await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "classification.changed")))).length;

  it("refuses bad thresholds with a 4xx naming the problem, and saves nothing", async () => {
    const before = await current();
    const n = await audits();
    const cases: [unknown, RegExp][] = [
      [{ kind: "fixed", thresholds: [0.5, 0.3] }, /increase from the lowest class up: threshold 2 \(0\.3\) is not above threshold 1 \(0\.5\)/],
      [{ kind: "fixed", thresholds: [0, 0.5] }, /Threshold 1 \(0\) must lie strictly between 0 and 1/],
      [{ kind: "fixed", thresholds: [0.5, 1.2] }, /Threshold 2 \(1\.2\) must lie strictly between 0 and 1/],
      [{ kind: "fixed", thresholds: [] }, /from 1 to 9 thresholds/],
      [{ kind: "fixed", thresholds: [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95] }, /from 1 to 9 thresholds \(2 to 10 classes\); got 10/],
      [{ kind: "fixed", thresholds: [0.5], labels: ["low", "mid", "high"] }, /2 classes need 2 class names/],
      [{ kind: "fixed", thresholds: ["a"] }, /thresholds\.0: Each threshold must be a number/],
      [{ kind: "bands" }, /kind is "fixed"/],
      [{ kind: "quantile", scoringId: 999999, shares: [0.5, 0.5] }, /not one of this project's scorings/],
      [{ kind: "quantile", scoringId: gainScoringId, shares: [0.5, 0.4] }, /add up to 1/],
    ];
    for (const [json, message] of cases) {
      const res = await put(json);
      expect(res.status, JSON.stringify(json)).toBeGreaterThanOrEqual(400);
      expect(res.status, JSON.stringify(json)).toBeLessThan(500);
      expect(((await res.json()) as Body).error!.message).toMatch(message);
    }
    expect(await current()).toEqual(before);
    expect(await audits()).toBe(n);
    expect((await put({ kind: "fixed", thresholds: [0.5] }, "analyst")).status).toBe(403);
  });

  it("freezes quantile thresholds from a published scoring's histogram, and validation classes by them", async () => {
    // shares lowest first: 60 % low, 30 % medium, 10 % high — the gain raster's own zones
    const res = await put({ kind: "quantile", scoringId: gainScoringId, shares: [0.6, 0.3, 0.1] });
    expect(res.status).toBe(200);
    const c = (await res.json()) as { classification: { kind: string; thresholds: number[]; achievedShares: number[]; frozenFrom: { scoringId: number } } };
    expect(c.classification.kind).toBe("quantile");
    expect(c.classification.frozenFrom.scoringId).toBe(gainScoringId);
    expect(c.classification.achievedShares.map((s) => +s.toFixed(6))).toEqual([0.6, 0.3, 0.1]);
    // stored as app/scoring/classification.ts reads it: thresholds decreasing, highest class first
    const [row] = await db().select({ c: projects.classification }).from(projects).where(eq(projects.id, world.projectId));
    const stored = row.c as { thresholds: number[]; labels: string[]; quantile: { requestedShares: number[] } };
    expect(stored.thresholds).toEqual([...c.classification.thresholds].reverse());
    expect(stored.labels).toEqual(["high", "medium", "low"]);
    expect(stored.quantile.requestedShares).toEqual([0.1, 0.3, 0.6]);
    const { body } = await validation("lead", gainScoringId);
    expect(body.validation.reused).toBe(false);
    expect(body.validation.gain.rows.map((r) => r.sites)).toEqual([24, 12, 4]);
    expect(await audits()).toBeGreaterThan(0);
  });
});

describe("the pieces", () => {
  it("takes an age's window halfway to its neighbours, mirrored at the ends", () => {
    expect(ageWindowOf({ kind: "age", ageKa: 10 }, [8, 10, 12])).toMatchObject({ youngKa: 9, oldKa: 11 });
    expect(ageWindowOf({ kind: "age", ageKa: 12 }, [8, 10, 12])).toMatchObject({ youngKa: 11, oldKa: 13 });
    expect(ageWindowOf({ kind: "age", ageKa: 8 }, [8, 10, 14])).toMatchObject({ youngKa: 7, oldKa: 9 });
    expect(ageWindowOf({ kind: "age", ageKa: 12 }, [12])).toMatchObject({ youngKa: 11.5, oldKa: 12.5 });
    expect(ageWindowOf({ kind: "period", name: "P", youngKa: 8, oldKa: 12 }, [8, 10, 12])).toMatchObject({ youngKa: 8, oldKa: 12 });
  });

  it("counts sites in unassessed ground in their own class and leaves them out of AUC", () => {
    const potential = Float32Array.from([0.9, 0.1, NaN, NaN]);
    const unassessed = Uint8Array.from([0, 0, 1, 0]);
    const f = computeValidation({
      potential,
      unassessed,
      area: null,
      classification: fixedClassification([0.5]),
      presences: [
        { key: "a", kind: "site", cell: 0 },
        { key: "b", kind: "site", cell: 2 },
      ],
      cellAreaKm2: 1,
    });
    expect(f.counts).toMatchObject({ presences: 2, inUnassessed: 1, withScore: 1 });
    expect(f.gain!.unassessed).toMatchObject({ sites: 1, cells: 1 });
    // (formula) unassessed: area 1/3, sites 1/2 → gain 1 − (1/3)/(1/2) = 1/3
    expect(f.gain!.unassessed!.gain.estimate as number).toBeCloseTo(1 / 3, 12);
    expect(f.gain!.rows[1].sites).toBe(0); // never counted low
    expect(f.auc!.presences).toBe(1);
    // the placement rule: a site on a sea cell is not land at this age
    const placed = placeEvidence(
      [{ key: "s", kind: "site", siteId: 1, label: "s", context: "in_situ", x: 0.5, y: -0.5 - 3, precisionM: 1, youngKa: 10, oldKa: 10, archaeologicalMaterial: true, heldOut: false, visibility: "normal", community: null }],
      { width: 1, height: 4, originX: 0, originY: 0, cellSizeX: 1, cellSizeY: 1 },
      { youngKa: 9, oldKa: 11, label: "" },
      2,
      potential,
      unassessed,
      null,
    );
    expect(placed[0].reason).toMatch(/not land at this age/);
  });
});
