// Uploads end to end against the real database and the file-system store: streamed, sniffed,
// validated, stored, listed, deleted; refused uploads leave nothing; known sites stay confidential.
import { beforeAll, describe, expect, it } from "vitest";
import fs from "node:fs/promises";
import path from "node:path";
import { and, eq, sql } from "drizzle-orm";
import { db } from "~/db.server";
import { auditLog, datasets, memberships, siteRecords } from "~/db/schema";
import { writeGeoTiff } from "~/terrain/geotiff-write";
import { readGeoTiff } from "~/terrain/geotiff-read";
import { makeElevationGrid } from "~/terrain/grid";
import { store } from "~/storage.server";
import * as dataPage from "~/routes/project-datasets";
import * as sitesPage from "~/routes/project-sites";
import * as settingsPage from "~/routes/project-settings";
import * as apiDatasets from "~/routes/api.project-datasets";
import * as apiDataset from "~/routes/api.dataset";
import * as apiSites from "~/routes/api.project-sites";
import * as apiExport from "~/routes/api.project-sites-export";
import { createApiToken } from "~/auth.server";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";

let world: World;
let analystToken: string;
beforeAll(async () => {
  world = await buildWorld("ds");
  analystToken = (await createApiToken(world.userIds.analyst, "uploads")).token;
});

const pid = () => String(world.projectId);

function multipart(path: string, fields: Record<string, string>, file: { bytes: Uint8Array; name: string } | null, headers: Record<string, string>) {
  const fd = new FormData();
  for (const [k, v] of Object.entries(fields)) fd.set(k, v);
  if (file) fd.set("file", new Blob([new Uint8Array(file.bytes)]), file.name);
  return new Request(new URL(path, ORIGIN), { method: "POST", body: fd, headers: { Origin: ORIGIN, ...headers } });
}


/** A 6×5 depth grid (positive down) in UTM 33S, written by our own GeoTIFF writer. */
function depthTiff(): Uint8Array {
  const w = 6, h = 5;
  const values = new Float32Array(w * h).map((_, i) => 20 + i); // depths 20…49 m
  const grid = makeElevationGrid({ width: w, height: h, originX: 480_000, originY: 5_030_000, cellSizeX: 50, cellSizeY: 50, crs: { epsg: 32733, proj4: "" } }, values);
  return writeGeoTiff(grid.grid);
}

async function countRows() {
  const [r] = (await db().execute<{ n: number }>(sql`select count(*)::int as n from datasets where project_id = ${world.projectId}`)).rows;
  return r.n;
}

async function storedFiles(): Promise<string[]> {
  const out: string[] = [];
  for await (const o of store().list("")) out.push(o.key);
  return out;
}

async function tempFiles(): Promise<string[]> {
  return fs.readdir(path.join(process.env.UPLOAD_TMP_DIR!, "lowstand-uploads")).catch(() => []);
}

describe("uploading a bathymetry grid", () => {
  it("stores the file as sent and a normalised grid of elevations relative to present MSL", async () => {
    const bytes = depthTiff();
    const res = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, { kind: "bathymetry", name: "Velmar multibeam", sign: "depth_positive_down", datum: "LAT", offset_to_msl_m: "-1.5" }, { bytes, name: "velmar.tif" }, { Cookie: world.cookies.analyst }), { projectId: pid() });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.ok).toMatch(/stored/);
    const [d] = await db().select().from(datasets).where(eq(datasets.id, body.datasetId));
    expect(d).toMatchObject({ kind: "bathymetry", format: "geotiff", count: 30, crsEpsg: 32733, originalName: "velmar.tif" });
    expect(d.vertical).toMatchObject({ sign: "depth_positive_down", datum: "LAT", offsetToMslM: -1.5 });
    // The original, byte for byte.
    expect(Buffer.compare(Buffer.from(await store().getBytes(d.originalKey)), Buffer.from(bytes))).toBe(0);
    expect(d.originalKey).not.toContain("velmar");
    // The normalised grid: elevation = −depth + offset (LAT lies 1.5 m below MSL here).
    const derived = await readGeoTiff(await store().getBytes(d.derivedKey));
    expect(derived.grid.data[0]).toBeCloseTo(-20 - 1.5, 4);
    expect(derived.grid.data[29]).toBeCloseTo(-49 - 1.5, 4);
    expect(await tempFiles()).toEqual([]);
    const audit = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "dataset.uploaded")));
    expect(audit.length).toBeGreaterThan(0);
  });

  it("refuses a grid of heights without its vertical reference, storing nothing", async () => {
    const before = [await countRows(), (await storedFiles()).length];
    const res = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, { kind: "bathymetry" }, { bytes: depthTiff(), name: "x.tif" }, { Cookie: world.cookies.analyst }), { projectId: pid() });
    expect(res.status).toBe(422);
    expect((await res.json()).error).toMatch(/depths .*elevations/);
    expect([await countRows(), (await storedFiles()).length]).toEqual(before);
    expect(await tempFiles()).toEqual([]);
  });

  it("refuses a JPEG renamed .tif, an empty file and random bytes, each naming the problem", async () => {
    const before = [await countRows(), (await storedFiles()).length];
    const jpeg = new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, 0, 1, 1, 0, 0, 1, 0, 1, 0, 0]);
    const fields = { kind: "bathymetry", sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" };
    const r1 = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, fields, { bytes: jpeg, name: "bathy.tif" }, { Cookie: world.cookies.analyst }), { projectId: pid() });
    expect(r1.status).toBeGreaterThanOrEqual(400);
    expect(r1.status).toBeLessThan(500);
    expect((await r1.json()).error).toMatch(/JPEG|not a file Lowstand can read/i);
    const r2 = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, fields, { bytes: new Uint8Array(0), name: "bathy.tif" }, { Cookie: world.cookies.analyst }), { projectId: pid() });
    expect(r2.status).toBe(422);
    expect((await r2.json()).error).toMatch(/empty/);
    const random = new Uint8Array(4096).map((_, i) => (i * 7919 + 13) % 251);
    const r3 = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, fields, { bytes: random, name: "bathy.tif" }, { Cookie: world.cookies.analyst }), { projectId: pid() });
    expect(r3.status).toBeGreaterThanOrEqual(400);
    expect(r3.status).toBeLessThan(500);
    expect([await countRows(), (await storedFiles()).length]).toEqual(before);
    expect(await tempFiles()).toEqual([]);
  });

  it("refuses a file over the configured limit while streaming it", async () => {
    process.env.UPLOAD_MAX_BYTES = "1000";
    try {
      const res = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, { kind: "bathymetry", sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" }, { bytes: new Uint8Array(5000), name: "big.tif" }, { Cookie: world.cookies.analyst }), { projectId: pid() });
      expect(res.status).toBe(413);
      expect((await res.json()).error).toMatch(/larger than the upload limit of 1000 bytes/);
    } finally {
      delete process.env.UPLOAD_MAX_BYTES;
    }
    expect(await tempFiles()).toEqual([]);
  });

  it("keeps uploads to analysts and up", async () => {
    const res = await callWith(dataPage.action, multipart(`/projects/${pid()}/data`, { kind: "bathymetry" }, { bytes: depthTiff(), name: "x.tif" }, { Cookie: world.cookies.reviewer }), { projectId: pid() });
    expect(res.status).toBe(403);
  });
});

describe("the datasets API with a token", () => {
  it("uploads, lists, reads and deletes (files go too)", async () => {
    const auth = { Authorization: `Bearer ${analystToken}` };
    const post = await callWith(apiDatasets.action, multipart(`/api/projects/${pid()}/datasets`, { kind: "horizon_grid", sign: "depth_positive_down", datum: "seabed", offset_to_msl_m: "0" }, { bytes: depthTiff(), name: "horizon.tif" }, auth), { projectId: pid() });
    expect(post.status).toBe(201);
    const { dataset } = await post.json();
    expect(dataset).toMatchObject({ kind: "horizon_grid", count: 30 });
    const list = await callWith(apiDatasets.loader, new Request(new URL(`/api/projects/${pid()}/datasets`, ORIGIN), { headers: auth }), { projectId: pid() });
    expect((await list.json()).datasets.map((d: { id: number }) => d.id)).toContain(dataset.id);
    const one = await callWith(apiDataset.loader, new Request(new URL(`/api/datasets/${dataset.id}`, ORIGIN), { headers: auth }), { datasetId: String(dataset.id) });
    expect((await one.json()).dataset.sha256).toMatch(/^[0-9a-f]{64}$/);
    const [row] = await db().select().from(datasets).where(eq(datasets.id, dataset.id));
    const del = await callWith(apiDataset.action, new Request(new URL(`/api/datasets/${dataset.id}`, ORIGIN), { method: "DELETE", headers: auth }), { datasetId: String(dataset.id) });
    expect(del.status).toBe(204);
    expect(await store().exists(row.originalKey)).toBe(false);
    expect(await store().exists(row.derivedKey)).toBe(false);
  });

  it("answers a non-member's request for a dataset with 404, as if it did not exist", async () => {
    const [d] = await db().select({ id: datasets.id }).from(datasets).where(eq(datasets.projectId, world.projectId)).limit(1);
    const res = await callWith(apiDataset.loader, new Request(new URL(`/api/datasets/${d.id}`, ORIGIN), { headers: { Cookie: world.cookies.outsider } }), { datasetId: String(d.id) });
    expect(res.status).toBe(404);
  });
});

describe("known sites stay confidential", () => {
  // Invented sites on the invented Velmar coast.
  const csv =
    "\uFEFFsite_id;x;y;precision_m;kind;context;discovery_method;cal_bp_from;cal_bp_to;confidence;sensitivity;community\r\n" +
    "VM-1;481234.5;5021987.25;10;shell midden;in_situ;core;9800;9400;high;normal;\r\n" +
    "VM-2;481876.75;5021333.5;25;lithic scatter;derived;trawl;;;medium;normal;\r\n" +
    "VM-3;481111.25;5021555.75;5;fish weir;in_situ;diver;8900;8600;high;normal;Velmar shore families\r\n";
  const coords = ["481234.5", "5021987.25", "481876.75", "5021333.5", "481111.25", "5021555.75"];

  beforeAll(async () => {
    const res = await callWith(apiDatasets.action, multipart(`/api/projects/${pid()}/datasets`, { kind: "known_sites", name: "Velmar finds" }, { bytes: new TextEncoder().encode(csv), name: "sites.csv" }, { Authorization: `Bearer ${analystToken}` }), { projectId: pid() });
    expect(res.status, await res.clone().text()).toBe(201);
  });

  it("gives analysts exact positions, and viewers only generalised cells, on pages and the API", async () => {
    const analyst = await callWith(apiSites.loader, new Request(new URL(`/api/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies.analyst } }), { projectId: pid() });
    expect((await analyst.json()).exact).toHaveLength(3);

    const viewers: Record<string, string>[] = [{ Cookie: world.cookies.viewer }, { Authorization: `Bearer ${world.viewerToken}` }];
    for (const viewerHeaders of viewers) {
      const api = await callWith(apiSites.loader, new Request(new URL(`/api/projects/${pid()}/sites`, ORIGIN), { headers: viewerHeaders }), { projectId: pid() });
      expect(api.headers.get("Cache-Control")).toBe("private, no-store");
      expect(api.headers.get("Vary")).toMatch(/Cookie/);
      const text = await api.text();
      for (const c of coords) expect(text).not.toContain(c);
      expect(JSON.parse(text).exact).toEqual([]);
      const list = await (await callWith(apiDatasets.loader, new Request(new URL(`/api/projects/${pid()}/datasets`, ORIGIN), { headers: viewerHeaders }), { projectId: pid() })).text();
      for (const c of coords) expect(list).not.toContain(c);
      for (const c of coords) expect(list).not.toContain(String(Math.round(Number(c))));
    }
    const page = await callWith(sitesPage.loader, new Request(new URL(`/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies.viewer } }), { projectId: pid() });
    const pageText = await page.text();
    for (const c of coords) expect(pageText).not.toContain(c);
  });

  it("tells only owners and leads which sites are held out of validation, on the sites page and the API", async () => {
    const [vm1] = await db().select({ id: siteRecords.id }).from(siteRecords).where(and(eq(siteRecords.projectId, world.projectId), eq(siteRecords.label, "VM-1")));
    await db().update(siteRecords).set({ heldOut: true }).where(eq(siteRecords.id, vm1.id));
    try {
      const pageRows = async (who: "owner" | "lead" | "analyst" | "reviewer") =>
        (await (await callWith(sitesPage.loader, new Request(new URL(`/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies[who] } }), { projectId: pid() })).json()).exact as Array<Record<string, unknown>>;
      for (const who of ["owner", "lead"] as const) {
        const rows = await pageRows(who);
        expect(rows.find((r) => r.label === "VM-1")?.heldOut, who).toBe(true);
        expect(rows.find((r) => r.label === "VM-2")?.heldOut, who).toBe(false);
      }
      for (const who of ["analyst", "reviewer"] as const) {
        const rows = await pageRows(who);
        expect(rows.map((r) => r.label), who).toContain("VM-1"); // they see the exact row, only not that it is held out
        for (const r of rows) expect(Object.keys(r), `${who} ${String(r.label)}`).not.toContain("heldOut");
        const api = await (await callWith(apiSites.loader, new Request(new URL(`/api/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies[who] } }), { projectId: pid() })).text();
        expect(api, who).not.toMatch(/held_?out/i);
      }
    } finally {
      await db().update(siteRecords).set({ heldOut: false }).where(eq(siteRecords.id, vm1.id));
    }
  });

  it("generalises for viewers by the project's own settings, which owners and leads change", async () => {
    const post = (cookie: string, body: string) =>
      callWith(settingsPage.action, new Request(new URL(`/projects/${pid()}/settings`, ORIGIN), { method: "POST", headers: { Cookie: cookie, Origin: ORIGIN, "Content-Type": "application/x-www-form-urlencoded" }, body }), { projectId: pid() });
    const tooFine = await post(world.cookies.lead, "name=Farrow+Deep&summary=&siteGeneralisationM=50&siteMinCount=1");
    expect(tooFine.status).toBe(422);
    expect((await tooFine.json()).error).toMatch(/100 m/);
    expect((await post(world.cookies.analyst, "name=Farrow+Deep&summary=&siteGeneralisationM=5000&siteMinCount=1")).status).toBe(403);
    expect((await post(world.cookies.lead, "name=Farrow+Deep&summary=&siteGeneralisationM=5000&siteMinCount=1")).status).toBe(200);
    const viewer = await (await callWith(apiSites.loader, new Request(new URL(`/api/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies.viewer } }), { projectId: pid() })).json();
    expect(viewer.generalised).toMatchObject({ cellSizeM: 5000, minCount: 1, suppressed: 0 });
    // 481234.5, 5021987.25 etc. all fall in the 5 km cell centred on (482500, 5022500).
    expect(viewer.generalised.cells).toEqual([{ x: 482_500, y: 5_022_500, count: 3 }]);
  });

  it("lets only leads and owners export exact positions, and logs each export", async () => {
    const viewer = await callWith(apiExport.loader, new Request(new URL(`/api/projects/${pid()}/sites/export?format=csv`, ORIGIN), { headers: { Cookie: world.cookies.analyst } }), { projectId: pid() });
    expect(viewer.status).toBe(403);
    const lead = await callWith(apiExport.loader, new Request(new URL(`/api/projects/${pid()}/sites/export?format=geojson`, ORIGIN), { headers: { Cookie: world.cookies.lead } }), { projectId: pid() });
    expect(lead.status).toBe(200);
    const fc = await lead.json();
    expect(fc.features).toHaveLength(3);
    expect(fc.features[0].geometry.coordinates).toEqual([481234.5, 5021987.25]);
    const logged = await db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, "sites.exported")));
    expect(logged).toHaveLength(1);
    expect(logged[0].detail).toMatchObject({ format: "geojson", records: 3 });
  });

  it("lets a community's custodian see its records exactly and withhold them from everyone else", async () => {
    await db().update(memberships).set({ custodianFor: "Velmar shore families" }).where(and(eq(memberships.projectId, world.projectId), eq(memberships.userId, world.userIds.viewer)));
    const [weir] = await db().select().from(siteRecords).where(eq(siteRecords.label, "VM-3"));
    const asViewer = await (await callWith(apiSites.loader, new Request(new URL(`/api/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies.viewer } }), { projectId: pid() })).json();
    expect(asViewer.exact.map((s: { label: string }) => s.label)).toEqual(["VM-3"]);

    // A custodian of another community, or none, cannot change it.
    const refused = await callWith(sitesPage.action, new Request(new URL(`/projects/${pid()}/sites`, ORIGIN), { method: "POST", headers: { Cookie: world.cookies.analyst, Origin: ORIGIN, "Content-Type": "application/x-www-form-urlencoded" }, body: `siteId=${weir.id}&visibility=withheld` }), { projectId: pid() });
    expect(refused.status).toBe(403);

    const done = await callWith(sitesPage.action, new Request(new URL(`/projects/${pid()}/sites`, ORIGIN), { method: "POST", headers: { Cookie: world.cookies.viewer, Origin: ORIGIN, "Content-Type": "application/x-www-form-urlencoded" }, body: `siteId=${weir.id}&visibility=withheld` }), { projectId: pid() });
    expect(done.status).toBe(200);
    const asAnalyst = await (await callWith(apiSites.loader, new Request(new URL(`/api/projects/${pid()}/sites`, ORIGIN), { headers: { Cookie: world.cookies.analyst } }), { projectId: pid() })).json();
    expect(asAnalyst.exact.map((s: { label: string }) => s.label)).toEqual(["VM-1", "VM-2"]);
    const exported = await (await callWith(apiExport.loader, new Request(new URL(`/api/projects/${pid()}/sites/export?format=csv`, ORIGIN), { headers: { Cookie: world.cookies.owner } }), { projectId: pid() })).text();
    expect(exported).not.toContain("VM-3");
  });
});

describe("sweeping", () => {
  it("removes stored objects no row refers to, and keeps the rest", async () => {
    const orphan = "uploads/p0/2026-01-01/0123456789abcdef01234567.tif";
    const staleRun = `runs/p${world.projectId}/r999999/run-a1/slope_deg.tif`;
    await store().put(orphan, new Uint8Array([1, 2, 3]));
    await store().put(staleRun, new Uint8Array([4]));
    const kept = await db().select({ k: datasets.originalKey }).from(datasets).where(eq(datasets.projectId, world.projectId));
    const { sweepUnreferencedObjects } = await import("~/datasets.server");
    expect(await sweepUnreferencedObjects(0)).toBeGreaterThanOrEqual(2);
    expect(await store().exists(orphan)).toBe(false);
    expect(await store().exists(staleRun)).toBe(false);
    for (const { k } of kept) expect(await store().exists(k)).toBe(true);
  });
});
