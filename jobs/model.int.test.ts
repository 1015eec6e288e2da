// Trained models end to end with the real database, pg-boss and a worker process: a small invented
// shelf is reconstructed, then invented sites (in situ, derived), cores (with and without
// archaeological material) and survey lines are uploaded on its land at 12 ka; a model is trained
// over the API and published with its card and fold metrics; derived finds and negative cores never
// enter training; too few sites are refused with the count before anything is stored; a viewer gets
// no model, no card and no raster; the reviewer reads the card but may not start one.
// The display side is set below the grid's (48 cells → a step of 3, 16 × 16 display cells), so the
// model predicts its display-resolution first look before the full raster, as on a large grid.
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "3000", LOWSTAND_ENGINE_THREADS: "0", LOWSTAND_DISPLAY_MAX_SIDE: "20" });

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { count, eq } from "drizzle-orm";
import { db } from "~/db.server";
import { auditLog, models, reconstructions } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { readGeoTiff } from "~/terrain/geotiff-read";
import { layerGrid } from "~/layers.server";
import { layerKey } from "~/reconstructions.server";
import type { Manifest } from "~/terrain/reconstruct";
import { deserialiseForest, predictRaster } from "~/scoring/forest";
import { factorDef, type FactorId } from "~/scoring/factors";
import { reduceToDisplay, reductionOf } from "~/raster-display";
import { getJson, store } from "~/storage.server";
import * as apiRecons from "~/routes/api.project-reconstructions";
import * as apiModels from "~/routes/api.project-models";
import * as apiModel from "~/routes/api.model";
import * as apiRaster from "~/routes/api.model-raster";
import * as apiValidation from "~/routes/api.model-validation";
import { stopBoss } from "./boss.server";
import { shelfTiff, uploadDataset } from "../tests/support/small-shelf";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";
import { FAST_JOB_SETTINGS, startWorker, stopWorkers, waitFor } from "../tests/support/workers";

let world: World;
let token: string;
let reviewerToken: string;

const ORIGIN_X = 480_000;
const ORIGIN_Y = 5_030_000;
const CELL = 50;
const SIZE = 48;
const FACTORS = ["dist_stream", "dist_shoreline", "slope", "tpi", "height_above_sea"];
/** small enough to train in well under a second per fold */
const SMALL = { trees: 10, folds: 2, blockSizeM: 600, backgroundCells: 200, minSites: 5, seed: 11 };


const upload = (kind: string, content: string | Uint8Array, fileName: string, extra: Record<string, string> = {}) => uploadDataset(world, token, kind, content, fileName, extra);

const auth = (t = token) => ({ Authorization: `Bearer ${t}` });

async function postModel(body: unknown, t = token) {
  const res = await callWith(apiModels.action, new Request(new URL(`/api/projects/${world.projectId}/models`, ORIGIN), { method: "POST", body: JSON.stringify(body), headers: { ...auth(t), "Content-Type": "application/json" } }), { projectId: String(world.projectId) });
  return { status: res.status, body: await res.json() };
}

async function getModelApi(id: number, t = token) {
  const res = await callWith(apiModel.loader, new Request(new URL(`/api/models/${id}`, ORIGIN), { headers: auth(t) }), { id: String(id) });
  return { status: res.status, text: await res.text() };
}

async function raster(id: number, query = "", t = token) {
  return callWith(apiRaster.loader, new Request(new URL(`/api/models/${id}/raster${query}`, ORIGIN), { headers: auth(t) }), { id: String(id) });
}

const modelCount = async () => (await db().select({ n: count() }).from(models))[0].n;

/** ceil(48 / 20) = 3 full cells per display cell; ceil(48 / 3) = 16 display cells a side. */
const DISPLAY_STEP = 3;
const DISPLAY_SIDE = 16;

/** A reconstruction layer's values as the job reads them. */
async function readLayer(name: string, ageKa: number | null) {
  const [r] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
  return (await layerGrid(layerKey(r, name, ageKa)!, manifest, manifest.layers.find((l) => l.name === name && (l.ageKa ?? null) === ageKa)!)).data;
}

let reconstructionId: number;
let manifest: Manifest;
/** invented evidence: what a correct model must count */
const IN_SITU = 12;
const DERIVED = 3;
const POSITIVE_CORES = 1;
const NEGATIVE_CORES = 2;
const siteXs: number[] = [];
/** cells of the presences (in-situ sites, then the positive core) */
const presenceCells: number[] = [];

/** Cell centre in the project CRS. */
const centre = (cell: number): [number, number] => [ORIGIN_X + ((cell % SIZE) + 0.5) * CELL, ORIGIN_Y - (Math.floor(cell / SIZE) + 0.5) * CELL];

beforeAll(async () => {
  world = await buildWorld("md");
  token = (await createApiToken(world.userIds.analyst, "model")).token;
  reviewerToken = (await createApiToken(world.userIds.reviewer, "model-review")).token;
  const bathyId = await upload("bathymetry", shelfTiff(), "corrie-shelf.tif", { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" });
  const res = await callWith(
    apiRecons.action,
    new Request(new URL(`/api/projects/${world.projectId}/reconstructions`, ORIGIN), {
      method: "POST",
      body: JSON.stringify({ bathymetryDatasetId: bathyId, agesKa: [14, 12, 10], oceanSides: ["east"], tidalRangeM: 2, streamThresholdKm2: 0.2, name: "Corrie shelf" }),
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

  // Land at 12 ka with a value in every factor used: where the invented sites go.
  const read = async (name: string, ageKa: number | null) => (await layerGrid(layerKey(r, name, ageKa)!, manifest, manifest.layers.find((l) => l.name === name && (l.ageKa ?? null) === ageKa)!)).data;
  const lc = await read("land_class", 12);
  const factorLayers = await Promise.all(FACTORS.map((f) => read(f, ["slope", "tpi"].includes(f) ? null : 12)));
  const good: number[] = [];
  for (let i = 0; i < SIZE * SIZE; i++) if (lc[i] === 0 && factorLayers.every((l) => l[i] === l[i])) good.push(i);
  expect(good.length, "land cells at 12 ka").toBeGreaterThan(100);
  // spread over the land: every k-th good cell
  const pick = (k: number, of: number) => good[Math.floor(((k + 0.5) * good.length) / of)];
  const sites = ["site_id,x,y,precision_m,kind,context,cal_bp_from,cal_bp_to"];
  for (let k = 0; k < IN_SITU; k++) {
    const [x, y] = centre(pick(k, IN_SITU + DERIVED));
    siteXs.push(x);
    presenceCells.push(pick(k, IN_SITU + DERIVED));
    sites.push(`CS-${k + 1},${x},${y},10,hearth,in_situ,12200,11800`);
  }
  for (let k = 0; k < DERIVED; k++) {
    const [x, y] = centre(pick(IN_SITU + k, IN_SITU + DERIVED));
    sites.push(`CS-D${k + 1},${x},${y},10,flint,derived,12200,11800`);
  }
  await upload("known_sites", sites.join("\n") + "\n", "corrie-sites.csv");
  const cores = ["core_id,x,y,horizon_reached,preserved_land_surface,archaeological_indicators,lab_code,cal_from,cal_to"];
  const [cx, cy] = centre(good[Math.floor(good.length / 3) + 1]);
  presenceCells.push(good[Math.floor(good.length / 3) + 1]);
  cores.push(`CC-1,${cx},${cy},yes,yes,burnt flint,CR-1,12100,11900`);
  for (let k = 0; k < NEGATIVE_CORES; k++) {
    const [nx, ny] = centre(good[Math.floor(((k + 1) * good.length) / 4) + 2]);
    cores.push(`CC-N${k + 1},${nx},${ny},yes,no,none,,,`);
  }
  await upload("cores", cores.join("\n") + "\n", "corrie-cores.csv");
  // three east–west survey lines across the grid
  const lines = ["line_id,fix_id,x,y"];
  for (const [k, y] of [ORIGIN_Y - 400, ORIGIN_Y - 1200, ORIGIN_Y - 2000].entries())
    for (let x = ORIGIN_X + 25, f = 1; x < ORIGIN_X + SIZE * CELL; x += 200, f++) lines.push(`L${k + 1},${f},${x},${y}`);
  await upload("survey_lines", lines.join("\n") + "\n", "corrie-lines.csv");
}, 180_000);
afterAll(async () => {
  await stopWorkers();
  await stopBoss();
});

describe("a trained model", () => {
  let modelId: number;

  it("trains and publishes with a card, fold metrics and a probability raster on the age's land", async () => {
    const audits = (await db().select({ n: count() }).from(auditLog).where(eq(auditLog.action, "model.started")))[0].n;
    const started = await postModel({ reconstructionId, ageKa: 12, factors: FACTORS, settings: SMALL });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    modelId = started.body.model.id;
    expect((await db().select({ n: count() }).from(auditLog).where(eq(auditLog.action, "model.started")))[0].n).toBe(audits + 1);
    await waitFor(`model ${modelId} to publish`, async () => {
      const [m] = await db().select().from(models).where(eq(models.id, modelId));
      if (m.status === "failed") throw new Error(`model failed: ${m.error}`);
      return m.status === "published" ? m : null;
    }, 60_000);
    const got = await getModelApi(modelId);
    expect(got.status).toBe(200);
    const m = JSON.parse(got.text).model;
    expect(m).toMatchObject({ status: "published", ageKa: 12, reconstruction: { id: reconstructionId } });
    const card = m.card;
    // Presences: the in-situ sites and the core with archaeological material — nothing else.
    expect(card.samples).toMatchObject({ presences: IN_SITU + POSITIVE_CORES, sites: IN_SITU, cores: POSITIVE_CORES });
    expect(card.samples.excluded).toEqual({ "derived find": DERIVED, "core without archaeological material (not an absence)": NEGATIVE_CORES });
    expect(card.samples.background).toBeGreaterThan(50);
    expect(card.samples.background).toBeLessThanOrEqual(SMALL.backgroundCells);
    expect(card.inputs).toEqual(FACTORS);
    expect(card.parameters).toMatchObject({ trees: SMALL.trees, minPresences: SMALL.minSites, seed: SMALL.seed });
    // Spatial-block cross-validation: k folds, every presence held out once, AUC a probability.
    expect(card.folds.k).toBe(SMALL.folds);
    expect(card.folds.blockSizeM).toBe(SMALL.blockSizeM);
    expect(card.folds.folds).toHaveLength(SMALL.folds);
    expect(card.folds.folds.reduce((s: number, f: { testPresences: number }) => s + f.testPresences, 0)).toBe(IN_SITU + POSITIVE_CORES);
    expect(card.folds.auc.mean).toBeGreaterThanOrEqual(0);
    expect(card.folds.auc.mean).toBeLessThanOrEqual(1);
    expect(card.folds.gain).toHaveLength(card.folds.classLabels.length);
    expect(card.trainingMs).toBeGreaterThanOrEqual(0);
    expect(card.background.searchedGround.surveyLines).toBe(3);
    expect(card.background.searchedGround.cores).toBe(POSITIVE_CORES + NEGATIVE_CORES);

    // No site position and no record id anywhere in the response.
    for (const x of siteXs) expect(got.text).not.toContain(String(x));
    expect(got.text).not.toMatch(/CS-\d|site-\d|CC-/);

    // The stored forest was trained on exactly the card's samples' factors and trees.
    const [row] = await db().select().from(models).where(eq(models.id, modelId));
    const forest = deserialiseForest(await getJson(`${row.layerPrefix}/forest.json`));
    expect(forest.factorIds).toEqual(FACTORS);
    expect(forest.compiled.trees).toBe(SMALL.trees);

    // The raster: the reconstruction's grid in the project's CRS, a share of trees in [0, 1] on land
    // at 12 ka, NaN on the sea (a share of T votes is a multiple of 1/T — Breiman 2001, the vote).
    const res = await raster(modelId);
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toBe("image/tiff");
    const tif = await readGeoTiff(new Uint8Array(await res.arrayBuffer()));
    expect(tif.grid.spec).toMatchObject({ width: SIZE, height: SIZE, originX: ORIGIN_X, originY: ORIGIN_Y, cellSizeX: CELL });
    expect(tif.grid.spec.crs?.epsg).toBe(32733);
    const [r] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
    const lc = (await layerGrid(layerKey(r, "land_class", 12)!, manifest, manifest.layers.find((l) => l.name === "land_class" && l.ageKa === 12)!)).data;
    let onLand = 0;
    for (let i = 0; i < SIZE * SIZE; i++) {
      const p = tif.grid.data[i];
      if (lc[i] === 1) expect(p).toBeNaN();
      if (p === p) {
        onLand++;
        expect(p).toBeGreaterThanOrEqual(0);
        expect(p).toBeLessThanOrEqual(1);
        expect(Math.abs(p * SMALL.trees - Math.round(p * SMALL.trees))).toBeLessThan(1e-5);
      }
    }
    expect(onLand).toBe(m.result.probability.cells);
    const classCells = m.result.classes.reduce((s: number, c: { cells: number }) => s + c.cells, 0);
    expect(classCells).toBe(onLand);

    // ?preview=png: a picture of the same grid (48 cells a side, under the 640 limit: one pixel a cell).
    const png = await raster(modelId, "?preview=png");
    expect(png.status).toBe(200);
    expect(png.headers.get("Content-Type")).toBe("image/png");
    expect(png.headers.get("X-Lowstand-Preview")).toBe("full"); // published: drawn from the full raster
    const pngBytes = new Uint8Array(await png.arrayBuffer());
    expect(Array.from(pngBytes.slice(0, 8))).toEqual([137, 80, 78, 71, 13, 10, 26, 10]); // the PNG signature (ISO/IEC 15948)
    const view = new DataView(pngBytes.buffer, pngBytes.byteOffset);
    expect([view.getUint32(16), view.getUint32(20)]).toEqual([SIZE, SIZE]); // IHDR width and height
    expect((await raster(modelId, "?preview=gif")).status).toBe(400);

    // ?display=8: the layer API's quantised form, on the display grid (each display cell the mean of
    // its 3 × 3 cells, app/raster-display.ts).
    const d = await raster(modelId, "?display=8");
    expect(d.status).toBe(200);
    expect([Number(d.headers.get("X-Lowstand-Width")), Number(d.headers.get("X-Lowstand-Step"))]).toEqual([DISPLAY_SIDE, DISPLAY_STEP]);
    expect(Number(d.headers.get("X-Lowstand-Nodata-Code"))).toBe(255);
    const codes = new Uint8Array(await d.arrayBuffer());
    expect(codes.length).toBe(DISPLAY_SIDE * DISPLAY_SIDE);
    const scale = Number(d.headers.get("X-Lowstand-Scale"));
    const offset = Number(d.headers.get("X-Lowstand-Offset"));
    const meanOfBlocks = reduceToDisplay(tif.grid.data, SIZE, SIZE, DISPLAY_STEP, "mean");
    for (let i = 0; i < DISPLAY_SIDE * DISPLAY_SIDE; i++) {
      const p = meanOfBlocks[i];
      if (p !== p) expect(codes[i]).toBe(255);
      else expect(Math.abs(codes[i] * scale + offset - p)).toBeLessThanOrEqual(scale / 2 + 1e-6);
    }

    // Display resolution first: the first look the page showed while the full raster was predicted is
    // the stored forest's prediction on the factors reduced to the display grid by their layers' rules,
    // on the cells that were land (majority of the land classes) at the model's age.
    expect(m.result.preview).toMatchObject({ width: DISPLAY_SIDE, height: DISPLAY_SIDE, step: DISPLAY_STEP });
    const first = await readGeoTiff(new Uint8Array(await store().getBytes(m.result.preview.key)));
    expect(first.grid.spec).toMatchObject({ width: DISPLAY_SIDE, height: DISPLAY_SIDE, originX: ORIGIN_X, originY: ORIGIN_Y, cellSizeX: CELL * DISPLAY_STEP });
    const reducedFactors = await Promise.all(
      FACTORS.map(async (f) => {
        const layer = factorDef(f as FactorId)!.layer;
        return reduceToDisplay(await readLayer(layer, factorDef(f as FactorId)!.perAge ? 12 : null), SIZE, SIZE, DISPLAY_STEP, reductionOf(layer));
      }),
    );
    const expected = predictRaster(forest.compiled, reducedFactors);
    const landFirst = reduceToDisplay(lc, SIZE, SIZE, DISPLAY_STEP, "majority");
    let firstLand = 0;
    for (let i = 0; i < DISPLAY_SIDE * DISPLAY_SIDE; i++) {
      const v = first.grid.data[i];
      if (landFirst[i] === 0 || landFirst[i] === 2) {
        firstLand++;
        expect(v).toBeCloseTo(expected[i], 6);
      } else expect(v).toBeNaN();
    }
    expect(firstLand).toBeGreaterThan(0);
  });

  it("reuses the model for identical inputs, and the reviewer reads it", async () => {
    const again = await postModel({ reconstructionId, ageKa: 12, factors: FACTORS, settings: SMALL });
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ reused: true, model: { id: modelId } });
    const r = await getModelApi(modelId, reviewerToken);
    expect(r.status).toBe(200);
    expect((await raster(modelId, "", reviewerToken)).status).toBe(200);
  });

  it("is validated against the sites as a scoring is, stored and reused", async () => {
    const get = (t = token) => callWith(apiValidation.loader, new Request(new URL(`/api/models/${modelId}/validation`, ORIGIN), { headers: auth(t) }), { id: String(modelId) });
    const res = await get();
    expect(res.status, await res.clone().text()).toBe(200);
    const v = (await res.json()).validation;
    expect(v.status).toBe("ok");
    // the same presences the model counts: in-situ sites and the positive core; derived finds and
    // negative cores never counted (validations.server.ts rules, issue 10)
    expect(v.counts).toMatchObject({ presences: IN_SITU + POSITIVE_CORES, sites: IN_SITU, cores: POSITIVE_CORES });
    expect(v.auc.estimate).toBeGreaterThanOrEqual(0);
    expect(v.auc.estimate).toBeLessThanOrEqual(1);
    expect(v.reused).toBe(false);
    expect((await (await get()).json()).validation.reused).toBe(true);
    expect((await get(world.viewerToken)).status).toBe(403);
  });

  it("gives a viewer no model, no card and no raster", async () => {
    for (const res of [
      await callWith(apiModel.loader, new Request(new URL(`/api/models/${modelId}`, ORIGIN), { headers: auth(world.viewerToken) }), { id: String(modelId) }),
      await raster(modelId, "", world.viewerToken),
      await raster(modelId, "?display=8", world.viewerToken),
      await raster(modelId, "?preview=png", world.viewerToken),
      await callWith(apiModels.loader, new Request(new URL(`/api/projects/${world.projectId}/models`, ORIGIN), { headers: auth(world.viewerToken) }), { projectId: String(world.projectId) }),
    ]) {
      expect(res.status).toBe(403);
      const text = await res.text();
      expect(text).not.toContain("samples");
      for (const x of siteXs) expect(text).not.toContain(String(x));
    }
    // and the viewer's session on the page is refused too (tested for every role in the authorization matrix)
  });
});

describe("while a model trains", () => {
  it("shows its display-resolution first look once there is one, and no key to it", async () => {
    const [done] = await db().select().from(models).where(eq(models.status, "published")).limit(1);
    const preview = (done.result as { preview: { key: string; width: number; height: number; step: number } }).preview;
    const [running] = await db()
      .insert(models)
      .values({ projectId: world.projectId, reconstructionId, name: "Still training", params: done.params, inputsHash: "still-training", status: "running", result: { preview } })
      .returning();
    const png = await raster(running.id, "?preview=png");
    expect(png.status).toBe(200);
    expect(png.headers.get("X-Lowstand-Preview")).toBe("display");
    const view = new DataView(await png.arrayBuffer());
    expect([view.getUint32(16), view.getUint32(20)]).toEqual([DISPLAY_SIDE, DISPLAY_SIDE]); // IHDR: the display grid
    const api = JSON.parse((await getModelApi(running.id)).text).model;
    expect(api.result).toEqual({ preview: { width: DISPLAY_SIDE, height: DISPLAY_SIDE, step: DISPLAY_STEP } });
    // the GeoTIFF download waits for the full raster
    expect((await raster(running.id)).status).toBe(409);
    // a running model without a first look yet has no picture
    await db().update(models).set({ result: null }).where(eq(models.id, running.id));
    expect((await raster(running.id, "?preview=png")).status).toBe(409);
    await db().delete(models).where(eq(models.id, running.id));
  });
});

describe("searched ground", () => {
  it("draws the background from dredging areas too: the card counts their cells", async () => {
    const before = await postModel({ reconstructionId, ageKa: 12, factors: FACTORS, settings: SMALL });
    expect(before.status).toBe(200); // the model above, reused
    const cardBefore = JSON.parse((await getModelApi(before.body.model.id)).text).model.card;
    expect(cardBefore.background.searchedGround.dredgingAreas).toBe(0);
    // An invented dredging licence on cell edges: columns 10–19, rows 30–39 → 10 × 10 cell centres inside.
    const [x0, x1, y0, y1] = [ORIGIN_X + 10 * CELL, ORIGIN_X + 20 * CELL, ORIGIN_Y - 40 * CELL, ORIGIN_Y - 30 * CELL];
    const area = {
      type: "FeatureCollection",
      crs: { type: "name", properties: { name: "urn:ogc:def:crs:EPSG::32733" } },
      features: [{ type: "Feature", properties: { name: "Licence C-2", method: "aggregate dredging" }, geometry: { type: "Polygon", coordinates: [[[x0, y0], [x1, y0], [x1, y1], [x0, y1], [x0, y0]]] } }],
    };
    await upload("dredging_areas", JSON.stringify(area), "corrie-dredging.geojson");
    const started = await postModel({ reconstructionId, ageKa: 12, factors: FACTORS, settings: SMALL });
    expect(started.status, JSON.stringify(started.body)).toBe(202); // new evidence: a new model
    const id = started.body.model.id;
    await waitFor(`model ${id} to publish`, async () => {
      const [m] = await db().select().from(models).where(eq(models.id, id));
      if (m.status === "failed") throw new Error(`model failed: ${m.error}`);
      return m.status === "published" ? m : null;
    }, 60_000);
    const g = JSON.parse((await getModelApi(id)).text).model.card.background.searchedGround;
    expect(g.dredgingAreas).toBe(1);
    expect(g.dredgedAreaCells).toBe(100);
    expect(g.cells).toBeGreaterThan(cardBefore.background.searchedGround.cells);
    expect(g.cells).toBeLessThanOrEqual(cardBefore.background.searchedGround.cells + 100);
  });
});

describe("refusals", () => {
  it("refuses too few sites before queueing, with the count and what was left out", async () => {
    const before = await modelCount();
    const res = await postModel({ reconstructionId, ageKa: 12, factors: FACTORS, settings: { ...SMALL, minSites: 20 } });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe("too_few_sites");
    expect(res.body.refusal).toEqual({
      presences: IN_SITU + POSITIVE_CORES,
      sites: IN_SITU,
      cores: POSITIVE_CORES,
      minimum: 20,
      excluded: { "derived find": DERIVED, "core without archaeological material (not an absence)": NEGATIVE_CORES },
      heldOut: 0,
    });
    expect(res.body.error.message).toContain(`only ${IN_SITU + POSITIVE_CORES} remain`);
    expect(res.body.error.message).toContain(`${DERIVED} derived find`);
    expect(await modelCount()).toBe(before);
  });

  it("refuses in the job when presences have no factor value, with the count, and keeps the numbers", async () => {
    // flooding_age has no value on ground still land at the window's young end (docs/layers.md):
    // the request passes the count before queueing (13 presences), the job finds fewer with values.
    const [r] = await db().select().from(reconstructions).where(eq(reconstructions.id, reconstructionId));
    const fa = (await layerGrid(layerKey(r, "flooding_age", null)!, manifest, manifest.layers.find((l) => l.name === "flooding_age")!)).data;
    const withValue = presenceCells.filter((c) => fa[c] === fa[c]).length;
    expect(withValue, "some presences must lie on ground that never drowned").toBeLessThan(IN_SITU + POSITIVE_CORES);
    const res = await postModel({ reconstructionId, ageKa: 12, factors: ["flooding_age", "slope"], settings: { ...SMALL, minSites: IN_SITU + POSITIVE_CORES } });
    expect(res.status, JSON.stringify(res.body)).toBe(202);
    const id = res.body.model.id;
    const m = await waitFor(`model ${id} to be refused`, async () => {
      const [row] = await db().select().from(models).where(eq(models.id, id));
      return row.status === "failed" ? row : null;
    }, 60_000);
    expect(m.error).toContain(`only ${withValue} remain`);
    expect(m.error).toContain(`${IN_SITU + POSITIVE_CORES - withValue} no factor value at its cell`);
    expect(m.layerPrefix).toBeNull();
    const view = JSON.parse((await getModelApi(id)).text).model;
    expect(view).toMatchObject({ status: "failed", card: { refused: true, presences: withValue, minimum: IN_SITU + POSITIVE_CORES } });
    expect(view.card.excluded["no factor value at its cell"]).toBe(IN_SITU + POSITIVE_CORES - withValue);
    expect(view.downloads).toEqual([]);
    expect((await raster(id)).status).toBe(409);
  });

  it("refuses bad requests with their message and stores nothing", async () => {
    const before = await modelCount();
    const cases: [unknown, number, RegExp][] = [
      [{ reconstructionId, ageKa: 13, settings: SMALL }, 422, /not one of the reconstruction's ages/],
      [{ reconstructionId, factors: ["dist_moon"], settings: SMALL }, 422, /factor must be one of/],
      [{ reconstructionId, factors: ["slope", "slope"], settings: SMALL }, 422, /listed twice/],
      [{ reconstructionId, settings: { ...SMALL, folds: 1 } }, 422, /folds must be at least 2/],
      [{ reconstructionId, settings: { ...SMALL, minSites: 2 } }, 422, /minSites must be at least 5/],
      [{ reconstructionId, settings: { ...SMALL, blockSizeM: 10 } }, 422, /at least one cell wide/],
      // the default 2 km blocks give the 2.4 km grid 4 blocks, fewer than the default 5 folds
      [{ reconstructionId }, 422, /fewer blocks than the 5 folds/],
      [{ reconstructionId, settings: SMALL, surprise: 1 }, 422, /surprise/],
      [{ reconstructionId: 999_999, settings: SMALL }, 422, /not one of this project's reconstructions/],
    ];
    for (const [body, status, message] of cases) {
      const res = await postModel(body);
      expect(res.status, JSON.stringify(body)).toBe(status);
      expect(res.body.error.message, JSON.stringify(body)).toMatch(message);
    }
    // a reviewer may read models but not start one
    expect((await postModel({ reconstructionId }, reviewerToken)).status).toBe(403);
    expect(await modelCount()).toBe(before);
  });
});
