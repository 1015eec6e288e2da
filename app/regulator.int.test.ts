// The review desk end to end with the real database, job queue and a worker: a small shelf with a
// buried horizon in its north, two lease blocks, a development footprint, a wreck, anomalies and
// known sites → a reconstruction, an adopted weight-set version and its full-resolution scoring →
// the conflict table and block figures checked against direct computations on the layers read back
// through the API; known sites counted exactly for a reviewer and generalised and suppressed for a
// viewer (in the CSV too); zones as GeoJSON in WGS 84; exclusion buffers validated and audit-logged.
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "3000", LOWSTAND_ENGINE_THREADS: "0" });

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import proj4 from "proj4";
import { db } from "~/db.server";
import { auditLog, exclusionSettings, reconstructions, scorings } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { readGeoTiff } from "~/terrain/geotiff-read";
import { resolveCrs } from "~/terrain/crs";
import { adoptVersion, createWeightSet } from "~/weight-sets.server";
import { startScoring } from "~/scorings.server";
import * as apiRecons from "~/routes/api.project-reconstructions";
import * as apiLayer from "~/routes/api.reconstruction-layer";
import * as apiRaster from "~/routes/api.scoring-raster";
import * as apiConflicts from "~/routes/api.project-conflicts";
import * as apiBlocks from "~/routes/api.project-block-figures";
import * as apiZones from "~/routes/api.project-zones";
import * as apiSettings from "~/routes/api.project-exclusion-settings";
import * as apiDeskMap from "~/routes/api.project-desk-map";
import { inflateSync } from "node:zlib";
import { deskMapLegend } from "~/regulator.server";
import { classOf, fixedClassification } from "~/scoring/classification";
import { stopBoss } from "../jobs/boss.server";
import { shelfTiff, uploadDataset } from "../tests/support/small-shelf";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";
import { FAST_JOB_SETTINGS, startWorker, stopWorkers, waitFor } from "../tests/support/workers";

let world: World;
const tokens: Record<string, string> = {};

const ORIGIN_X = 480_000;
const ORIGIN_Y = 5_030_000;
const CELL = 50;
const SIZE = 48;
const EPSG = 32733;


/** Picks 2 m below the seabed on three lines across the northern half: the south stays unassessed. */
function picksCsv(): string {
  const lines = ["line_id,x,y,depth_below_seabed_m"];
  for (const [k, y] of [ORIGIN_Y - 200, ORIGIN_Y - 600, ORIGIN_Y - 1000].entries())
    for (let x = ORIGIN_X + 100; x < ORIGIN_X + SIZE * CELL - 50; x += 100) lines.push(`L${k + 1},${x},${y},${(1.5 + (x % 700) / 400).toFixed(2)}`);
  return lines.join("\n") + "\n";
}

/** A GeoJSON FeatureCollection in the project CRS, named by a legacy crs member (app/evidence/README.md). */
const fc = (features: unknown[]) => new TextEncoder().encode(JSON.stringify({ type: "FeatureCollection", crs: { type: "name", properties: { name: `urn:ogc:def:crs:EPSG::${EPSG}` } }, features }));
const rect = (x0: number, y0: number, x1: number, y1: number) => [[[x0, y0], [x1, y0], [x1, y1], [x0, y1], [x0, y0]]];

const BLOCK_WEST = [480_100, 5_027_700, 481_000, 5_029_900] as const;
const BLOCK_EAST = [481_000, 5_027_700, 482_300, 5_029_900] as const;
/** Turbines off cell centres (no centre lies on a 50 m buffer's edge): north (assessed) and far south (unassessed). */
const ASSETS = [
  { id: "T1", x: 480_612, y: 5_029_408, impact: 30, buffer: 50 },
  { id: "T2", x: 481_813, y: 5_029_207, impact: 0.2, buffer: 50 },
  { id: "T3", x: 481_412, y: 5_027_709, impact: 30, buffer: 50 },
];
const SITES = [
  ["S-W1", 480_300, 5_029_500],
  ["S-W2", 480_600, 5_028_200],
  ["S-E1", 481_200, 5_028_300],
  ["S-E2", 481_400, 5_028_600],
  ["S-E3", 481_700, 5_028_800],
] as const;
const WRECK = [481_900, 5_028_100] as const;

const upload = (kind: string, content: string | Uint8Array, fileName: string, extra: Record<string, string> = {}) => uploadDataset(world, tokens.analyst, kind, content, fileName, extra);

const pid = () => ({ projectId: String(world.projectId) });
async function get(fn: Parameters<typeof callWith>[0], path: string, who = "reviewer") {
  return callWith(fn, new Request(new URL(path, ORIGIN), { headers: { Authorization: `Bearer ${tokens[who]}` } }), pid());
}
async function put(body: unknown, who = "reviewer") {
  return callWith(apiSettings.action, new Request(new URL(`/api/projects/${world.projectId}/exclusion-settings`, ORIGIN), { method: "PUT", body: JSON.stringify(body), headers: { Authorization: `Bearer ${tokens[who]}`, "Content-Type": "application/json" } }), pid());
}

let reconstructionId: number;
let scoringId: number;
let versionId: number;

beforeAll(async () => {
  world = await buildWorld("rg");
  for (const who of ["analyst", "reviewer", "viewer", "lead"] as const) tokens[who] = (await createApiToken(world.userIds[who], "desk")).token;
  const bathyId = await upload("bathymetry", shelfTiff(), "corrie-shelf.tif", { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" });
  const picksId = await upload("horizon_picks", new TextEncoder().encode(picksCsv()), "corrie-picks.csv");
  await upload("lease_blocks", fc([{ type: "Feature", properties: { name: "West" }, geometry: { type: "Polygon", coordinates: rect(...BLOCK_WEST) } }, { type: "Feature", properties: { name: "East" }, geometry: { type: "Polygon", coordinates: rect(...BLOCK_EAST) } }]), "blocks.geojson");
  await upload(
    "development_footprint",
    fc([
      ...ASSETS.map((a) => ({ type: "Feature", properties: { asset_id: a.id, kind: "turbine", impact_depth_m: a.impact, buffer_m: a.buffer }, geometry: { type: "Point", coordinates: [a.x, a.y] } })),
      { type: "Feature", properties: { asset_id: "C1", kind: "cable", impact_depth_m: 1.5, buffer_m: 10 }, geometry: { type: "LineString", coordinates: [[480_212, 5_029_612], [482_212, 5_028_912]] } },
    ]),
    "footprint.geojson",
  );
  await upload("exclusions", fc([{ type: "Feature", properties: { kind: "wreck", buffer_m: 0, name: "Iron wreck", position_uncertainty_m: 20 }, geometry: { type: "Point", coordinates: [...WRECK] } }, { type: "Feature", properties: { kind: "cable", buffer_m: 500, name: "Old cable" }, geometry: { type: "LineString", coordinates: [[480_100, 5_028_000], [481_000, 5_028_000]] } }]), "exclusions.geojson");
  await upload("interpretations", fc([{ type: "Feature", properties: { kind: "anomaly_archaeological", interpreter: "A. Person" }, geometry: { type: "Polygon", coordinates: rect(481_500, 5_029_500, 481_540, 5_029_560) } }]), "interp.geojson");
  await upload("known_sites", new TextEncoder().encode(["site_id,x,y,precision_m,kind,context", ...SITES.map(([id, x, y]) => `${id},${x},${y},10,scatter,in_situ`)].join("\n") + "\n"), "sites.csv");

  const res = await callWith(
    apiRecons.action,
    new Request(new URL(`/api/projects/${world.projectId}/reconstructions`, ORIGIN), {
      method: "POST",
      body: JSON.stringify({ bathymetryDatasetId: bathyId, horizonDatasetId: picksId, agesKa: [14, 12, 10], oceanSides: ["east"], tidalRangeM: 2, streamThresholdKm2: 0.2, name: "Corrie shelf" }),
      headers: { Authorization: `Bearer ${tokens.analyst}`, "Content-Type": "application/json" },
    }),
    pid(),
  );
  expect(res.status, await res.clone().text()).toBe(202);
  reconstructionId = (await res.json()).reconstruction.id;
  startWorker();
  await waitFor("the reconstruction to publish", async () => {
    const [row] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
    if (row.status === "failed") throw new Error(row.error ?? "failed");
    return row.status === "published" ? row : null;
  }, 90_000);
  const { version } = await createWeightSet({ projectId: world.projectId, name: "Corrie coastal", userId: world.userIds.analyst });
  versionId = version.id;
  await adoptVersion({ projectId: world.projectId, versionId, rationale: "the team's agreed weights", userId: world.userIds.lead });
}, 180_000);

afterAll(async () => {
  await stopWorkers();
  await stopBoss();
});

async function layer(name: string, age?: number): Promise<Float32Array> {
  const q = age === undefined ? "" : `?age=${age}`;
  const res = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${reconstructionId}/layers/${name}${q}`, ORIGIN), { headers: { Authorization: `Bearer ${tokens.analyst}` } }), { id: String(reconstructionId), layer: name });
  expect(res.status, name).toBe(200);
  return (await readGeoTiff(new Uint8Array(await res.arrayBuffer()))).grid.data;
}
async function scoringRaster(name: string): Promise<Float32Array> {
  const res = await callWith(apiRaster.loader, new Request(new URL(`/api/scorings/${scoringId}/raster/${name}`, ORIGIN), { headers: { Authorization: `Bearer ${tokens.analyst}` } }), { id: String(scoringId), name });
  expect(res.status, name).toBe(200);
  return (await readGeoTiff(new Uint8Array(await res.arrayBuffer()))).grid.data;
}
const centre = (i: number) => [ORIGIN_X + ((i % SIZE) + 0.5) * CELL, ORIGIN_Y - (Math.floor(i / SIZE) + 0.5) * CELL];

describe("the review desk", () => {
  it("says how to make a scoring when the adopted version has none (409)", async () => {
    const res = await get(apiConflicts.loader, `/api/projects/${world.projectId}/conflicts`);
    expect(res.status).toBe(409);
    const body = await res.json();
    expect(body.error.message).toMatch(/no published full-resolution scoring yet/);
    expect(body.error.message).toMatch(new RegExp(`weightSetVersionId: ${versionId}`));
  });

  it("reads the conflict table of the adopted version's scoring, equal to a direct computation on the layers", async () => {
    const { scoring } = await startScoring({ id: world.projectId }, world.userIds.analyst, { reconstructionId, weightSetVersionId: versionId, target: { kind: "age", ageKa: 12 } });
    scoringId = scoring.id;
    await waitFor(`scoring ${scoringId} to publish`, async () => {
      const [s] = await db().select().from(scorings).where(eq(scorings.id, scoringId));
      if (s.status === "failed") throw new Error(`scoring failed: ${s.error}`);
      return s.status === "published" ? s : null;
    }, 60_000);
    const res = await get(apiConflicts.loader, `/api/projects/${world.projectId}/conflicts`);
    expect(res.status, await res.clone().text()).toBe(200);
    const table = await res.json();
    expect(table.scoring.id).toBe(scoringId);
    expect(table.rows.map((r: { assetId: string }) => r.assetId)).toEqual(["T1", "T2", "T3", "C1"]);
    expect(table.scoring.classification.labels).toEqual(["very high", "high", "medium", "low"]); // the column's default, read highest first

    const cover = await layer("cover_thickness");
    const potential = await scoringRaster("potential");
    for (const a of ASSETS) {
      const row = table.rows.find((r: { assetId: string }) => r.assetId === a.id);
      // direct: cells whose centre lies within the buffer of the point (none sits on the 64-gon's edge band)
      const cells: number[] = [];
      for (let i = 0; i < SIZE * SIZE; i++) {
        const [x, y] = centre(i);
        const d = Math.hypot(x - a.x, y - a.y);
        expect(Math.abs(d - a.buffer) > 0.2, `cell ${i} lies on ${a.id}'s buffer edge`).toBe(true);
        if (d < a.buffer) cells.push(i);
      }
      expect(row.cells).toBe(cells.length);
      const covers = cells.map((i) => cover[i]).filter((v) => !Number.isNaN(v)).sort((p, q) => p - q);
      const min = covers.length ? covers[0] : null;
      expect(row.depthToHorizonM.min === null ? null : row.depthToHorizonM.min).toBe(min === null ? null : Math.round(min * 100) / 100);
      expect(row.unassessedShare).toBeCloseTo(1 - covers.length / cells.length, 12);
      // the reach rule (zones.ts impactReach): reaches if impact ≥ shallowest cover; within 1 m or partly unassessed: may reach
      const want = min === null ? "unassessed" : a.impact >= min ? "reaches" : a.impact >= min - 1 || covers.length < cells.length ? "may_reach" : "stays_above";
      expect(row.reach, a.id).toBe(want);
      const scores = cells.map((i) => potential[i]).filter((v) => !Number.isNaN(v));
      expect(row.maxPotential).toBe(scores.length ? Math.max(...scores) : null);
    }
    // the designed cases: T1 deep in the assessed north reaches the horizon, T3 in the unassessed south is unassessed
    expect(table.rows[0].reach).toBe("reaches");
    expect(table.rows[2]).toMatchObject({ reach: "unassessed", mitigation: { id: "targeted_survey" } });

    const csv = await get(apiConflicts.loader, `/api/projects/${world.projectId}/conflicts?format=csv`);
    expect(csv.headers.get("content-type")).toContain("text/csv");
    const lines = (await csv.text()).trim().split("\r\n");
    expect(lines).toHaveLength(5);
    expect(lines[0]).toMatch(/^asset_id,kind,dataset,/);
    expect(lines[1]).toMatch(/^T1,turbine,/);
  }, 120_000);

  it("refuses a bad scoring parameter or format with a message", async () => {
    const bad = await get(apiConflicts.loader, `/api/projects/${world.projectId}/conflicts?scoring=abc`);
    expect(bad.status).toBe(400);
    expect((await bad.json()).error.message).toMatch(/scoring must be the id/);
    expect((await get(apiConflicts.loader, `/api/projects/${world.projectId}/conflicts?scoring=999999`)).status).toBe(404);
    expect((await get(apiBlocks.loader, `/api/projects/${world.projectId}/blocks/figures?format=xml`)).status).toBe(400);
    expect((await get(apiZones.loader, `/api/projects/${world.projectId}/zones?kind=everything`)).status).toBe(400);
  });

  it("gives block figures equal to a direct computation, sites exact for a reviewer and suppressed for a viewer", async () => {
    const potential = await scoringRaster("potential");
    const unassessed = await scoringRaster("unassessed");
    const lc12 = await layer("land_class", 12);
    const body = await (await get(apiBlocks.loader, `/api/projects/${world.projectId}/blocks/figures`)).json();
    expect(body.rows.map((r: { name: string }) => r.name)).toEqual(["West", "East"]);
    for (const [k, b] of [BLOCK_WEST, BLOCK_EAST].entries()) {
      const row = body.rows[k];
      let cells = 0, un = 0, high = 0, sum = 0, n = 0, land = 0;
      for (let i = 0; i < SIZE * SIZE; i++) {
        const [x, y] = centre(i);
        if (!(x >= b[0] && x < b[2] && y >= b[1] && y < b[3])) continue;
        cells++;
        if (lc12[i] === 0) land++;
        if (unassessed[i] === 1) { un++; continue; }
        const p = potential[i];
        if (Number.isNaN(p)) continue;
        n++;
        sum += p;
        if (p >= Math.fround(0.75)) high++;
      }
      expect(row.cells).toBe(cells);
      expect(row.areaKm2).toBeCloseTo(((b[2] - b[0]) * (b[3] - b[1])) / 1e6, 9); // shoelace of the rectangle
      expect(row.unassessed.share).toBeCloseTo(un / cells, 12);
      expect(row.classes[0].share).toBeCloseTo(high / cells, 12);
      expect(row.meanPotential).toBeCloseTo(n ? sum / n : NaN, 5);
      expect(row.ages.find((a: { ageKa: number }) => a.ageKa === 12).land).toBeCloseTo(land / cells, 12);
    }
    // the reviewer may see exact positions: 2 sites in West, 3 in East
    expect(body.rows.map((r: { sites: { shown: string } }) => r.sites.shown)).toEqual(["2", "3"]);
    // the viewer: West's two sites lie in two 1 km cells of one site each, both suppressed; East's three share one cell
    const v = await (await get(apiBlocks.loader, `/api/projects/${world.projectId}/blocks/figures`, "viewer")).json();
    expect(v.rows.map((r: { sites: { shown: string; count: number | null } }) => [r.sites.shown, r.sites.count])).toEqual([["< 3", null], ["3", 3]]);
    const csv = await (await get(apiBlocks.loader, `/api/projects/${world.projectId}/blocks/figures?format=csv`, "viewer")).text();
    expect(csv).toMatch(/\nWest,[^\n]*,< 3,/);
  });

  it("draws exclusion zones in WGS 84 around the wreck, the anomaly and find spots, generalised for a viewer", async () => {
    const res = await get(apiZones.loader, `/api/projects/${world.projectId}/zones?kind=exclusion`);
    expect(res.headers.get("content-type")).toBe("application/geo+json");
    const fcR = await res.json();
    const kinds = fcR.features.map((f: { properties: { featureKind: string } }) => f.properties.featureKind).sort();
    expect(kinds).toEqual(["anomaly", "find_spot", "find_spot", "find_spot", "find_spot", "find_spot", "wreck"]); // the cable is not an archaeological feature
    expect(fcR.propertiesDoc.exclusion.distanceM).toMatch(/positionUncertaintyM \+ bufferM/);
    const wreck = fcR.features.find((f: { properties: { featureKind: string } }) => f.properties.featureKind === "wreck");
    expect(wreck.properties).toMatchObject({ positionUncertaintyM: 20, reviewerBufferM: 100, bufferM: 100, distanceM: 120 });
    // RFC 7946: lon/lat; back in the project CRS every vertex is 120 m from the wreck
    const toProject = proj4("WGS84", resolveCrs(EPSG).proj4);
    for (const p of wreck.geometry.coordinates[0]) {
      expect(Math.abs(p[0])).toBeLessThanOrEqual(180);
      const [x, y] = toProject.forward(p);
      expect(Math.hypot(x - WRECK[0], y - WRECK[1])).toBeCloseTo(120, 1);
    }
    const [logged] = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "sites.zones_exported")));
    expect(logged.detail).toMatchObject({ findSpots: 5 });

    const v = await (await get(apiZones.loader, `/api/projects/${world.projectId}/zones?kind=exclusion`, "viewer")).json();
    const spots = v.features.filter((f: { properties: { featureKind: string } }) => f.properties.featureKind === "find_spot");
    expect(spots).toHaveLength(1); // East's shared cell; West's single-site cells suppressed
    expect(spots[0].properties.label).toBe("3 sites in this cell");
    expect(JSON.stringify(v)).not.toMatch(/S-[EW]\d/);
    expect(v.notes.join(" ")).toMatch(/2 known sites lie in generalised cells/);
  });

  it("draws mitigation zones that cover the scored cells, and never calls one exclusion", async () => {
    const body = await (await get(apiZones.loader, `/api/projects/${world.projectId}/zones?kind=mitigation`)).json();
    expect(body.features.length).toBeGreaterThan(0);
    for (const f of body.features) {
      expect(f.properties.zone).toBe("mitigation");
      expect(JSON.stringify(f.properties)).not.toMatch(/exclu/i);
      expect(f.geometry.type).toBe("MultiPolygon");
    }
    const potential = await scoringRaster("potential");
    const unassessed = await scoringRaster("unassessed");
    let scored = 0;
    for (let i = 0; i < potential.length; i++) if (!Number.isNaN(potential[i]) || unassessed[i] === 1) scored++;
    expect(body.features.reduce((s: number, f: { properties: { cells: number } }) => s + f.properties.cells, 0)).toBe(scored);
  });

  it("draws the desk map: classes in the legend's colours, asset footprints, block outlines", async () => {
    const res = await get(apiDeskMap.loader, `/api/projects/${world.projectId}/regulator/map.png`, "viewer");
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("image/png");
    const png = Buffer.from(await res.arrayBuffer());
    expect(png.subarray(1, 4).toString("latin1")).toBe("PNG");
    const w = png.readUInt32BE(16), h = png.readUInt32BE(20);
    expect([w, h]).toEqual([SIZE, SIZE]); // one pixel per cell below 640 cells
    // our encoder (app/png.server.ts): one IDAT, filter 0 on every row
    const idat = png.subarray(png.indexOf("IDAT") + 4, png.indexOf("IEND") - 8);
    const raw = inflateSync(idat);
    const px = (c: number, r: number) => [...raw.subarray(r * (w * 4 + 1) + 1 + c * 4, r * (w * 4 + 1) + 1 + c * 4 + 3)];
    const legend = deskMapLegend(fixedClassification([0.75, 0.5, 0.25], ["very high", "high", "medium", "low"]));
    const cellOf = (x: number, y: number) => [Math.floor((x - ORIGIN_X) / CELL), Math.floor((ORIGIN_Y - y) / CELL)];
    expect(px(...(cellOf(ASSETS[0].x, ASSETS[0].y) as [number, number]))).toEqual(legend.assets.rgb);
    expect(px(...(cellOf(BLOCK_EAST[2] + 1, 5_028_900) as [number, number]))).toEqual(legend.blocks.rgb); // East's eastern edge (x = 482 300 m, the left side of its pixel)
    const potential = await scoringRaster("potential");
    const unassessed = await scoringRaster("unassessed");
    const cls = fixedClassification([0.75, 0.5, 0.25]);
    // every scored cell shows its class's colour unless an overlay is drawn over it
    const overlays = [legend.assets.rgb, legend.blocks.rgb, legend.exclusions.rgb].map(String);
    let checked = 0;
    for (let i = 0; i < SIZE * SIZE; i++) {
      if (unassessed[i] === 1 || Number.isNaN(potential[i])) continue;
      const got = px(i % SIZE, Math.floor(i / SIZE));
      if (overlays.includes(String(got))) continue;
      expect(got, `cell ${i}`).toEqual(legend.classes[classOf(cls, potential[i])].rgb);
      checked++;
    }
    expect(checked).toBeGreaterThan(0);
  });

  it("lets a reviewer set buffers (0–5000 m), audit-logged; refuses bad values and other roles", async () => {
    const bad = await put({ wreck: 6000 });
    expect(bad.status).toBe(422);
    expect((await bad.json()).error.message).toMatch(/between 0 and 5000 m/);
    expect((await put({ wreck: "far" })).status).toBe(422);
    expect((await put({ reef: 10 })).status).toBe(422);
    expect((await put({})).status).toBe(422);
    expect(await db().select().from(exclusionSettings).where(eq(exclusionSettings.projectId, world.projectId))).toEqual([]);
    const analyst = await put({ wreck: 200 }, "analyst");
    expect(analyst.status).toBe(403);

    const ok = await put({ wreck: 300 });
    expect(ok.status, await ok.clone().text()).toBe(200);
    expect((await ok.json()).settings.buffersM).toEqual({ wreck: 300, anomaly: 50, find_spot: 50 });
    const [row] = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "exclusions.buffers_set")));
    expect(row.actorUserId).toBe(world.userIds.reviewer);
    expect(row.detail).toMatchObject({ before: { wreck: 100 }, after: { wreck: 300 } });
    const lead = await put({ anomaly: 75 }, "lead");
    expect((await lead.json()).settings.buffersM).toEqual({ wreck: 300, anomaly: 75, find_spot: 50 });

    const z = await (await get(apiZones.loader, `/api/projects/${world.projectId}/zones?kind=exclusion`)).json();
    expect(z.features.find((f: { properties: { featureKind: string } }) => f.properties.featureKind === "wreck").properties.distanceM).toBe(320);
    const g = await (await get(apiSettings.loader, `/api/projects/${world.projectId}/exclusion-settings`, "viewer")).json();
    expect(g.settings.buffersM.wreck).toBe(300);
  });
});
