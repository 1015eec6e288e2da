// Uncertainty runs end to end with the real database, pg-boss and a worker process: a small
// reconstruction with a buried horizon, cores and two lease blocks → a weight-set version → an
// uncertainty run at one age over the weights and the landscape, published with per-block robust
// shares, convergence, the tornado's values and GeoTIFFs; its P(high) equals the same Monte Carlo run
// here in one thread from the layer API's files; the same request (seed included) reuses; bad
// requests are refused and nothing is stored; a viewer reads but may not start.
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "3000", LOWSTAND_ENGINE_THREADS: "0" });

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { count, eq } from "drizzle-orm";
import { db } from "~/db.server";
import { datasets, reconstructions, uncertaintyRuns } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { getJson } from "~/storage.server";
import { readGeoTiff } from "~/terrain/geotiff-read";
import { sigmaAt, defaultGlobalCurve } from "~/terrain/sea-level";
import type { Manifest } from "~/terrain/reconstruct";
import { defaultWeightSetContent } from "~/scoring/weight-set";
import type { LayerData } from "~/scoring/potential";
import { horizonEvidencePoints, type CoreEvidence } from "~/scoring/scoring-inputs";
import { inlineBlockRunner, runUncertainty } from "~/scoring/uncertainty-run";
import { createWeightSet } from "~/weight-sets.server";
import * as apiRecons from "~/routes/api.project-reconstructions";
import * as apiLayer from "~/routes/api.reconstruction-layer";
import * as apiRuns from "~/routes/api.project-uncertainty";
import * as apiRun from "~/routes/api.uncertainty";
import * as apiRaster from "~/routes/api.uncertainty-raster";
import { stopBoss } from "./boss.server";
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

function blocksGeoJson(): Uint8Array {
  const rect = (x0: number, x1: number) => [[[x0, ORIGIN_Y], [x1, ORIGIN_Y], [x1, ORIGIN_Y - SIZE * CELL], [x0, ORIGIN_Y - SIZE * CELL], [x0, ORIGIN_Y]]];
  const mid = ORIGIN_X + (SIZE * CELL) / 2;
  return new TextEncoder().encode(JSON.stringify({
    type: "FeatureCollection",
    crs: { type: "name", properties: { name: "EPSG:32733" } },
    features: [
      { type: "Feature", properties: { name: "Block West" }, geometry: { type: "Polygon", coordinates: rect(ORIGIN_X, mid) } },
      { type: "Feature", properties: { name: "Block East" }, geometry: { type: "Polygon", coordinates: rect(mid, ORIGIN_X + SIZE * CELL) } },
    ],
  }));
}

async function postRun(body: unknown, projectId = world.projectId, t = token) {
  const res = await callWith(apiRuns.action, new Request(new URL(`/api/projects/${projectId}/uncertainty`, ORIGIN), { method: "POST", body: JSON.stringify(body), headers: { ...auth(t), "Content-Type": "application/json" } }), { projectId: String(projectId) });
  return { status: res.status, body: await res.json() };
}
async function getRun(id: number, t = token) {
  const res = await callWith(apiRun.loader, new Request(new URL(`/api/uncertainty/${id}`, ORIGIN), { headers: auth(t) }), { id: String(id) });
  return { status: res.status, body: await res.json() };
}
async function raster(id: number, name: string, t = token) {
  return callWith(apiRaster.loader, new Request(new URL(`/api/uncertainty/${id}/raster/${name}`, ORIGIN), { headers: auth(t) }), { id: String(id), name });
}
const runCount = async () => (await db().select({ n: count() }).from(uncertaintyRuns))[0].n;

let reconstructionId: number;
let manifest: Manifest;
let versionId: number;
let coresId: number;

beforeAll(async () => {
  world = await buildWorld("un");
  token = (await createApiToken(world.userIds.analyst, "uncertainty")).token;
  viewerToken = world.viewerToken;
  const bathyId = await upload("bathymetry", shelfTiff(), "corrie-shelf.tif", { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" });
  const picksId = await upload("horizon_picks", new TextEncoder().encode(picksCsv()), "corrie-picks.csv");
  coresId = await upload("cores", new TextEncoder().encode(coresCsv()), "corrie-cores.csv");
  await upload("lease_blocks", blocksGeoJson(), "corrie-blocks.geojson");
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
  const { version } = await createWeightSet({ projectId: world.projectId, name: "Corrie coastal", content: defaultWeightSetContent(), userId: world.userIds.analyst });
  versionId = version.id;
}, 180_000);

afterAll(async () => {
  await stopWorkers();
  await stopBoss();
});

async function layersFromApi() {
  const values = new Map<string, LayerData>();
  for (const l of manifest.layers) {
    const q = l.ageKa === null ? "" : `?age=${l.ageKa}`;
    const tif = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${reconstructionId}/layers/${l.name}${q}`, ORIGIN), { headers: auth() }), { id: String(reconstructionId), layer: l.name });
    expect(tif.status).toBe(200);
    values.set(`${l.name}@${l.ageKa}`, l.stats.validCount > 0 ? { kind: "values", values: (await readGeoTiff(new Uint8Array(await tif.arrayBuffer()))).grid.data } : { kind: "values", values: new Float32Array(SIZE * SIZE).fill(NaN) });
  }
  return values;
}

const REQUEST = {
  target: { kind: "age", ageKa: 12 },
  draws: 300,
  seed: 12345,
  perturbation: { kind: "dirichlet", concentration: 30 },
  landscape: { sigmaScale: 1, datumOffsetM: 0.5, velocityRel: 0.1, streamThresholdFactor: 2, erosionDepthRel: 0.3 },
  landscapeDraws: 6,
};

describe("an uncertainty run", () => {
  let runId: number;
  it("publishes per-cell P(high), mean and spread, per-block robust shares, convergence and the tornado's values, equal to the same run made here", async () => {
    const started = await postRun({ reconstructionId, weightSetVersionId: versionId, ...REQUEST });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    runId = started.body.run.id;
    expect(started.body.run.seed).toBe(12345);
    await waitFor(`uncertainty run ${runId} to publish`, async () => {
      const [s] = await db().select().from(uncertaintyRuns).where(eq(uncertaintyRuns.id, runId));
      if (s.status === "failed") throw new Error(`run failed: ${s.error}`);
      return s.status === "published" ? s : null;
    }, 90_000);
    const { status, body } = await getRun(runId);
    expect(status).toBe(200);
    const run = body.run;
    expect(run).toMatchObject({ status: "published", target: { kind: "age", ageKa: 12 }, params: { draws: 300, seed: 12345 } });
    const result = run.result;
    // per block: two blocks, each with shares that add up to 1 over its scored cells
    expect(result.blocks.map((b: { name: string }) => b.name)).toEqual(["Block West", "Block East"]);
    for (const b of result.blocks) {
      expect(b.robustHigh + b.contested + b.robustLow).toBe(b.cells);
      if (b.cells > 0) expect(b.robustHighShare + b.contestedShare + b.robustLowShare).toBeCloseTo(1, 12);
    }
    expect(result.convergence.at(-1).draws).toBe(300);
    expect(result.oat.factors.length).toBeGreaterThan(1);
    expect(result.oat.changes).toHaveLength(41); // (paper) Chen, Yu & Khan 2010: −20 … +20 % in 1 % steps
    expect(result.landscape.draws).toBe(6);
    expect(run.downloads.map((d: { name: string }) => d.name)).toEqual(expect.arrayContaining(["p_high", "mean", "spread", "p_sea"]));

    // the same Monte Carlo here, one thread, from the layer API's files: P(high) equal cell for cell
    const tif = await raster(runId, "p_high");
    expect(tif.status).toBe(200);
    const pHigh = (await readGeoTiff(new Uint8Array(await tif.arrayBuffer()))).grid.data;
    const values = await layersFromApi();
    const [cores] = await db().select().from(datasets).where(eq(datasets.id, coresId));
    const evidence = horizonEvidencePoints((await getJson<{ rows: CoreEvidence[] }>(cores.derivedKey)).rows, []);
    const g = manifest.grid;
    const here = await runUncertainty(
      defaultWeightSetContent(),
      { width: g.width, height: g.height, cellSizeX: g.cellSizeX, cellSizeY: g.cellSizeY, originX: g.originX, originY: g.originY },
      manifest.agesKa,
      { kind: "age", ageKa: 12 },
      (name, age) => values.get(`${name}@${age}`),
      evidence,
      { seaLevelM: manifest.ages.find((a) => a.ageKa === 12)!.seaLevelM, sigmaM: sigmaAt(defaultGlobalCurve(), 12), tidalRangeM: 2, shorelineTidalLevel: manifest.parameters.shorelineTidalLevel, streamThresholdKm2: 0.2 },
      { draws: 300, seed: 12345, perturbation: { kind: "dirichlet", concentration: 30 }, landscape: REQUEST.landscape, landscapeDraws: 6, threshold: run.params.threshold },
      inlineBlockRunner,
    );
    let compared = 0;
    for (let i = 0; i < pHigh.length; i++) {
      if (Number.isNaN(here.pHigh[i])) expect(pHigh[i]).toBeNaN();
      else {
        expect(pHigh[i]).toBe(here.pHigh[i]);
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(0);
  }, 150_000);

  it("returns the existing run for the same request, seed included", async () => {
    const again = await postRun({ reconstructionId, weightSetVersionId: versionId, ...REQUEST });
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ reused: true, run: { id: runId } });
  });

  it("refuses bad input with its message and stores nothing", async () => {
    const n = await runCount();
    const base = { reconstructionId, weightSetVersionId: versionId, target: { kind: "age", ageKa: 12 } };
    const refused = async (body: unknown, status: number, message: RegExp) => {
      const r = await postRun(body);
      expect(r.status, JSON.stringify(r.body)).toBe(status);
      expect(r.body.error.message).toMatch(message);
    };
    await refused({ ...base, draws: 0 }, 422, /at least 1 draw/);
    await refused({ ...base, draws: 10001 }, 422, /At most 10000 draws/);
    await refused({ ...base, landscape: { ...REQUEST.landscape, sigmaScale: -1 } }, 422, /σ scale/);
    await refused({ ...base, weightSetVersionId: 99999999 }, 422, /does not belong to a weight set of this project/);
    const other = await createWeightSet({ projectId: world.otherProjectId, name: "Tessel weights", userId: world.userIds.outsider });
    await refused({ ...base, weightSetVersionId: other.version.id }, 422, /does not belong to a weight set of this project/);
    await refused({ ...base, target: { kind: "age", ageKa: 11 } }, 422, /11 ka is not one of the reconstruction's ages/);
    expect(await runCount()).toBe(n);
  });

  it("lets a viewer read a run and its rasters but not start one", async () => {
    expect((await getRun(runId, viewerToken)).status).toBe(200);
    expect((await raster(runId, "mean", viewerToken)).status).toBe(200);
    const n = await runCount();
    const r = await postRun({ reconstructionId, weightSetVersionId: versionId, ...REQUEST, seed: 1 }, world.projectId, viewerToken);
    expect(r.status).toBe(403);
    expect(await runCount()).toBe(n);
  });
});
