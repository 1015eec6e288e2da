// Reviews on frozen snapshots, against the real database, storage and SMTP catcher: opening freezes
// the snapshot and its hash; comments thread; only reviewers (and owners) sign, with their own
// password, and accepting with conditions needs a condition; a decided review's snapshot, hash and
// report figures stay the same after a new weight-set version is saved and adopted and new data
// arrive; what a review refers to cannot be deleted (409 naming the review); the leads get mail.
//
// The reconstruction and scoring are published rows with real GeoTIFFs in storage, written here
// (the scoring job itself is tested end to end in jobs/scoring.int.test.ts): a 4 × 4 potential
// whose class areas are counted by hand below.
import { createHash } from "node:crypto";
import { inflateSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { db } from "~/db.server";
import { auditLog, datasets, models, reconstructions, reviewComments, reviews, scorings } from "~/db/schema";
import { store } from "~/storage.server";
import { writeGeoTiff } from "~/terrain/geotiff-write";
import { resolveCrs } from "~/terrain/crs";
import { defaultWeightSetContent } from "~/scoring/weight-set";
import { potentialRgba } from "~/components/scoring/render";
import { adoptVersion, createWeightSet, deleteWeightSet, saveWeightSetVersion } from "~/weight-sets.server";
import { deleteDataset } from "~/datasets.server";
import { getReviewRow, reviewView, snapshotHash, type ReviewSnapshot } from "~/reviews.server";
import { reviewReport } from "~/review-report.server";
import { canonicalJson } from "~/weight-sets.server";
import * as apiReviews from "~/routes/api.project-reviews";
import * as apiReview from "~/routes/api.review";
import * as apiDecision from "~/routes/api.review-decision";
import * as apiComments from "~/routes/api.review-comments";
import * as apiMap from "~/routes/api.review-map";
import * as reportPage from "~/routes/project-review-report";
import { buildWorld, call, headersFor, PASSWORD, type Who, type World } from "../tests/support/world";
import { latestMailTo, startTestCatcher } from "../tests/support/mail";
import type { CatcherHandle } from "~/mail-catcher.server";

let world: World;
let catcher: CatcherHandle;
let weightSetId: number;
let versionId: number;
let scoringId: number;
let coresDatasetId: number;

const W = 4;
const H = 4;
const CELL = 100;
// Row-major, north row first. Index 8 is sea (no occupation), index 9 occupiable but unassessed.
const POTENTIAL = [0.9, 0.8, 0.6, 0.55, 0.3, 0.2, 0.1, 0.05, NaN, NaN, 0.76, 0.74, 0.5, 0.49, 0.26, 0.24];
const OCCUPATION = POTENTIAL.map((v, i) => (i === 8 ? NaN : i === 9 ? 0.5 : Math.min(1, v + 0.05)));
const UNASSESSED = POTENTIAL.map((_, i) => (i === 9 ? 1 : 0));

function tiff(values: number[], type: "float" | "byte") {
  const crs = resolveCrs(32733);
  const spec = { width: W, height: H, originX: 480_000, originY: 5_030_000, cellSizeX: CELL, cellSizeY: CELL, crs: { epsg: crs.epsg, proj4: crs.proj4 } };
  const nodata = Uint8Array.from(values, (v) => (v === v ? 0 : 1));
  return writeGeoTiff(type === "float" ? { spec, data: Float32Array.from(values), nodata } : { spec, data: Uint8Array.from(values), nodata: new Uint8Array(values.length) });
}

const sha = (b: Uint8Array) => createHash("sha256").update(b).digest("hex");

/** Reads an RGBA PNG as our encoder writes it (filter 0 on every row). */
function decodePng(bytes: Uint8Array) {
  const buf = Buffer.from(bytes);
  expect([...buf.subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
  let p = 8;
  let width = 0;
  let height = 0;
  const idat: Buffer[] = [];
  while (p < buf.length) {
    const len = buf.readUInt32BE(p);
    const type = buf.toString("latin1", p + 4, p + 8);
    const data = buf.subarray(p + 8, p + 8 + len);
    if (type === "IHDR") {
      width = data.readUInt32BE(0);
      height = data.readUInt32BE(4);
    }
    if (type === "IDAT") idat.push(data);
    p += 12 + len;
  }
  const raw = inflateSync(Buffer.concat(idat));
  const rgba = new Uint8Array(width * height * 4);
  for (let y = 0; y < height; y++) raw.copy(rgba, y * width * 4, y * (width * 4 + 1) + 1, (y + 1) * (width * 4 + 1));
  return { width, height, rgba };
}

beforeAll(async () => {
  catcher = await startTestCatcher();
  world = await buildWorld("rv");
  const { set, version } = await createWeightSet({ projectId: world.projectId, name: "Coastal foragers", content: defaultWeightSetContent(), userId: world.userIds.analyst });
  weightSetId = set.id;
  versionId = version.id;
  const [rec] = await db()
    .insert(reconstructions)
    .values({
      projectId: world.projectId,
      name: "Shelf at 12 ka",
      inputsHash: "rec-inputs",
      params: { agesKa: [12] },
      engineVersion: "test-engine",
      status: "published",
      layerPrefix: "runs/p/r1",
      manifest: { engineVersion: "test-engine", agesKa: [12], grid: { width: W, height: H, originX: 480_000, originY: 5_030_000, cellSizeX: CELL, cellSizeY: CELL, epsg: 32733 }, layers: [] },
      publishedAt: new Date(),
    })
    .returning();
  const prefix = `scorings/p${world.projectId}/s-test`;
  const files: { name: string; file: string; type: string; bytes: number; sha256: string }[] = [];
  for (const [name, values, type] of [
    ["potential", POTENTIAL, "float"],
    ["occupation", OCCUPATION, "float"],
    ["unassessed", UNASSESSED, "byte"],
  ] as const) {
    const bytes = tiff(values, type);
    await store().put(`${prefix}/${name}.tif`, bytes, "image/tiff");
    files.push({ name, file: `${name}.tif`, type: type === "float" ? "float32" : "uint8", bytes: bytes.byteLength, sha256: sha(bytes) });
  }
  const [sc] = await db()
    .insert(scorings)
    .values({
      projectId: world.projectId,
      reconstructionId: rec.id,
      weightSetVersionId: versionId,
      target: { kind: "age", ageKa: 12 },
      inputsHash: "scoring-inputs",
      status: "published",
      layerPrefix: prefix,
      publishedAt: new Date(),
      result: {
        files,
        grid: { width: W, height: H, cellSizeX: CELL, cellSizeY: CELL, cellAreaKm2: 0.01, epsg: 32733 },
        occupiable: { cells: 15, areaKm2: 0.15 },
        unassessed: { cells: 1, areaKm2: 0.01 },
        potential: { cells: 14, min: 0.05, max: 0.9, mean: 0.4643, median: 0.495 },
        notes: [],
        preservation: { active: true, reason: "Preservation is on.", evidence: { points: 2, intact: 1, truncated: 1 } },
        displayChecksum: { checksum: "abc123" },
      },
    })
    .returning();
  scoringId = sc.id;
  const [d] = await db()
    .insert(datasets)
    .values({ projectId: world.projectId, kind: "cores", name: "Vibrocores 2024", format: "csv", originalKey: "uploads/x/cores.csv", originalName: "cores.csv", sizeBytes: 120, sha256: "c0ffee", derivedKey: "datasets/x/cores.json", derivedFormat: "json", crsEpsg: 32733, count: 3 })
    .returning();
  coresDatasetId = d.id;
});

afterAll(async () => {
  await catcher?.close();
});

const as = (who: Who) => headersFor(world, who);

async function openAs(who: Who, json: unknown) {
  return call(apiReviews.action, `/api/projects/${world.projectId}/reviews`, { method: "POST", headers: as(who), json, params: { projectId: String(world.projectId) } });
}

async function decide(who: Who, id: number, json: unknown) {
  return call(apiDecision.action, `/api/reviews/${id}/decision`, { method: "POST", headers: as(who), json, params: { id: String(id) } });
}

describe("opening a review", () => {
  it("freezes the reconstruction, the version, the scoring's files, the classification and the datasets under one hash, and tells the lead", async () => {
    const res = await openAs("reviewer", { title: "Block C array", scoringId });
    expect(res.status, await res.clone().text()).toBe(201);
    const { review } = (await res.json()) as { review: { id: number; snapshot: ReviewSnapshot; snapshotHash: string; snapshotVerified: boolean; status: string } };
    const s = review.snapshot;
    expect(review.status).toBe("open");
    expect(s.reconstruction).toMatchObject({ name: "Shelf at 12 ka", inputsHash: "rec-inputs", agesKa: [12] });
    const [rec] = await db().select().from(reconstructions).where(eq(reconstructions.id, s.reconstruction.id));
    // The manifest's checksum is the SHA-256 of its canonical JSON (sorted keys).
    expect(s.reconstruction.manifestSha256).toBe(createHash("sha256").update(canonicalJson(rec.manifest)).digest("hex"));
    expect(s.subject).toMatchObject({ kind: "weights", weightSet: { id: weightSetId, name: "Coastal foragers" }, version: { id: versionId, number: 1 } });
    expect(s.scoring?.files.map((f) => f.name)).toEqual(["occupation", "potential", "unassessed"]);
    const potentialBytes = await store().getBytes(`scorings/p${world.projectId}/s-test/potential.tif`);
    expect(s.scoring?.files.find((f) => f.name === "potential")?.sha256).toBe(sha(potentialBytes));
    expect(s.classification).toMatchObject({ kind: "fixed", thresholds: [0.75, 0.5, 0.25], labels: ["very high", "high", "medium", "low"] });
    expect(s.datasets.map((d) => [d.id, d.sha256])).toEqual([[coresDatasetId, "c0ffee"]]);
    // The hash is the SHA-256 of the canonical JSON of exactly what is stored.
    const row = (await getReviewRow(review.id))!;
    expect(row.snapshotHash).toBe(createHash("sha256").update(canonicalJson(row.snapshot)).digest("hex"));
    expect(review.snapshotHash).toBe(snapshotHash(s));
    expect(review.snapshotVerified).toBe(true);

    const mail = await latestMailTo("lead.rv@farrow.example");
    expect(mail?.subject).toBe("Review requested: Block C array (Farrow Deep)");
    expect(mail?.textBody).toContain(review.snapshotHash);
    expect(mail?.textBody).toContain(`/projects/${world.projectId}/reviews/${review.id}`);
  });

  it("is for reviewers and owners only, and a bad request stores nothing", async () => {
    for (const who of ["lead", "analyst", "viewer"] as const) expect((await openAs(who, { title: "x", scoringId })).status, who).toBe(403);
    const before = (await db().select().from(reviews)).length;
    const both = await openAs("reviewer", { title: "Both", scoringId, modelId: 1 });
    expect(both.status).toBe(422);
    expect(((await both.json()) as { error: { message: string } }).error.message).toMatch(/one of the two/);
    const missing = await openAs("reviewer", { title: "Missing", scoringId: 999_999 });
    expect(missing.status).toBe(422);
    expect(((await missing.json()) as { error: { message: string } }).error.message).toBe("Scoring 999999 is not one of this project's scorings.");
    expect((await openAs("owner", { title: "", scoringId })).status).toBe(422);
    expect((await db().select().from(reviews)).length).toBe(before);
  });
});

describe("discussion and decision", () => {
  let reviewId: number;
  beforeAll(async () => {
    reviewId = ((await (await openAs("reviewer", { title: "Cable route A", scoringId })).json()) as { review: { id: number } }).review.id;
  });

  it("threads comments from reviewers, leads and analysts; viewers only read", async () => {
    const post = (who: Who, json: unknown) => call(apiComments.action, `/api/reviews/${reviewId}/comments`, { method: "POST", headers: as(who), json, params: { id: String(reviewId) } });
    const first = await post("reviewer", { body: "Why is the palaeochannel unassessed?" });
    expect(first.status, await first.clone().text()).toBe(201);
    const { comment } = (await first.json()) as { comment: { id: number } };
    expect((await post("analyst", { body: "No seismic lines cross it yet.", parentId: comment.id })).status).toBe(201);
    expect((await post("lead", { body: "A survey is booked for May." })).status).toBe(201);
    expect((await post("viewer", { body: "May I?" })).status).toBe(403);
    expect((await post("reviewer", { body: "Reply to nothing", parentId: 999_999 })).status).toBe(422);
    expect((await post("reviewer", { body: "   " })).status).toBe(422);

    const res = await call(apiReview.loader, `/api/reviews/${reviewId}`, { headers: as("viewer"), params: { id: String(reviewId) } });
    const { review } = (await res.json()) as { review: { comments: { id: number; parentId: number | null; author: string; body: string }[] } };
    expect(review.comments.map((c) => [c.author, c.parentId === comment.id])).toEqual([
      ["Reviewer Person", false],
      ["Analyst Person", true],
      ["Lead Person", false],
    ]);
    // The analyst's reply reaches the lead; the lead's own comment does not mail the lead.
    const mail = await latestMailTo("lead.rv@farrow.example");
    expect(mail?.subject).toBe(`New comment on the review "Cable route A"`);
    expect(mail?.textBody).toContain("> No seismic lines cross it yet.");
  });

  it("is signed only by reviewers and owners: the lead and the analyst are refused", async () => {
    for (const who of ["lead", "analyst", "viewer"] as const) {
      const res = await decide(who, reviewId, { decision: "accepted", password: PASSWORD });
      expect(res.status, who).toBe(403);
    }
    expect((await getReviewRow(reviewId))!.status).toBe("open");
  });

  it("refuses a wrong password with nothing stored", async () => {
    const auditsBefore = (await db().select().from(auditLog).where(eq(auditLog.action, "review.decided"))).length;
    const res = await decide("reviewer", reviewId, { decision: "accepted_with_conditions", conditions: ["Watching brief"], password: "not my password" });
    expect(res.status).toBe(403);
    expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/not signed and nothing was stored/);
    const row = (await getReviewRow(reviewId))!;
    expect(row).toMatchObject({ status: "open", decision: null, conditions: [], signedBy: null, signedName: null, signedAt: null });
    expect((await db().select().from(auditLog).where(eq(auditLog.action, "review.decided"))).length).toBe(auditsBefore);
  });

  it("needs at least one condition to accept with conditions, and conditions only there", async () => {
    const none = await decide("reviewer", reviewId, { decision: "accepted_with_conditions", conditions: [], password: PASSWORD });
    expect(none.status).toBe(422);
    expect(((await none.json()) as { error: { message: string } }).error.message).toMatch(/at least one condition/);
    const blank = await decide("reviewer", reviewId, { decision: "accepted_with_conditions", conditions: ["  "], password: PASSWORD });
    expect(blank.status).toBe(422);
    expect((await decide("reviewer", reviewId, { decision: "accepted", conditions: ["x"], password: PASSWORD })).status).toBe(422);
    expect((await decide("reviewer", reviewId, { decision: "changes_requested", password: PASSWORD })).status).toBe(422);
    expect((await getReviewRow(reviewId))!.status).toBe("open");
  });

  it("signs with name, time and the snapshot hash; the decided review is read-only and the lead is told", async () => {
    const before = (await getReviewRow(reviewId))!;
    const res = await decide("reviewer", reviewId, { decision: "accepted_with_conditions", conditions: ["Watching brief during trenching", "Finds-reporting protocol"], note: "Proceed.", password: PASSWORD });
    expect(res.status, await res.clone().text()).toBe(200);
    const row = (await getReviewRow(reviewId))!;
    expect(row).toMatchObject({ status: "decided", decision: "accepted_with_conditions", conditions: ["Watching brief during trenching", "Finds-reporting protocol"], decisionNote: "Proceed.", signedBy: world.userIds.reviewer, signedName: "Reviewer Person" });
    expect(row.signedAt).toBeInstanceOf(Date);
    expect(row.snapshotHash).toBe(before.snapshotHash);
    const view = await reviewView(row);
    expect(view.signature).toMatchObject({ name: "Reviewer Person", snapshotHash: before.snapshotHash });
    expect(view.signature?.digest).toMatch(/^[0-9a-f]{64}$/);

    // Read-only now: no second decision, no more comments.
    expect((await decide("reviewer", reviewId, { decision: "accepted", password: PASSWORD })).status).toBe(409);
    const late = await call(apiComments.action, `/api/reviews/${reviewId}/comments`, { method: "POST", headers: as("reviewer"), json: { body: "One more thing" }, params: { id: String(reviewId) } });
    expect(late.status).toBe(409);
    expect((await db().select().from(reviewComments).where(eq(reviewComments.reviewId, reviewId))).length).toBe(3);

    const mail = await latestMailTo("lead.rv@farrow.example");
    expect(mail?.subject).toBe(`Review decided: Cable route A — accepted with conditions`);
    expect(mail?.textBody).toContain("1. Watching brief during trenching");
    expect(mail?.textBody).toContain(row.snapshotHash);
  });

  it("keeps a decided review's snapshot, hash and report figures after a new version is saved and adopted and new data arrive", async () => {
    const row = (await getReviewRow(reviewId))!;
    const reportBefore = await reviewReport(await reviewView(row));

    const changed = defaultWeightSetContent();
    changed.factors[0].weight += 3;
    const v2 = await saveWeightSetVersion({ weightSetId, expectedVersion: 1, content: changed, note: "more weight on the first factor", userId: world.userIds.analyst });
    await adoptVersion({ projectId: world.projectId, versionId: v2.id, rationale: "after the workshop", userId: world.userIds.lead });
    await db()
      .insert(datasets)
      .values({ projectId: world.projectId, kind: "cores", name: "Vibrocores 2025", format: "csv", originalKey: "uploads/x/c2.csv", originalName: "c2.csv", sizeBytes: 80, sha256: "beef", derivedKey: "datasets/x/c2.json", derivedFormat: "json", crsEpsg: 32733, count: 2 });

    const after = (await getReviewRow(reviewId))!;
    expect(after.snapshotHash).toBe(row.snapshotHash);
    expect(after.snapshot).toEqual(row.snapshot);
    const reportAfter = await reviewReport(await reviewView(after));
    expect(reportAfter.review.snapshotVerified).toBe(true);
    expect(reportAfter.methods).toEqual(reportBefore.methods);
    expect(reportAfter.classes).toEqual(reportBefore.classes);
    expect(reportAfter.scoringStats).toEqual(reportBefore.scoringStats);
    expect(reportAfter.review.snapshot.datasets.map((d) => d.name)).toEqual(["Vibrocores 2024"]);
    // The methods are those of version 1 (weights as frozen), not the adopted version 2.
    const first = defaultWeightSetContent().factors.find((f) => f.weight > 0)!;
    expect(reportAfter.methods?.factors.find((f) => f.factor === first.factor)?.weight).toBe(first.weight);
  });
});

describe("the report's figures", () => {
  it("counts the area in each class of the frozen classification from the frozen potential", async () => {
    const id = ((await (await openAs("owner", { title: "Figures", scoringId })).json()) as { review: { id: number } }).review.id;
    const report = await reviewReport(await reviewView((await getReviewRow(id))!));
    // Hand count over POTENTIAL (common practice, no source: classes ≥ lower threshold, highest first),
    // the project's default thresholds 0.75/0.5/0.25; 15 occupiable cells of 0.01 km².
    // very high ≥ 0.75: 0.9, 0.8, 0.76 → 3; high 0.5–0.75: 0.6, 0.55, 0.74, 0.5 → 4;
    // medium 0.25–0.5: 0.3, 0.49, 0.26 → 3; low < 0.25: 0.2, 0.1, 0.05, 0.24 → 4; the unassessed cell in none.
    expect(report.classes?.map((c) => [c.label, Math.round(c.areaKm2 * 1e6) / 1e6, Math.round(c.share * 1e6) / 1e6])).toEqual([
      ["very high", 0.03, 0.2],
      ["high", 0.04, 0.266667],
      ["medium", 0.03, 0.2],
      ["low", 0.04, 0.266667],
    ]);
  });

  it("draws the frozen potential on the server in the browser's colours, hatching the unassessed cell", async () => {
    const [r] = await db().select({ id: reviews.id }).from(reviews).limit(1);
    const res = await call(apiMap.loader, `/api/reviews/${r.id}/map.png?layer=potential`, { headers: as("viewer"), params: { id: String(r.id) } });
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toBe("image/png");
    const png = decodePng(new Uint8Array(await res.arrayBuffer()));
    expect([png.width, png.height]).toEqual([W, H]);
    const expected = potentialRgba(Float32Array.from(POTENTIAL), Uint8Array.from(UNASSESSED), W, H);
    expect([...png.rgba]).toEqual([...expected]);
    expect(png.rgba[8 * 4 + 3]).toBe(0); // sea: transparent
    expect((await call(apiMap.loader, `/api/reviews/${r.id}/map.png?layer=elevation`, { headers: as("viewer"), params: { id: String(r.id) } })).status).toBe(404);
  });

  it("refuses to draw a file that no longer matches the snapshot", async () => {
    const id = ((await (await openAs("reviewer", { title: "Tamper", scoringId })).json()) as { review: { id: number } }).review.id;
    const key = `scorings/p${world.projectId}/s-test/occupation.tif`;
    const original = await store().getBytes(key);
    await store().put(key, tiff(OCCUPATION.map((v) => v * 0.5), "float"), "image/tiff");
    try {
      const res = await call(apiMap.loader, `/api/reviews/${id}/map.png?layer=occupation`, { headers: as("reviewer"), params: { id: String(id) } });
      expect(res.status).toBe(409);
      expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/no longer matches the snapshot/);
    } finally {
      await store().put(key, original, "image/tiff");
    }
  });

  it("renders the report page for a viewer, with every section", async () => {
    const [r] = await db().select({ id: reviews.id }).from(reviews).limit(1);
    const res = await call(reportPage.loader, `/projects/${world.projectId}/reviews/${r.id}/report`, { headers: as("viewer"), params: { projectId: String(world.projectId), reviewId: String(r.id) } });
    expect(res.status).toBe(200);
    const other = await call(reportPage.loader, `/projects/${world.otherProjectId}/reviews/${r.id}/report`, { headers: as("outsider"), params: { projectId: String(world.otherProjectId), reviewId: String(r.id) } });
    expect(other.status).toBe(404);
  });
});

describe("a review of a trained model", () => {
  // An invented published model whose probability raster is the potential above (a share of trees).
  const PROBABILITY = POTENTIAL;
  let modelReviewId: number;
  const modelKey = () => `models/p${world.projectId}/m-test/probability.tif`;

  beforeAll(async () => {
    const [rec] = await db().select({ id: reconstructions.id }).from(reconstructions).where(eq(reconstructions.projectId, world.projectId)).limit(1);
    const bytes = tiff(PROBABILITY, "float");
    await store().put(modelKey(), bytes, "image/tiff");
    const [m] = await db()
      .insert(models)
      .values({ projectId: world.projectId, reconstructionId: rec.id, name: "Forest at 12 ka", params: { ageKa: 12 }, inputsHash: "model-inputs", status: "published", layerPrefix: `models/p${world.projectId}/m-test`, result: { files: [{ name: "probability", file: "probability.tif", bytes: bytes.byteLength, sha256: sha(bytes) }] }, publishedAt: new Date() })
      .returning();
    const res = await openAs("reviewer", { title: "The forest", modelId: m.id });
    expect(res.status, await res.clone().text()).toBe(201);
    modelReviewId = ((await res.json()) as { review: { id: number } }).review.id;
  });

  it("draws the frozen model's probability for those who may see model rasters, and never for a viewer", async () => {
    const map = (who: Who) => call(apiMap.loader, `/api/reviews/${modelReviewId}/map.png?layer=probability`, { headers: as(who), params: { id: String(modelReviewId) } });
    const res = await map("reviewer");
    expect(res.status).toBe(200);
    const png = decodePng(new Uint8Array(await res.arrayBuffer()));
    expect([png.width, png.height]).toEqual([W, H]);
    expect([...png.rgba]).toEqual([...potentialRgba(Float32Array.from(PROBABILITY), null, W, H)]);
    expect((await map("viewer")).status).toBe(403);
    // A review of a scoring has no model to draw.
    const [scoringReview] = await db().select({ id: reviews.id }).from(reviews).limit(1);
    expect((await call(apiMap.loader, `/api/reviews/${scoringReview.id}/map.png?layer=probability`, { headers: as("reviewer"), params: { id: String(scoringReview.id) } })).status).toBe(404);

    const report = async (who: Who) =>
      ((await (await call(reportPage.loader, `/projects/${world.projectId}/reviews/${modelReviewId}/report`, { headers: as(who), params: { projectId: String(world.projectId), reviewId: String(modelReviewId) } })).json()) as { report: { modelMap: string } }).report.modelMap;
    expect(await report("reviewer")).toBe("shown");
    expect(await report("viewer")).toBe("withheld");
  });

  it("refuses to draw a model file that no longer matches the snapshot", async () => {
    const original = await store().getBytes(modelKey());
    await store().put(modelKey(), tiff(PROBABILITY.map((v) => v * 0.5), "float"), "image/tiff");
    try {
      const res = await call(apiMap.loader, `/api/reviews/${modelReviewId}/map.png?layer=probability`, { headers: as("reviewer"), params: { id: String(modelReviewId) } });
      expect(res.status).toBe(409);
      expect(((await res.json()) as { error: { message: string } }).error.message).toMatch(/no longer matches the snapshot/);
    } finally {
      await store().put(modelKey(), original, "image/tiff");
    }
  });
});

describe("what a review refers to", () => {
  it("cannot be deleted: the weight set and a dataset are refused with 409 naming the review", async () => {
    const e1 = await deleteWeightSet({ weightSetId, userId: world.userIds.analyst }).catch((e) => e);
    expect(e1).toMatchObject({ status: 409, code: "referenced_by_review" });
    expect(e1.message).toMatch(/review #\d+ “Block C array”/);
    const e2 = await deleteDataset(world.projectId, coresDatasetId, world.userIds.analyst).catch((e) => e);
    expect(e2).toMatchObject({ status: 409, code: "referenced_by_review" });
    expect((await db().select().from(datasets).where(eq(datasets.id, coresDatasetId))).length).toBe(1);
  });

  it("shows the desk's figures on the frozen scoring, and withholds them once the desk's data change", async () => {
    const [r] = await db().select().from(reviews).orderBy(reviews.id).limit(1);
    const before = await reviewReport(await reviewView(r), { userId: world.userIds.viewer, role: "viewer" });
    expect(before.deskProblem).toBeNull();
    expect(before.desk?.conflicts.scoring.id).toBe(scoringId);
    expect(before.desk?.blocks.rows).toEqual([]);
    expect(before.desk?.exclusion.buffersM).toEqual({ wreck: 100, anomaly: 50, find_spot: 50 });
    await db()
      .insert(datasets)
      .values({ projectId: world.projectId, kind: "lease_blocks", name: "Round 5 blocks", format: "geojson", originalKey: "uploads/x/b.json", originalName: "b.geojson", sizeBytes: 10, sha256: "b10c", derivedKey: "datasets/x/b.json", derivedFormat: "geojson", crsEpsg: 32733, count: 2 });
    const after = await reviewReport(await reviewView(r), { userId: world.userIds.viewer, role: "viewer" });
    expect(after.desk).toBeNull();
    expect(after.deskProblem).toBe("Not shown: dataset “Round 5 blocks” arrived since, so figures computed now would not be those of the snapshot.");
  });
});
