// Reconstructions end to end with the real database, pg-boss and worker processes: upload →
// reconstruct → the published layers equal the engine run directly; identical inputs reuse the
// run; a bad-input job fails once with its message; a worker killed mid-run → the job is retried
// and finishes, and no partial manifest is ever visible.
Object.assign(process.env, FAST_JOB_SETTINGS, { LOWSTAND_WORKER_SHUTDOWN_GRACE_MS: "3000", LOWSTAND_ENGINE_THREADS: "2" });

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { db } from "~/db.server";
import { datasets, jobRuns, reconstructions, seaLevelCurves } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { store } from "~/storage.server";
import { readGeoTiff } from "~/terrain/geotiff-read";
import { writeGeoTiff } from "~/terrain/geotiff-write";
import { reconstruct, inlineAgeRunner, type LayerOut } from "~/terrain/reconstruct";
import { defaultGlobalCurve } from "~/terrain/sea-level";
import { resolveCrs } from "~/terrain/crs";
import { syntheticGrid } from "../scripts/bench/synthetic-shelf";
import * as apiDatasets from "~/routes/api.project-datasets";
import * as apiRecons from "~/routes/api.project-reconstructions";
import * as apiLayer from "~/routes/api.reconstruction-layer";
import * as apiJob from "~/routes/api.job";
import * as apiMap from "~/routes/api.project-map";
import * as apiVectors from "~/routes/api.reconstruction-vectors";
import * as apiSection from "~/routes/api.reconstruction-section";
import { stopBoss } from "./boss.server";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";
import { FAST_JOB_SETTINGS, startWorker, stopWorkers, waitFor, workers } from "../tests/support/workers";

let world: World;
let token: string;


/** An invented shelf from the engine's own generator, placed in the project's CRS (UTM 33S). */
function shelfTiff(size: number): Uint8Array {
  const g = syntheticGrid(size, 7, 50);
  const crs = resolveCrs(32733);
  g.spec = { ...g.spec, originX: 480_000, originY: 5_030_000, crs: { epsg: crs.epsg, proj4: crs.proj4 } };
  return writeGeoTiff(g);
}

async function upload(bytes: Uint8Array, name: string): Promise<number> {
  const fd = new FormData();
  Object.entries({ kind: "bathymetry", name, sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" }).forEach(([k, v]) => fd.set(k, v));
  fd.set("file", new Blob([new Uint8Array(bytes)]), `${name}.tif`);
  const res = await callWith(apiDatasets.action, new Request(new URL(`/api/projects/${world.projectId}/datasets`, ORIGIN), { method: "POST", body: fd, headers: { Authorization: `Bearer ${token}` } }), { projectId: String(world.projectId) });
  expect(res.status, await res.clone().text()).toBe(201);
  return (await res.json()).dataset.id;
}

async function start(body: Record<string, unknown>) {
  const res = await callWith(apiRecons.action, new Request(new URL(`/api/projects/${world.projectId}/reconstructions`, ORIGIN), { method: "POST", body: JSON.stringify(body), headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" } }), { projectId: String(world.projectId) });
  return { status: res.status, body: await res.json() };
}

const recon = async (id: number) => (await db().select().from(reconstructions).where(eq(reconstructions.id, id)))[0];
const jobRun = async (id: string) => (await db().select().from(jobRuns).where(eq(jobRuns.id, id)))[0];

let smallId: number;
beforeAll(async () => {
  world = await buildWorld("rc");
  token = (await createApiToken(world.userIds.analyst, "runs")).token;
  smallId = await upload(shelfTiff(64), "Corrie small shelf");
});

afterAll(async () => {
  await stopWorkers();
  await stopBoss();
});

describe("a reconstruction", () => {
  const params = () => ({ bathymetryDatasetId: smallId, agesKa: [14, 10], oceanSides: ["east"], tidalRangeM: 2, streamThresholdKm2: 0.2, name: "Small shelf" });

  it("publishes layers equal to the engine run directly, and identical inputs reuse it", async () => {
    const first = await start(params());
    expect(first.status).toBe(202);
    const id = first.body.reconstruction.id as number;
    startWorker();
    const done = await waitFor("publication", async () => {
      const r = await recon(id);
      return r.status === "published" ? r : r.status === "failed" ? Promise.reject(new Error(r.error ?? "failed")) : null;
    }, 60_000);
    expect(done.layerPrefix).toMatch(new RegExp(`^runs/p${world.projectId}/r${id}/`));

    // The run's own end is written just after the handler returns: wait for it too.
    await waitFor("the job to be marked succeeded", async () => (await jobRun(first.body.jobId)).state === "succeeded");
    const job = await callWith(apiJob.loader, new Request(new URL(`/api/jobs/${first.body.jobId}`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { jobId: first.body.jobId });
    expect(await job.json()).toMatchObject({ state: "succeeded", progress: 1 });

    // The same computation in this process, from the stored normalised grid.
    const [d] = await db().select().from(datasets).where(eq(datasets.id, smallId));
    const seabed = (await readGeoTiff(await store().getBytes(d.derivedKey))).grid;
    const direct = new Map<string, LayerOut>();
    await reconstruct(
      { seabed, seaLevel: { kind: "curve", curve: defaultGlobalCurve() }, agesKa: [14, 10], oceanBoundary: { kind: "sides", sides: ["east"] }, tidalRangeM: 2, streamThresholdKm2: 0.2 },
      { sink: (l) => void direct.set(`${l.name}@${l.ageKa}`, l), runAges: inlineAgeRunner },
    );
    const manifest = done.manifest as { layers: Array<{ name: string; ageKa: number | null }> };
    expect(manifest.layers.length).toBe(direct.size);
    for (const l of manifest.layers) {
      const res = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${id}/layers/${l.name}${l.ageKa === null ? "" : `?age=${l.ageKa}`}`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { id: String(id), layer: l.name });
      expect(res.status, `${l.name}@${l.ageKa}`).toBe(200);
      const got = (await readGeoTiff(new Uint8Array(await res.arrayBuffer()))).grid.data;
      const want = direct.get(`${l.name}@${l.ageKa}`)!.data;
      let differ = 0;
      for (let i = 0; i < want.length; i++) {
        const a = got[i];
        const b = want[i];
        if (!(a === b || (a !== a && b !== b) || Math.fround(b) === a)) differ++;
      }
      expect(differ, `${l.name}@${l.ageKa}: cells that differ`).toBe(0);
    }

    // The display copy for the map decodes to the layer's values within half a quantisation step.
    const q = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${id}/layers/flooding_age?display=16`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { id: String(id), layer: "flooding_age" });
    expect(q.status).toBe(200);
    const scale = Number(q.headers.get("X-Lowstand-Scale"));
    const offset = Number(q.headers.get("X-Lowstand-Offset"));
    const nodataCode = Number(q.headers.get("X-Lowstand-Nodata-Code"));
    const codes = new Uint16Array(await q.arrayBuffer());
    const exact = direct.get("flooding_age@null")!.data as Float32Array;
    expect(codes.length).toBe(exact.length);
    for (let i = 0; i < exact.length; i++) {
      if (exact[i] !== exact[i]) expect(codes[i]).toBe(nodataCode);
      else expect(Math.abs(codes[i] * scale + offset - exact[i])).toBeLessThanOrEqual(scale / 2 + 1e-6);
    }

    // What the map draws: the payload, a shoreline traced between sea and land, a section.
    const map = await (await callWith(apiMap.loader, new Request(new URL(`/api/projects/${world.projectId}/map`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { projectId: String(world.projectId) })).json();
    expect(map.reconstruction).toMatchObject({ id, agesKa: [14, 10] });
    expect(map.seaLevel.label).toMatch(/far-field/);
    const shore = await (await callWith(apiVectors.loader, new Request(new URL(`/api/reconstructions/${id}/vectors/shoreline?age=10`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { id: String(id), what: "shoreline" })).json();
    expect(shore.features.length).toBeGreaterThan(0);
    const classes = direct.get("land_class@10")!.data;
    const g = seabed.spec;
    const wet = (c: number, r: number) => (c < 0 || r < 0 || c >= g.width || r >= g.height ? 0 : classes[r * g.width + c] === 1 || classes[r * g.width + c] === 2 ? 1 : 0);
    for (const f of shore.features.slice(0, 20)) {
      for (const [x, y] of f.geometry.coordinates as [number, number][]) {
        // each vertex sits midway between a wet cell and a dry one (formula: cell centres ± half a cell)
        const cf = (x - g.originX) / g.cellSizeX - 0.5;
        const rf = (g.originY - y) / g.cellSizeY - 0.5;
        const [a, b] = Number.isInteger(cf) ? [wet(cf, Math.floor(rf)), wet(cf, Math.ceil(rf))] : [wet(Math.floor(cf), rf), wet(Math.ceil(cf), rf)];
        expect(a).not.toBe(b);
      }
    }
    const from = `${g.originX + 100},${g.originY - 1600}`;
    const to = `${g.originX + g.width * g.cellSizeX - 100},${g.originY - 1600}`;
    const sec = await (await callWith(apiSection.loader, new Request(new URL(`/api/reconstructions/${id}/section?from=${from}&to=${to}`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { id: String(id) })).json();
    expect(sec.ages.map((a: { ageKa: number }) => a.ageKa).sort()).toEqual([10, 14]);
    const s0 = sec.samples[0];
    const cell = Math.floor((g.originY - s0.y) / g.cellSizeY) * g.width + Math.floor((s0.x - g.originX) / g.cellSizeX);
    expect(s0.seabedM).toBeCloseTo(seabed.data[cell], 4);
    expect(sec.samples.length).toBeGreaterThan(g.width);

    // Every layer has a display copy, units and all (hillshade's "grey level 1–255" included).
    for (const l of manifest.layers.filter((x) => x.ageKa === null)) {
      const d = await callWith(apiLayer.loader, new Request(new URL(`/api/reconstructions/${id}/layers/${l.name}?display=8`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { id: String(id), layer: l.name });
      expect(d.status, l.name).toBe(200);
      expect(decodeURIComponent(d.headers.get("X-Lowstand-Units") ?? "")).toBe((l as { units?: string }).units);
    }

    const again = await start(params());
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ reused: true, reconstruction: { id } });
  });

  it("refuses ages outside the curve before any job starts", async () => {
    const res = await start({ ...params(), agesKa: [200] });
    expect(res.status).toBe(422);
  });

  it("fails a job with bad input once, with its message", async () => {
    const [curve] = await db().insert(seaLevelCurves).values({ projectId: world.projectId, name: "Doomed", points: [{ ageKa: 0, rslM: 0, sigmaM: 0 }, { ageKa: 30, rslM: -120, sigmaM: 5 }] as never }).returning();
    await stopWorkers(); // nothing picks the job up until the curve is gone
    const res = await start({ ...params(), curveId: curve.id });
    expect(res.status).toBe(202);
    await db().delete(seaLevelCurves).where(eq(seaLevelCurves.id, curve.id));
    startWorker();
    const ended = await waitFor("the job to end", async () => {
      const r = await jobRun(res.body.jobId);
      return ["succeeded", "failed", "cancelled"].includes(r.state) ? r : null;
    }, 30_000);
    expect(ended.state).toBe("failed");
    expect(ended.attempt).toBe(1);
    expect(ended.message).toMatch(/sea-level curve was deleted/);
    expect((await recon(res.body.reconstruction.id)).status).toBe("failed");
  });

  it("survives a worker killed mid-run: retried, finished, and never a partial manifest", async () => {
    const bigId = await upload(shelfTiff(384), "Corrie wide shelf");
    const res = await start({ bathymetryDatasetId: bigId, agesKa: [18, 16, 14, 12, 10, 8], oceanSides: ["east"], tidalRangeM: 2, streamThresholdKm2: 0.5 });
    expect(res.status).toBe(202);
    const victim = lastLiveWorker();
    await waitFor("the run to be under way", async () => {
      const r = await jobRun(res.body.jobId);
      return r.state === "running" && r.fraction > 0.05 ? r : null;
    }, 60_000);
    victim.proc.kill("SIGKILL");
    await victim.exited;
    const mid = await recon(res.body.reconstruction.id);
    expect(mid.manifest).toBeNull();
    expect(mid.status).toBe("running");

    startWorker();
    const done = await waitFor("publication after the retry", async () => {
      const r = await recon(res.body.reconstruction.id);
      expect(r.status === "published" || r.manifest === null).toBe(true); // never a manifest before publication
      return r.status === "published" ? r : null;
    }, 120_000);
    const run = await jobRun(res.body.jobId);
    expect(run.attempt).toBeGreaterThan(1);
    expect(done.layerPrefix).toContain(`-a${run.attempt}`);
  });
});

function lastLiveWorker() {
  const alive = workers.filter((w) => w.proc.exitCode === null && w.proc.signalCode === null);
  if (!alive.length) throw new Error("no worker is running");
  return alive[alive.length - 1];
}
