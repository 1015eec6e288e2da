// Scorings end to end with the real database, pg-boss and a worker process: a small reconstruction
// with a buried horizon and cores → a saved weight-set version → a scoring for an age and one for a
// period, published; the GeoTIFFs read back with the project's georeferencing (and gdalinfo agrees,
// when installed); the potential equals the same pipeline run here from the layer API's files, and
// the display checksum equals the pipeline run from the layer API's 8-bit display copies (what the
// browser worker receives); the statistics add up; identical requests reuse; bad requests are
// refused with their message and nothing stored; a viewer reads but may not start.
// The display side is set below the grid's (48 cells → a step of 3, 16 × 16 display cells), so the
// display path checked here is the reduced one a large reconstruction takes.
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "3000", LOWSTAND_ENGINE_THREADS: "0", LOWSTAND_DISPLAY_MAX_SIDE: "20" });

import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { count, eq } from "drizzle-orm";
import { db } from "~/db.server";
import { datasets, reconstructions, scorings, weightSetVersions } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { getJson } from "~/storage.server";
import { readGeoTiff } from "~/terrain/geotiff-read";
import type { Manifest } from "~/terrain/reconstruct";
import { defaultWeightSetContent, type WeightSetContent } from "~/scoring/weight-set";
import { potentialChecksum, type LayerData } from "~/scoring/potential";
import { horizonEvidencePoints, scoreTarget, type CoreEvidence, type ScoreTarget } from "~/scoring/scoring-inputs";
import { createWeightSet, saveWeightSetVersion } from "~/weight-sets.server";
import * as apiRecons from "~/routes/api.project-reconstructions";
import * as apiLayer from "~/routes/api.reconstruction-layer";
import * as apiScorings from "~/routes/api.project-scorings";
import * as apiScoring from "~/routes/api.scoring";
import * as apiRaster from "~/routes/api.scoring-raster";
import { stopBoss } from "./boss.server";
import { resolveScoringRequest } from "~/scorings.server";
import { shelfTiff, uploadDataset, shelfPicksCsv, shelfCoresCsv } from "../tests/support/small-shelf";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";
import { FAST_JOB_SETTINGS, startWorker, stopWorkers, waitFor } from "../tests/support/workers";

let world: World;
let token: string;
let viewerToken: string;

const ORIGIN_X = 480_000;
const ORIGIN_Y = 5_030_000;
const CELL = 50;
const SIZE = 48;


const picksCsv = () => shelfPicksCsv();

const coresCsv = shelfCoresCsv;

const upload = (kind: string, content: string | Uint8Array, fileName: string, extra: Record<string, string> = {}) => uploadDataset(world, token, kind, content, fileName, extra);

const auth = (t = token) => ({ Authorization: `Bearer ${t}` });

async function postScoring(body: unknown, projectId = world.projectId, t = token) {
  const res = await callWith(apiScorings.action, new Request(new URL(`/api/projects/${projectId}/scorings`, ORIGIN), { method: "POST", body: JSON.stringify(body), headers: { ...auth(t), "Content-Type": "application/json" } }), { projectId: String(projectId) });
  return { status: res.status, body: await res.json() };
}

async function getScoringApi(id: number, t = token) {
  const res = await callWith(apiScoring.loader, new Request(new URL(`/api/scorings/${id}`, ORIGIN), { headers: auth(t) }), { id: String(id) });
  return { status: res.status, body: await res.json() };
}

async function raster(id: number, name: string, t = token) {
  return callWith(apiRaster.loader, new Request(new URL(`/api/scorings/${id}/raster/${name}`, ORIGIN), { headers: auth(t) }), { id: String(id), name });
}

async function waitPublished(id: number) {
  return waitFor(`scoring ${id} to publish`, async () => {
    const [s] = await db().select().from(scorings).where(eq(scorings.id, id));
    if (s.status === "failed") throw new Error(`scoring failed: ${s.error}`);
    return s.status === "published" ? s : null;
  }, 45_000);
}

const scoringCount = async () => (await db().select({ n: count() }).from(scorings))[0].n;

let reconstructionId: number;
let manifest: Manifest;
let versionId: number;
let versionOffId: number;
let coresId: number;
const PERIOD = { name: "Early Holocene", youngKa: 9.5, oldKa: 13, rule: "zero" as const };

beforeAll(async () => {
  world = await buildWorld("sc");
  token = (await createApiToken(world.userIds.analyst, "scoring")).token;
  viewerToken = world.viewerToken;
  const bathyId = await upload("bathymetry", shelfTiff(), "corrie-shelf.tif", { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" });
  const picksId = await upload("horizon_picks", new TextEncoder().encode(picksCsv()), "corrie-picks.csv");
  coresId = await upload("cores", new TextEncoder().encode(coresCsv()), "corrie-cores.csv");

  const res = await callWith(
    apiRecons.action,
    new Request(new URL(`/api/projects/${world.projectId}/reconstructions`, ORIGIN), {
      method: "POST",
      body: JSON.stringify({ bathymetryDatasetId: bathyId, horizonDatasetId: picksId, agesKa: [14, 12, 10], oceanSides: ["east"], tidalRangeM: 2, streamThresholdKm2: 0.2, name: "Corrie shelf" }),
      headers: { ...auth(), "Content-Type": "application/json" },
    }),
    { projectId: String(world.projectId) },
  );
  expect(res.status, await res.clone().text()).toBe(202);
  reconstructionId = (await res.json()).reconstruction.id;
  startWorker();
  const r = await waitFor("the reconstruction to publish", async () => {
    const [row] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
    if (row.status === "failed") throw new Error(row.error ?? "failed");
    return row.status === "published" ? row : null;
  }, 90_000);
  manifest = r.manifest as unknown as Manifest;

  // A weight set saved through the weight-set module: version 1 the starting content, version 2
  // adds a period; a second set has preservation switched off.
  const content: WeightSetContent = { ...defaultWeightSetContent(), periods: [PERIOD] };
  const { set } = await createWeightSet({ projectId: world.projectId, name: "Corrie coastal", userId: world.userIds.analyst });
  const v2 = await saveWeightSetVersion({ weightSetId: set.id, expectedVersion: 1, content, note: "add the Early Holocene period", userId: world.userIds.analyst });
  versionId = v2.id;
  const off = await createWeightSet({ projectId: world.projectId, name: "Corrie occupation only", content: { ...content, preservation: { ...content.preservation, enabled: false } }, userId: world.userIds.analyst });
  versionOffId = off.version.id;
}, 180_000);

afterAll(async () => {
  await stopWorkers();
  await stopBoss();
});

/** ceil(48 / 20) = 3 full cells per display cell along each side; ceil(48 / 3) = 16 display cells. */
const DISPLAY_STEP = 3;
const DISPLAY_SIDE = 16;

/** Every layer of the reconstruction through the layer API: the GeoTIFF's values and the ?display=8 codes. */
async function layersFromApi() {
  const values = new Map<string, LayerData>();
  const codes = new Map<string, LayerData>();
  for (const l of manifest.layers) {
    const q = l.ageKa === null ? "" : `?age=${l.ageKa}`;
    const key = `${l.name}@${l.ageKa}`;
    const tif = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${reconstructionId}/layers/${l.name}${q}`, ORIGIN), { headers: auth() }), { id: String(reconstructionId), layer: l.name });
    expect(tif.status, key).toBe(200);
    if (l.stats.validCount > 0) values.set(key, { kind: "values", values: (await readGeoTiff(new Uint8Array(await tif.arrayBuffer()))).grid.data });
    else values.set(key, { kind: "values", values: new Float32Array(SIZE * SIZE).fill(NaN) });
    const d = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${reconstructionId}/layers/${l.name}${q ? `${q}&` : "?"}display=8`, ORIGIN), { headers: auth() }), { id: String(reconstructionId), layer: l.name });
    expect(d.status, `${key} display`).toBe(200);
    const h = (n: string) => Number(d.headers.get(n));
    expect([h("X-Lowstand-Width"), h("X-Lowstand-Height"), h("X-Lowstand-Step")], `${key} display grid`).toEqual([DISPLAY_SIDE, DISPLAY_SIDE, DISPLAY_STEP]);
    codes.set(key, { kind: "codes", codes: new Uint8Array(await d.arrayBuffer()), scale: h("X-Lowstand-Scale"), offset: h("X-Lowstand-Offset"), nodataCode: h("X-Lowstand-Nodata-Code") });
  }
  return { values, codes };
}

async function evidenceFromStore() {
  const [d] = await db().select().from(datasets).where(eq(datasets.id, coresId));
  return horizonEvidencePoints((await getJson<{ rows: CoreEvidence[] }>(d.derivedKey)).rows, []);
}

describe("a scoring", () => {
  let ageScoringId: number;

  it("scores an age: published files in the project's georeferencing, equal to the pipeline run here, with statistics that add up", async () => {
    const before = await postScoring({ reconstructionId, weightSetVersionId: versionId, target: { kind: "age", ageKa: 12 } });
    expect(before.status, JSON.stringify(before.body)).toBe(202);
    expect(before.body.jobId).toMatch(/^[0-9a-f-]{36}$/);
    ageScoringId = before.body.scoring.id;
    await waitPublished(ageScoringId);
    const { status, body } = await getScoringApi(ageScoringId);
    expect(status).toBe(200);
    const s = body.scoring;
    expect(s).toMatchObject({ status: "published", target: { kind: "age", ageKa: 12 }, version: { setName: "Corrie coastal", number: 2 }, reconstruction: { id: reconstructionId, name: "Corrie shelf" } });
    expect(s.downloads.map((d: { name: string }) => d.name).sort()).toEqual(["occupation", "potential", "preservation", "unassessed"]);
    const result = s.result;

    // The potential GeoTIFF: size and georeferencing of the reconstruction, in the project's EPSG.
    const res = await raster(ageScoringId, "potential");
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toBe("image/tiff");
    expect(res.headers.get("Content-Disposition")).toBe(`attachment; filename="sc-main-scoring-${ageScoringId}-12ka-potential.tif"`);
    const bytes = new Uint8Array(await res.arrayBuffer());
    const potential = (await readGeoTiff(bytes)).grid;
    expect(potential.spec).toMatchObject({ width: SIZE, height: SIZE, originX: ORIGIN_X, originY: ORIGIN_Y, cellSizeX: CELL, cellSizeY: CELL });
    expect(potential.spec.crs?.epsg).toBe(32733);
    const sha = createHash("sha256").update(bytes).digest("hex");
    expect(result.files.find((f: { name: string }) => f.name === "potential").sha256).toBe(sha);

    // GDAL reads it the same way (when installed): size, Float32, NaN nodata, the geotransform, UTM 33S.
    if (hasGdal()) {
      const dir = mkdtempSync(path.join(tmpdir(), "lowstand-scoring-"));
      try {
        const file = path.join(dir, "potential.tif");
        writeFileSync(file, bytes);
        const info = JSON.parse(execFileSync("gdalinfo", ["-json", file], { encoding: "utf8" }));
        expect(info.size).toEqual([SIZE, SIZE]);
        expect(info.bands[0].type).toBe("Float32");
        expect(String(info.bands[0].noDataValue)).toMatch(/nan/i);
        expect(info.geoTransform).toEqual([ORIGIN_X, CELL, 0, ORIGIN_Y, 0, -CELL]);
        expect(JSON.stringify(info.coordinateSystem)).toMatch(/32733/);
        expect(info.metadata?.[""]?.AREA_OR_POINT ?? "Area").toBe("Area");
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    }

    // The same pipeline run here from the layer API's files gives the same potential, cell for cell;
    // from the 8-bit display copies it gives the stored display checksum (server equals worker).
    const { values, codes } = await layersFromApi();
    const evidence = await evidenceFromStore();
    expect(evidence.map((p) => p.state).sort()).toEqual(["intact", "truncated"]); // the refusal says nothing
    expect(result.preservation.evidence).toMatchObject({ points: 2, intact: 1, truncated: 1 });
    const grid = { width: SIZE, height: SIZE, cellSizeX: CELL, cellSizeY: CELL, originX: ORIGIN_X, originY: ORIGIN_Y };
    const content: WeightSetContent = { ...defaultWeightSetContent(), periods: [PERIOD] };
    const target: ScoreTarget = { kind: "age", ageKa: 12 };
    const here = scoreTarget(content, grid, manifest.agesKa, target, (n, a) => values.get(`${n}@${a}`), evidence);
    let differ = 0;
    for (let i = 0; i < here.potential.length; i++) {
      const a = here.potential[i];
      const b = potential.data[i];
      if (!(a === b || (a !== a && b !== b))) differ++;
    }
    expect(differ, "cells where the job's potential differs from the pipeline run here").toBe(0);
    const displayGrid = { width: DISPLAY_SIDE, height: DISPLAY_SIDE, cellSizeX: CELL * DISPLAY_STEP, cellSizeY: CELL * DISPLAY_STEP, originX: ORIGIN_X, originY: ORIGIN_Y };
    const display = scoreTarget(content, displayGrid, manifest.agesKa, target, (n, a) => codes.get(`${n}@${a}`), evidence);
    expect(display.potential.length).toBe(DISPLAY_SIDE * DISPLAY_SIDE);
    expect(result.displayChecksum.grid).toEqual({ width: DISPLAY_SIDE, height: DISPLAY_SIDE, step: DISPLAY_STEP });
    expect(result.displayChecksum.checksum).toBe(potentialChecksum(display.potential));
    expect(result.displayChecksum.inputs.length).toBeGreaterThan(0);

    // Preservation is active (the horizon leaves the south unassessed); potential = occupation × preservation
    // wherever both are numbers (the pipeline's rule, interfaces: "occupation × preservation (when active)").
    expect(result.preservation.active).toBe(true);
    const occupation = (await readGeoTiff(new Uint8Array(await (await raster(ageScoringId, "occupation")).arrayBuffer()))).grid.data;
    const preservation = (await readGeoTiff(new Uint8Array(await (await raster(ageScoringId, "preservation")).arrayBuffer()))).grid.data;
    let products = 0;
    for (let i = 0; i < potential.data.length; i++) {
      if (potential.data[i] !== potential.data[i]) continue;
      expect(potential.data[i]).toBeCloseTo(occupation[i] * preservation[i], 6);
      products++;
    }
    expect(products).toBeGreaterThan(0);

    // Statistics add up: occupiable = classes + unassessed (cells, area, shares); the histogram
    // holds every scored cell; min/max/mean agree with the file.
    const cellKm2 = (CELL * CELL) / 1e6;
    const classes = result.provisionalClassification.classes as Array<{ name: string; cells: number; areaKm2: number; share: number }>;
    expect(classes.map((c) => c.name)).toEqual(["low", "medium", "high", "very high"]);
    const classCells = classes.reduce((a, c) => a + c.cells, 0);
    expect(result.unassessed.cells).toBeGreaterThan(0);
    expect(result.provisionalClassification.unscored.cells).toBe(0);
    expect(classCells + result.unassessed.cells).toBe(result.occupiable.cells);
    expect(classes.reduce((a, c) => a + c.areaKm2, 0) + result.unassessed.areaKm2).toBeCloseTo(result.occupiable.areaKm2, 9);
    expect(result.occupiable.areaKm2).toBeCloseTo(result.occupiable.cells * cellKm2, 9);
    expect(classes.reduce((a, c) => a + c.share, 0) + result.provisionalClassification.unassessed.share).toBeCloseTo(1, 9);
    expect(result.histogram.counts.length).toBe(20);
    expect(result.histogram.counts.reduce((a: number, b: number) => a + b, 0)).toBe(classCells);
    const finite = Array.from(potential.data).filter((v) => v === v);
    expect(finite.length).toBe(result.potential.cells);
    expect(result.potential.min).toBe(Math.min(...finite));
    expect(result.potential.max).toBe(Math.max(...finite));
    expect(result.potential.mean).toBeCloseTo(finite.reduce((a, b) => a + b, 0) / finite.length, 6);
    const sorted = [...finite].sort((a, b) => a - b);
    const mid = sorted.length / 2;
    expect(result.potential.median).toBeCloseTo(sorted.length % 2 ? sorted[Math.floor(mid)] : (sorted[mid - 1] + sorted[mid]) / 2, 6);
    // each class count, recounted from the file with the stated breaks
    const recount = [0, 0, 0, 0];
    for (const v of finite) recount[v < 0.25 ? 0 : v < 0.5 ? 1 : v < 0.75 ? 2 : 3]++;
    expect(classes.map((c) => c.cells)).toEqual(recount);

    // The unassessed mask is written beside preservation: 1 on exactly the cells the statistics count.
    const maskRes = await raster(ageScoringId, "unassessed");
    expect(maskRes.status).toBe(200);
    const mask = (await readGeoTiff(new Uint8Array(await maskRes.arrayBuffer()))).grid.data;
    expect(Array.from(mask).filter((v) => v === 1).length).toBe(result.unassessed.cells);
    expect(result.notes).toBeInstanceOf(Array);
    expect(result.caution).toMatch(/not evidence of absence/);
  });

  it("returns the existing scoring for an identical request", async () => {
    const n = await scoringCount();
    const again = await postScoring({ reconstructionId, weightSetVersionId: versionId, target: { kind: "age", ageKa: 12 } });
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ reused: true, scoring: { id: ageScoringId, status: "published" } });
    expect(await scoringCount()).toBe(n);
  });

  it("keys a scoring by its display reduction too: another display step is another scoring, the same step the same one", async () => {
    const req = { reconstructionId, weightSetVersionId: versionId, target: { kind: "age" as const, ageKa: 12 } };
    const saved = process.env.LOWSTAND_DISPLAY_MAX_SIDE;
    try {
      const at3 = (await resolveScoringRequest(world.projectId, req)).inputsHash; // this file's side, 20: a step of 3
      process.env.LOWSTAND_DISPLAY_MAX_SIDE = "16"; // ceil(48 / 16) = 3 as well: the same reduction, the same key
      expect((await resolveScoringRequest(world.projectId, req)).inputsHash).toBe(at3);
      process.env.LOWSTAND_DISPLAY_MAX_SIDE = "24"; // a step of 2
      const at2 = (await resolveScoringRequest(world.projectId, req)).inputsHash;
      expect(at2).not.toBe(at3);
      process.env.LOWSTAND_DISPLAY_MAX_SIDE = "1024"; // step 1: full resolution, a third key
      const at1 = (await resolveScoringRequest(world.projectId, req)).inputsHash;
      expect(new Set([at1, at2, at3]).size).toBe(3);
    } finally {
      process.env.LOWSTAND_DISPLAY_MAX_SIDE = saved;
    }
  });

  it("scores a period, with preservation off: the time-weighted ages, no preservation raster", async () => {
    const started = await postScoring({ reconstructionId, weightSetVersionId: versionOffId, target: { kind: "period", name: "Early Holocene" } });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    const id = started.body.scoring.id as number;
    await waitPublished(id);
    const { body } = await getScoringApi(id, viewerToken);
    const s = body.scoring;
    expect(s).toMatchObject({ status: "published", target: { kind: "period", name: "Early Holocene", youngKa: 9.5, oldKa: 13, rule: "zero" }, version: { setName: "Corrie occupation only", number: 1 } });
    expect(s.result.preservation.active).toBe(false);
    expect(s.result.preservation.reason).toMatch(/switched off/);
    // Decision 401: ages 10, 12, 14 stand for 9–11, 11–13, 13–15 ka; inside 9.5–13 that is 1.5, 2 and 0 ka.
    const w = Object.fromEntries((s.result.ageWeights as Array<{ ageKa: number; weight: number }>).map((a) => [a.ageKa, a.weight]));
    expect(w[10]).toBeCloseTo(1.5 / 3.5, 9);
    expect(w[12]).toBeCloseTo(2 / 3.5, 9);
    expect(w[14] ?? 0).toBeCloseTo(0, 9);
    expect(s.result.unassessed.cells).toBe(0);
    const classes = s.result.provisionalClassification.classes as Array<{ cells: number }>;
    expect(classes.reduce((a, c) => a + c.cells, 0)).toBe(s.result.occupiable.cells);
    const res = await raster(id, "potential", viewerToken);
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Disposition")).toBe(`attachment; filename="sc-main-scoring-${id}-period-early-holocene-potential.tif"`);
    const pres = await raster(id, "preservation");
    expect(pres.status).toBe(404);
    expect((await pres.json()).error.message).toMatch(/no preservation raster/);
    expect((await raster(id, "elevation")).status).toBe(404);
  });

  it("refuses bad requests with their message, and stores nothing", async () => {
    const n = await scoringCount();
    const base = { reconstructionId, weightSetVersionId: versionId };
    const expectRefused = async (body: unknown, status: number, message: RegExp, projectId?: number) => {
      const r = await postScoring(body, projectId);
      expect(r.status, JSON.stringify(r.body)).toBe(status);
      expect(r.body.error.message).toMatch(message);
    };
    await expectRefused({ ...base, target: { kind: "age", ageKa: 11 } }, 422, /11 ka is not one of the reconstruction's ages \(14, 12, 10 ka\)/);
    await expectRefused({ ...base, target: { kind: "period", name: "Late Glacial" } }, 422, /no period "Late Glacial"; its periods are "Early Holocene"/);
    await expectRefused({ ...base, target: { kind: "age", ageKa: 12 }, extra: 1 }, 422, /extra|unrecognized|Unrecognized/i);
    await expectRefused({ ...base, target: { kind: "decade" } }, 422, /target/);

    // a reconstruction of another project
    const [foreign] = await db().insert(reconstructions).values({ projectId: world.otherProjectId, inputsHash: "foreign", params: {}, engineVersion: "x", status: "published", manifest: manifest as never, layerPrefix: "runs/x" }).returning();
    await expectRefused({ ...base, reconstructionId: foreign.id, target: { kind: "age", ageKa: 12 } }, 422, new RegExp(`Reconstruction ${foreign.id} is not one of this project's`));
    // a reconstruction of this project that is not published yet
    const [pending] = await db().insert(reconstructions).values({ projectId: world.projectId, inputsHash: "pending", params: {}, engineVersion: "x" }).returning();
    await expectRefused({ ...base, reconstructionId: pending.id, target: { kind: "age", ageKa: 12 } }, 409, /not published yet/);
    // a weight-set version of another project
    const other = await createWeightSet({ projectId: world.otherProjectId, name: "Tessel weights", userId: world.userIds.outsider });
    await expectRefused({ ...base, weightSetVersionId: other.version.id, target: { kind: "age", ageKa: 12 } }, 422, /does not belong to a weight set of this project/);
    // a period whose window misses the reconstruction's ages
    const { set } = await createWeightSet({ projectId: world.projectId, name: "Corrie far past", content: { ...defaultWeightSetContent(), periods: [{ name: "Last Glacial Maximum", youngKa: 19, oldKa: 26, rule: "zero" }] }, userId: world.userIds.analyst });
    const [far] = await db().select().from(weightSetVersions).where(eq(weightSetVersions.weightSetId, set.id));
    await expectRefused({ ...base, weightSetVersionId: far.id, target: { kind: "period", name: "Last Glacial Maximum" } }, 422, /Last Glacial Maximum.*outside the reconstruction's ages/);

    expect(await scoringCount()).toBe(n);
  });

  it("lets a viewer read scorings and download rasters, but not start one", async () => {
    const list = await callWith(apiScorings.loader, new Request(new URL(`/api/projects/${world.projectId}/scorings`, ORIGIN), { headers: auth(viewerToken) }), { projectId: String(world.projectId) });
    expect(list.status).toBe(200);
    const ids = (await list.json()).scorings.map((s: { id: number }) => s.id);
    expect(ids.length).toBeGreaterThanOrEqual(2);
    expect(ids).toEqual([...ids].sort((a: number, b: number) => b - a)); // newest first
    expect((await getScoringApi(ageScoringId, viewerToken)).status).toBe(200);
    expect((await raster(ageScoringId, "potential", viewerToken)).status).toBe(200);
    const n = await scoringCount();
    const refused = await postScoring({ reconstructionId, weightSetVersionId: versionId, target: { kind: "age", ageKa: 10 } }, world.projectId, viewerToken);
    expect(refused.status).toBe(403);
    expect(await scoringCount()).toBe(n);
  });

  it("answers 409 for the raster of a scoring that is not published", async () => {
    const [row] = await db().select().from(scorings).where(eq(scorings.id, ageScoringId));
    const [pending] = await db().insert(scorings).values({ projectId: world.projectId, reconstructionId, weightSetVersionId: row.weightSetVersionId, target: { kind: "age", ageKa: 14 }, inputsHash: "pending-probe" }).returning();
    const res = await raster(pending.id, "potential");
    expect(res.status).toBe(409);
    expect((await res.json()).error.message).toMatch(/not published/);
    await db().delete(scorings).where(eq(scorings.id, pending.id));
  });
});

function hasGdal(): boolean {
  try {
    execFileSync("sh", ["-c", "command -v gdalinfo"], { stdio: "ignore" });
    return true;
  } catch {
    return false;
  }
}
