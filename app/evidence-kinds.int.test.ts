// Every kind of evidence, uploaded through the API with a token, read back from its listing with
// its provenance — using the invented demo files, which go through the same readers as any upload.
import { beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { db } from "~/db.server";
import { datasets, reconstructions } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import * as apiDatasets from "~/routes/api.project-datasets";
import * as apiDataset from "~/routes/api.dataset";
import { demoFiles } from "../scripts/demo/demo-files";
import { buildWorld, callWith, ORIGIN, type World } from "../tests/support/world";
import { EVIDENCE_KINDS } from "~/evidence/types";

let world: World;
let token: string;
beforeAll(async () => {
  world = await buildWorld("ek");
  token = (await createApiToken(world.userIds.analyst, "every kind")).token;
});


describe("every kind of evidence through the API", () => {
  const files = demoFiles();

  it("covers most kinds in the demo (the rest have reader tests of their own)", () => {
    const kinds = new Set(files.map((f) => f.kind));
    expect(kinds.size).toBeGreaterThanOrEqual(10);
    for (const k of kinds) expect(EVIDENCE_KINDS).toContain(k);
  });

  for (const f of files) {
    it(`accepts ${f.kind} (${f.fileName}) and lists it with its provenance`, async () => {
      const fd = new FormData();
      fd.set("kind", f.kind);
      fd.set("name", f.name);
      for (const [k, v] of Object.entries(f.fields ?? {})) fd.set(k, v);
      fd.set("file", new Blob([new Uint8Array(f.bytes)]), f.fileName);
      const res = await callWith(apiDatasets.action, new Request(new URL(`/api/projects/${world.projectId}/datasets`, ORIGIN), { method: "POST", body: fd, headers: { Authorization: `Bearer ${token}` } }), { projectId: String(world.projectId) });
      expect(res.status, await res.clone().text()).toBe(201);
      const { dataset } = await res.json();
      expect(dataset).toMatchObject({ kind: f.kind, name: f.name, crsEpsg: 32733 });
      expect(dataset.count).toBeGreaterThan(0);
      const one = await (await callWith(apiDataset.loader, new Request(new URL(`/api/datasets/${dataset.id}`, ORIGIN), { headers: { Authorization: `Bearer ${token}` } }), { datasetId: String(dataset.id) })).json();
      expect(one.dataset.sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(one.dataset.uploadedBy).toBe("Analyst Person");
    });
  }

  it("keeps a dataset a reconstruction was made from", async () => {
    const [d] = await db().select().from(datasets).where(eq(datasets.kind, "bathymetry"));
    await db().insert(reconstructions).values({ projectId: world.projectId, inputsHash: "uses", params: { bathymetryDatasetId: d.id, horizonDatasetId: null, surveyLinesDatasetId: null }, engineVersion: "t", name: "Kept run" });
    const res = await callWith(apiDataset.action, new Request(new URL(`/api/datasets/${d.id}`, ORIGIN), { method: "DELETE", headers: { Authorization: `Bearer ${token}` } }), { datasetId: String(d.id) });
    expect(res.status).toBe(409);
    expect((await res.json()).error.message).toMatch(/Kept run/);
    expect((await db().select().from(datasets).where(eq(datasets.id, d.id))).length).toBe(1);
  });
});

