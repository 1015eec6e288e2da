// Core-target lists end to end with the real database, storage, pg-boss and a worker: a small
// reconstruction with a buried horizon, survey lines and a wreck → a published scoring → lists made
// over the API mixing best-first, a transect and control cores (and learn most); every pair of
// targets respects the spacing and no target violates a constraint; the cruise plan fits the ship
// days; exports parse (GeoJSON shape, ogrinfo on the GeoPackage where installed); bad input is
// refused with its message and nothing stored; a published list cannot change; statuses move forward
// only; a recorded result appears in the next validation; viewers get generalised positions only.
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "3000", LOWSTAND_ENGINE_THREADS: "0" });

import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, count, eq } from "drizzle-orm";
import proj4 from "proj4";
import { db } from "~/db.server";
import { auditLog, datasets, reconstructions, scorings, siteRecords, targetLists, targets } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { resolveCrs } from "~/terrain/crs";
import { defaultWeightSetContent } from "~/scoring/weight-set";
import { METRES_PER_SECOND_PER_KNOT, nearestNeighbourOrder, routeLengthM } from "~/scoring/cruise-plan";
import { createWeightSet } from "~/weight-sets.server";
import { publishedHashOf, resultSchema } from "~/target-lists.server";
import { modelEvidence } from "~/models.server";
import * as apiRecons from "~/routes/api.project-reconstructions";
import * as apiScorings from "~/routes/api.project-scorings";
import * as apiLists from "~/routes/api.project-target-lists";
import * as apiList from "~/routes/api.target-list";
import * as apiPublish from "~/routes/api.target-list-publish";
import * as apiExport from "~/routes/api.target-list-export";
import * as apiTarget from "~/routes/api.target";
import * as apiValidation from "~/routes/api.scoring-validation";
import { stopBoss } from "../jobs/boss.server";
import { shelfTiff, uploadDataset, shelfPicksCsv } from "../tests/support/small-shelf";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";
import { FAST_JOB_SETTINGS, startWorker, stopWorkers, waitFor } from "../tests/support/workers";

let world: World;
const tokens: Record<string, string> = {};

const ORIGIN_X = 480_000;
const ORIGIN_Y = 5_030_000;
const CELL = 50;
const SIZE = 48;
const EPSG = 32733;
const crs = resolveCrs(EPSG);
const toLonLat = (x: number, y: number) => proj4(crs.proj4, "EPSG:4326", [x, y]);
const WRECK: [number, number] = [ORIGIN_X + 1225, ORIGIN_Y - 625];

const LINE_YS = [ORIGIN_Y - 200, ORIGIN_Y - 600, ORIGIN_Y - 1000];

const picksCsv = () => shelfPicksCsv();

function surveyLinesCsv(): string {
  const lines = ["line_id,fix_id,x,y,system,vertical_resolution_m"];
  for (const [k, y] of LINE_YS.entries()) for (let x = ORIGIN_X + 100, f = 1; x < ORIGIN_X + SIZE * CELL - 50; x += 100, f++) lines.push(`L${k + 1},${f},${x},${y},chirp,0.3`);
  return lines.join("\n") + "\n";
}

function wreckGeoJson(): string {
  return JSON.stringify({ type: "FeatureCollection", features: [{ type: "Feature", properties: { kind: "wreck", buffer_m: 100, name: "Test wreck" }, geometry: { type: "Point", coordinates: toLonLat(...WRECK) } }] });
}

const upload = (kind: string, content: string | Uint8Array, fileName: string, extra: Record<string, string> = {}) => uploadDataset(world, tokens.analyst, kind, content, fileName, extra);

const auth = (who: string) => ({ Authorization: `Bearer ${tokens[who]}` });
const jsonReq = (url: string, method: string, who: string, body?: unknown) =>
  new Request(new URL(url, ORIGIN), { method, headers: { ...auth(who), "Content-Type": "application/json" }, ...(body === undefined ? {} : { body: JSON.stringify(body) }) });

async function postList(body: unknown, who = "analyst", projectId = world.projectId) {
  const res = await callWith(apiLists.action, jsonReq(`/api/projects/${projectId}/target-lists`, "POST", who, body), { projectId: String(projectId) });
  return { status: res.status, body: await res.json() };
}
async function getList(id: number, who = "analyst") {
  const res = await callWith(apiList.loader, new Request(new URL(`/api/target-lists/${id}`, ORIGIN), { headers: auth(who) }), { id: String(id) });
  return { status: res.status, body: await res.json() };
}
async function publish(id: number, who = "lead") {
  const res = await callWith(apiPublish.action, jsonReq(`/api/target-lists/${id}/publish`, "POST", who), { id: String(id) });
  return { status: res.status, body: await res.json() };
}
async function exportList(id: number, format: string, who = "analyst") {
  return callWith(apiExport.loader, new Request(new URL(`/api/target-lists/${id}/export?format=${format}`, ORIGIN), { headers: auth(who) }), { id: String(id) });
}
async function patchTarget(id: number, body: unknown, who = "analyst") {
  const res = await callWith(apiTarget.action, jsonReq(`/api/targets/${id}`, "PATCH", who, body), { id: String(id) });
  return { status: res.status, body: await res.json() };
}
async function validation(id: number) {
  const res = await callWith(apiValidation.loader, new Request(new URL(`/api/scorings/${id}/validation`, ORIGIN), { headers: auth("analyst") }), { id: String(id) });
  expect(res.status, await res.clone().text()).toBe(200);
  return (await res.json()).validation;
}

const listCount = async () => (await db().select({ n: count() }).from(targetLists))[0].n;

let scoringId: number;
const PORT = { name: "Test quay", x: ORIGIN_X - 3000, y: ORIGIN_Y - 1200 };
const CONSTRAINTS = { minWaterDepthM: 0, maxWaterDepthM: 400, maxSlopeDeg: 30, maxDistanceToSurveyLineM: 450, positioningToleranceM: 10, unassessedHorizon: "core-to-refusal" as const, barrelLengthM: 6, requiredIntoOlderUnitM: 1 };
const SPACING = 180;
const AXIS: Array<[number, number]> = [
  [ORIGIN_X + 300, ORIGIN_Y - 1200],
  [ORIGIN_X + 2100, ORIGIN_Y - 1200],
];
const mixedRequest = (extra: Record<string, unknown> = {}) => ({
  name: "Cruise 1",
  source: { kind: "scoring", id: scoringId },
  constraints: CONSTRAINTS,
  minSpacingM: SPACING,
  modes: [
    { kind: "transect", name: "Channel A", axis: AXIS, featureWidthM: 100, marginWidthM: 200, halfLengthM: 400, stationSpacingM: 200, chainagesM: [900] },
    { kind: "best-first", count: 8 },
    { kind: "control", count: 3, seed: 7 },
    { kind: "learn-most", count: 2 },
  ],
  cruise: { port: PORT, speedKnots: 8, stationHours: 2, shipDays: 1, hoursPerDay: 12 },
  ...extra,
});

beforeAll(async () => {
  world = await buildWorld("tl");
  for (const r of ["owner", "lead", "analyst", "reviewer", "viewer"] as const) tokens[r] = (await createApiToken(world.userIds[r], "targets")).token;
  tokens.outsider = (await createApiToken(world.userIds.outsider, "targets")).token;
  const bathyId = await upload("bathymetry", shelfTiff(), "tl-shelf.tif", { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" });
  const picksId = await upload("horizon_picks", new TextEncoder().encode(picksCsv()), "tl-picks.csv");
  const linesId = await upload("survey_lines", new TextEncoder().encode(surveyLinesCsv()), "tl-lines.csv");
  await upload("exclusions", new TextEncoder().encode(wreckGeoJson()), "tl-wreck.geojson");
  const res = await callWith(
    apiRecons.action,
    jsonReq(`/api/projects/${world.projectId}/reconstructions`, "POST", "analyst", { bathymetryDatasetId: bathyId, horizonDatasetId: picksId, surveyLinesDatasetId: linesId, agesKa: [14, 12, 10], oceanSides: ["east"], tidalRangeM: 2, streamThresholdKm2: 0.2, name: "Target shelf" }),
    { projectId: String(world.projectId) },
  );
  expect(res.status, await res.clone().text()).toBe(202);
  const reconstructionId = (await res.json()).reconstruction.id;
  startWorker();
  await waitFor("the reconstruction to publish", async () => {
    const [row] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
    if (row.status === "failed") throw new Error(row.error ?? "failed");
    return row.status === "published" ? row : null;
  }, 90_000);
  const { version } = await createWeightSet({ projectId: world.projectId, name: "Targets set", content: defaultWeightSetContent(), userId: world.userIds.analyst });
  const sc = await callWith(apiScorings.action, jsonReq(`/api/projects/${world.projectId}/scorings`, "POST", "analyst", { reconstructionId, weightSetVersionId: version.id, target: { kind: "age", ageKa: 12 } }), { projectId: String(world.projectId) });
  expect(sc.status, await sc.clone().text()).toBe(202);
  scoringId = (await sc.json()).scoring.id;
  await waitFor(`scoring ${scoringId} to publish`, async () => {
    const [s] = await db().select().from(scorings).where(eq(scorings.id, scoringId));
    if (s.status === "failed") throw new Error(`scoring failed: ${s.error}`);
    return s.status === "published" ? s : null;
  }, 60_000);
}, 240_000);

afterAll(async () => {
  await stopWorkers();
  await stopBoss();
});

interface T {
  id: number;
  rank: number;
  waypoint: string;
  mode: string;
  x: number;
  y: number;
  lon: number;
  lat: number;
  status: string;
  waterDepthM: number;
  horizonDepthM: number | null;
  plannedPenetrationM: number;
  expectedPenetrationM: number;
  nearestLine: { line: string; distanceM: number; fix: string } | null;
  score: number;
  occupation: number | null;
  contributions: Array<{ id: string; weight: number; factorScore: number; contribution: number }>;
  landAgesKa: number[];
  core: Record<string, unknown> | null;
}

describe("a target list", () => {
  let listId: number;
  let list: { targets: T[]; list: { plan: Record<string, unknown> & { order: number[]; dropped: number[]; totalHours: number; availableHours: number; fits: boolean; legs: Array<{ distanceKm: number; hours: number }>; transitHours: number; stationHours: number; coresThatFit: number } } };

  it("mixes a transect, best-first, control and learn-most targets, each pair at least the spacing apart and none breaking a constraint", async () => {
    const r = await postList(mixedRequest());
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    listId = r.body.targetList.id;
    const g = await getList(listId);
    expect(g.status).toBe(200);
    list = g.body;
    const ts = list.targets;
    const modes = new Set(ts.map((t) => t.mode));
    expect([...modes].sort()).toEqual(["best-first", "control", "learn-most", "transect"]);
    expect(ts.map((t) => t.rank)).toEqual(ts.map((_, k) => k + 1));
    // spacing: every pair, centre to centre (design §6)
    for (let a = 0; a < ts.length; a++) for (let b = a + 1; b < ts.length; b++) expect(Math.hypot(ts[a].x - ts[b].x, ts[a].y - ts[b].y), `${ts[a].waypoint}–${ts[b].waypoint}`).toBeGreaterThanOrEqual(SPACING);
    for (const t of ts) {
      // water depth inside the vessel's range (inclusive limits, target-constraints.ts)
      expect(t.waterDepthM).toBeGreaterThanOrEqual(CONSTRAINTS.minWaterDepthM);
      expect(t.waterDepthM).toBeLessThanOrEqual(CONSTRAINTS.maxWaterDepthM);
      // the horizon + the required depth into the older unit within the expected penetration (design §6)
      expect(t.plannedPenetrationM).toBeLessThanOrEqual(t.expectedPenetrationM + 1e-9);
      if (t.horizonDepthM !== null) expect(t.plannedPenetrationM).toBeCloseTo(t.horizonDepthM + CONSTRAINTS.requiredIntoOlderUnitM, 6);
      // the wreck and its 100 m buffer: no target inside
      expect(Math.hypot(t.x - WRECK[0], t.y - WRECK[1])).toBeGreaterThan(100);
      // near a line: the layer measures to the cells a line crosses, so allow half a cell diagonal
      expect(t.nearestLine).not.toBeNull();
      expect(t.nearestLine!.distanceM).toBeLessThanOrEqual(CONSTRAINTS.maxDistanceToSurveyLineM + Math.hypot(CELL, CELL) / 2);
      // cell centres of the grid
      expect(((t.x - ORIGIN_X) / CELL) % 1).toBeCloseTo(0.5, 9);
      // WGS 84 agrees with proj4 from the project CRS
      const [lon, lat] = toLonLat(t.x, t.y);
      expect(t.lon).toBeCloseTo(lon, 9);
      expect(t.lat).toBeCloseTo(lat, 9);
      // contributions add up to the occupation (weighted linear combination, Malczewski 2000)
      expect(t.contributions.length).toBeGreaterThan(0);
      expect(t.contributions.reduce((s, c) => s + (c.weight > 0 ? c.contribution : 0), 0)).toBeCloseTo(t.occupation!, 6);
    }
    // best-first targets in descending score
    const bf = ts.filter((t) => t.mode === "best-first").map((t) => t.score);
    expect(bf).toEqual([...bf].sort((a, b) => b - a));
    // the transect stations lie on the perpendicular at 900 m along the axis (x = axis start + 900, snapped to a cell centre)
    for (const t of ts.filter((t) => t.mode === "transect")) expect(Math.abs(t.x - (AXIS[0][0] + 900))).toBeLessThanOrEqual(CELL / 2);
  });

  it("orders a cruise plan that fits the ship days, and 2-opt is never longer than nearest neighbour", () => {
    const p = list.list.plan;
    const ts = list.targets;
    expect(p.fits).toBe(true);
    expect(p.availableHours).toBe(12);
    expect(p.totalHours).toBeLessThanOrEqual(p.availableHours);
    expect([...p.order, ...p.dropped].sort((a, b) => a - b)).toEqual(ts.map((t) => t.rank));
    expect(p.dropped.length).toBeGreaterThan(0); // one 12-hour day does not take all of them at 2 h a core
    // hours = distance / (knots × 1852/3600 m/s) / 3600 + cores × station hours (cruise-plan.ts)
    const km = p.legs.reduce((s, l) => s + l.distanceKm, 0);
    expect(p.transitHours).toBeCloseTo((km * 1000) / (8 * METRES_PER_SECOND_PER_KNOT) / 3600, 6);
    expect(p.stationHours).toBe(p.order.length * 2);
    const stations = p.order.map((rank) => ts[rank - 1]);
    const byRank = (r: number) => ts[r - 1];
    const nn = nearestNeighbourOrder(PORT, stations);
    expect(routeLengthM(PORT, ts, p.order.map((r) => r - 1))).toBeLessThanOrEqual(routeLengthM(PORT, stations, nn) + 1e-6);
    expect(p.order.map(byRank).every(Boolean)).toBe(true);
  });

  it("refuses bad input with its message and stores nothing", async () => {
    const before = await listCount();
    const cases: Array<[unknown, number, RegExp]> = [
      [{ ...mixedRequest(), modes: [] }, 422, /at least one selection mode/],
      [mixedRequest({ constraints: { ...CONSTRAINTS, minWaterDepthM: 500, maxWaterDepthM: 10 } }), 422, /minimum water depth .* greater than the maximum/],
      [mixedRequest({ modes: [{ kind: "transect", name: "Narrow", axis: AXIS, featureWidthM: 5, marginWidthM: 0, halfLengthM: 100, stationSpacingM: 200, chainagesM: [10] }] }), 422, /narrower than the positioning tolerance/],
      [mixedRequest({ modes: [{ kind: "control", count: 2, classes: ["nowhere"] }] }), 422, /"nowhere" is not a class/],
      [mixedRequest({ source: { kind: "scoring", id: 999999 } }), 422, /not one of this project's scorings/],
      [mixedRequest({ cruise: { ...mixedRequest().cruise, speedKnots: 0 } }), 422, /speed/i],
    ];
    for (const [body, status, message] of cases) {
      const r = await postList(body);
      expect(r.status, JSON.stringify(r.body)).toBe(status);
      expect(r.body.error.message).toMatch(message);
    }
    // another project's member cannot use this project's scoring in theirs
    const other = await postList(mixedRequest(), "outsider", world.otherProjectId);
    expect(other.status).toBe(422);
    expect(other.body.error.message).toMatch(/not one of this project's scorings/);
    // a viewer may not make lists; a model source needs models.read — the viewer is refused first
    expect((await postList(mixedRequest(), "viewer")).status).toBe(403);
    expect(await listCount()).toBe(before);
  });

  it("is shown to viewers only when published, and then only generalised", async () => {
    expect((await getList(listId, "viewer")).status).toBe(404);
    expect((await exportList(listId, "csv", "viewer")).status).toBe(404);
    expect((await publish(listId, "analyst")).status).toBe(403);
    const p = await publish(listId, "lead");
    expect(p.status, JSON.stringify(p.body)).toBe(200);
    const rows = await db().select().from(targets).where(eq(targets.listId, listId)).orderBy(targets.rank);
    const [row] = await db().select().from(targetLists).where(eq(targetLists.id, listId));
    expect(p.body.targetList.publishedHash).toBe(publishedHashOf(rows, row.plan));
    const v = await getList(listId, "viewer");
    expect(v.status).toBe(200);
    const [project] = await db().execute<{ site_generalisation_m: number }>(`select site_generalisation_m from projects where id = ${world.projectId}`).then((r) => r.rows);
    const cellM = project.site_generalisation_m;
    const exact = new Set(list.targets.map((t) => `${t.x}|${t.y}`));
    for (const t of v.body.targets as T[]) {
      // snapped to the centre of a generalisation cell (app/sites.ts rule) and never an exact position
      expect(((t.x / cellM) % 1 + 1) % 1).toBeCloseTo(0.5, 9);
      expect(((t.y / cellM) % 1 + 1) % 1).toBeCloseTo(0.5, 9);
      expect(exact.has(`${t.x}|${t.y}`)).toBe(false);
      expect(t.nearestLine?.fix ?? "").toBe("");
      expect((t as unknown as { cell: number }).cell).toBe(-1);
    }
    expect(v.body.list.plan.legs).toEqual([]);
    const csv = await (await exportList(listId, "csv", "viewer")).text();
    expect(csv).toMatch(/Positions generalised/);
    for (const t of list.targets) expect(csv).not.toContain(String(Math.round(t.x * 100) / 100));
    // no audit entry for a generalised export; one for an exact export
    const audits = async () => (await db().select({ n: count() }).from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "target_list.exported"))))[0].n;
    const before = await audits();
    expect((await exportList(listId, "csv", "analyst")).status).toBe(200);
    expect(await audits()).toBe(before + 1);
  });

  it("exports parse: GeoJSON of Points in WGS 84 with the cautions, CSV with its header, a GeoPackage ogrinfo reads", async () => {
    const gj = await (await exportList(listId, "geojson")).json();
    expect(gj.type).toBe("FeatureCollection");
    expect(gj.cautions.join(" ")).toMatch(/not evidence of absence/);
    expect(gj.features).toHaveLength(list.targets.length);
    for (const [k, f] of gj.features.entries()) {
      expect(f.type).toBe("Feature");
      expect(f.geometry.type).toBe("Point");
      expect(f.geometry.coordinates).toHaveLength(2);
      expect(f.geometry.coordinates[0]).toBeCloseTo(list.targets[k].lon, 6);
      expect(f.geometry.coordinates[1]).toBeCloseTo(list.targets[k].lat, 6);
      expect(f.properties.waypoint).toBe(list.targets[k].waypoint);
    }
    const csv = await (await exportList(listId, "csv")).text();
    const lines = csv.split("\r\n").filter((l) => l && !l.startsWith("#"));
    expect(lines[0].split(",").slice(0, 3)).toEqual(["rank", "waypoint", "status"]);
    expect(lines).toHaveLength(list.targets.length + 1);
    expect(csv).toMatch(/# - Seabed work needs an unexploded-ordnance risk assessment/);
    const gpkg = new Uint8Array(await (await exportList(listId, "gpkg")).arrayBuffer());
    expect(new TextDecoder().decode(gpkg.subarray(0, 15))).toBe("SQLite format 3");
    let ogrinfo: string | null = null;
    try {
      execFileSync("ogrinfo", ["--version"], { stdio: "ignore" });
      ogrinfo = "ogrinfo";
    } catch {
      ogrinfo = null;
    }
    if (ogrinfo) {
      const dir = mkdtempSync(path.join(tmpdir(), "tl-gpkg-"));
      try {
        const file = path.join(dir, "targets.gpkg");
        writeFileSync(file, gpkg);
        const out = execFileSync("ogrinfo", ["-so", file, "core_targets"], { encoding: "utf8" });
        expect(out).toMatch(new RegExp(`Feature Count: ${list.targets.length}`));
        expect(out).toMatch(/Geometry: Point/);
        expect(out).toMatch(/32733/);
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    }
    expect((await exportList(listId, "shp")).status).toBe(422);
  });

  it("cannot change once published: a second publish and any list edit are refused", async () => {
    expect((await publish(listId)).status).toBe(409);
    const res = await callWith(apiList.action, jsonReq(`/api/target-lists/${listId}`, "PATCH", "analyst", { name: "renamed" }), { id: String(listId) });
    expect(res.status).toBe(409);
    expect((await res.json()).error.message).toMatch(/published and cannot change/);
  });

  it("moves statuses forward only, and a recorded result appears in the next validation", async () => {
    // the best-first rank: a scored land cell at 12 ka
    const t = list.targets.find((x) => x.mode === "best-first")!;
    const before = await validation(scoringId);
    const key = `target:${t.id}`;
    expect((before.evidence as Array<{ key: string }>).some((e) => e.key === key)).toBe(false);

    expect((await patchTarget(t.id, { status: "cored", core: { penetrationM: 3, recoveryM: 2.5, horizonReached: "yes" } }, "viewer")).status).toBe(403);
    expect((await patchTarget(t.id, { status: "result", result: { preservedLandSurface: "yes", archaeologicalIndicators: "burnt flint", dates: [] } })).status).toBe(422);
    const bad = await patchTarget(t.id, { status: "cored", core: { penetrationM: 2, recoveryM: 2.5, horizonReached: "yes" } });
    expect(bad.status).toBe(422);
    expect(bad.body.error.message).toMatch(/Recovery cannot exceed penetration/);
    const cored = await patchTarget(t.id, { status: "cored", core: { penetrationM: 3, recoveryM: 2.5, horizonReached: "yes" } });
    expect(cored.status, JSON.stringify(cored.body)).toBe(200);
    expect(cored.body.target.status).toBe("cored");
    expect((await patchTarget(t.id, { status: "cored", core: { penetrationM: 3, recoveryM: 2.5, horizonReached: "yes" } })).status).toBe(409);
    const result = await patchTarget(t.id, { status: "result", result: { preservedLandSurface: "yes", archaeologicalIndicators: "charcoal; burnt flint", dates: [{ labCode: "XX-1", calBpFrom: 12150, calBpTo: 11900 }] } });
    expect(result.status, JSON.stringify(result.body)).toBe(200);
    const back = await patchTarget(t.id, { status: "cored", core: { penetrationM: 3, recoveryM: 2.5, horizonReached: "yes" } });
    expect(back.status).toBe(409);
    expect(back.body.error.message).toMatch(/forward only/);
    const moves = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "target.status_changed")));
    expect(moves.map((m) => (m.detail as { to: string }).to)).toEqual(["cored", "result"]);

    const after = await validation(scoringId);
    expect(after.inputsHash).not.toBe(before.inputsHash);
    const row = (after.evidence as Array<{ key: string; used: boolean; reason: string | null; kind: string }>).find((e) => e.key === key);
    expect(row, JSON.stringify(after.evidence)).toBeDefined();
    expect(row!.kind).toBe("core");
    expect(row!.reason).toBeNull();
    expect(row!.used).toBe(true);
    // one more presence scored than before (Kvamme's gain and the AUC count it: validations.server.ts)
    const used = (v: { evidence: Array<{ used: boolean }> }) => v.evidence.filter((e) => e.used).length;
    expect(used(after)).toBe(used(before) + 1);

    // … and into the next model: a presence at its position (searched ground too), dated by its result.
    const ev = await modelEvidence(world.projectId);
    const rec = ev.records.find((r) => r.id === key);
    expect(rec).toMatchObject({ kind: "core", x: t.x, y: t.y, archaeologicalMaterial: true, ageKa: (12.15 + 11.9) / 2 });
    expect(ev.corePositions).toContainEqual([t.x, t.y]);
    expect(ev.targetResults).toBe(1);
  });

  it("keeps targets off a known site its community withheld, without naming it near any target", async () => {
    const best = list.targets.find((t) => t.mode === "best-first")!;
    const [d] = await db().select().from(datasets).where(eq(datasets.projectId, world.projectId)).limit(1);
    await db().insert(siteRecords).values({ projectId: world.projectId, datasetId: d.id, rowNumber: 1, label: "withheld place", x: best.x, y: best.y, precisionM: 5, context: "in_situ", visibility: "withheld", community: "Test shore families" });
    const r = await postList(mixedRequest({ name: "Around the withheld site" }));
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const g = await getList(r.body.targetList.id);
    // the find-spot zone is the position uncertainty (5 m) + the find-spot buffer (50 m by default: zones.ts)
    for (const t of g.body.targets as T[]) {
      expect(Math.hypot(t.x - best.x, t.y - best.y), t.waypoint).toBeGreaterThan(55);
      expect(JSON.stringify(t)).not.toContain("withheld place");
      expect((t as unknown as { nearbyExclusions: Array<{ kind: string }> }).nearbyExclusions.some((e) => e.kind === "find_spot")).toBe(false);
    }
  });

  it("keeps targets out of every cell a cable without a buffer passes through", async () => {
    const best = list.targets.find((t) => t.mode === "best-first")!;
    // An invented cable straight through the best target's cell centre, with no buffer of its own.
    const cable = { type: "FeatureCollection", features: [{ type: "Feature", properties: { kind: "cable", buffer_m: 0, name: "Test cable" }, geometry: { type: "LineString", coordinates: [toLonLat(ORIGIN_X, best.y), toLonLat(ORIGIN_X + SIZE * CELL, best.y)] } }] };
    await upload("exclusions", new TextEncoder().encode(JSON.stringify(cable)), "tl-cable.geojson");
    const r = await postList(mixedRequest({ name: "Beside the cable", cruise: null, modes: [{ kind: "best-first", count: 12 }] }));
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const g = await getList(r.body.targetList.id);
    expect(g.body.targets.length).toBeGreaterThan(0);
    // The cable crosses the row of cells whose centres lie within half a cell of it (a horizontal line
    // through a row of centres, after reprojection's sub-millimetre round trip): no target there.
    for (const t of g.body.targets as T[]) expect(Math.abs(t.y - best.y), t.waypoint).toBeGreaterThan(CELL / 2);
  });

  it("exports a stored target whose factor scores were NaN (kept as null in JSON) as unknown, not as a failure", async () => {
    const [l] = await db().insert(targetLists).values({ projectId: world.projectId, name: "Gaps", source: { kind: "scoring", id: scoringId }, params: { crs: { epsg: EPSG, label: `EPSG:${EPSG}` }, reconstruction: { id: 0 }, source: { kind: "scoring", id: scoringId, label: "hand-made" } }, status: "published", publishedHash: "x", publishedAt: new Date() }).returning();
    const [x, y] = [ORIGIN_X + 125, ORIGIN_Y - 125];
    const [lon, lat] = toLonLat(x, y);
    await db().insert(targets).values({ listId: l.id, rank: 1, waypoint: "CT01", x, y, lon, lat, detail: { mode: "best-first", score: 0.5, waterDepthM: 20, nearestLine: { line: "L1", fix: "3", distanceM: null, fixDistanceM: null }, contributions: [{ id: "slope", weight: 1, factorScore: null, contribution: null }] } });
    for (const format of ["csv", "geojson", "gpkg"]) expect((await exportList(l.id, format)).status, format).toBe(200);
    const csv = await (await exportList(l.id, "csv")).text();
    expect(csv).toMatch(/slope unknown/);
  });

  it("stores indicators that say nothing was found as none", () => {
    for (const said of ["none", " No ", "nil", "-", "n/a", ""]) expect(resultSchema.parse({ preservedLandSurface: "no", archaeologicalIndicators: said }).archaeologicalIndicators, said).toBeNull();
    expect(resultSchema.parse({ preservedLandSurface: "yes", archaeologicalIndicators: " worked flint " }).archaeologicalIndicators).toBe("worked flint");
  });

  it("refuses status changes on a draft list", async () => {
    const r = await postList(mixedRequest({ name: "Draft", cruise: null, modes: [{ kind: "best-first", count: 2 }] }));
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const g = await getList(r.body.targetList.id);
    const res = await patchTarget(g.body.targets[0].id, { status: "cored", core: { penetrationM: 1, recoveryM: 1, horizonReached: "refused" } });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/draft/);
  });
});
