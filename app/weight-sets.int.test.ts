// Weight sets end to end through the API against the real database: versions and history, stale
// and racing saves, restore, fork, delete rules, adoption, who may do what, and bad input refused
// with a message and nothing stored.
import { beforeAll, describe, expect, it } from "vitest";
import { and, eq, sql } from "drizzle-orm";
import { db } from "~/db.server";
import { auditLog, reconstructions, scorings } from "~/db/schema";
import { defaultWeightSetContent, type WeightSetContent } from "~/scoring/weight-set";
import { canonicalJson, contentHash, createWeightSet, getWeightSet, listWeightSets } from "~/weight-sets.server";
import * as listApi from "~/routes/api.project-weight-sets";
import * as setApi from "~/routes/api.weight-set";
import * as restoreApi from "~/routes/api.weight-set-restore";
import * as adoptApi from "~/routes/api.project-adopted-weights";
import { buildWorld, call, headersFor, isRefusal, type Who, type World } from "../tests/support/world";

let world: World;
beforeAll(async () => {
  world = await buildWorld("ws");
});

const pid = () => String(world.projectId);

function list(who: Who, method = "GET", json?: unknown, projectId = pid()) {
  return call(method === "GET" ? listApi.loader : listApi.action, `/api/projects/${projectId}/weight-sets`, { method, json, headers: headersFor(world, who), params: { projectId } });
}
function one(who: Who, id: number, method = "GET", json?: unknown, query = "") {
  return call(method === "GET" ? setApi.loader : setApi.action, `/api/weight-sets/${id}${query}`, { method, json, headers: headersFor(world, who), params: { id: String(id) } });
}
function restore(who: Who, id: number, json: unknown) {
  return call(restoreApi.action, `/api/weight-sets/${id}/restore`, { method: "POST", json, headers: headersFor(world, who), params: { id: String(id) } });
}
function adopted(who: Who, method = "GET", json?: unknown) {
  return call(method === "GET" ? adoptApi.loader : adoptApi.action, `/api/projects/${pid()}/weight-sets/adopted`, { method, json, headers: headersFor(world, who), params: { projectId: pid() } });
}

async function counts() {
  const [r] = (
    await db().execute<{ sets: number; versions: number; adoptions: number }>(sql`
      select (select count(*)::int from weight_sets) as sets,
             (select count(*)::int from weight_set_versions) as versions,
             (select count(*)::int from weight_set_adoptions) as adoptions`)
  ).rows;
  return r;
}

async function auditOf(action: string) {
  return db().select().from(auditLog).where(and(eq(auditLog.projectId, world.projectId), eq(auditLog.action, action)));
}

/** The starting content with one factor's weight changed (a visible, valid edit). */
function withWeight(factor: string, weight: number, base: WeightSetContent = defaultWeightSetContent()): WeightSetContent {
  const c = structuredClone(base);
  c.factors.find((f) => f.factor === factor)!.weight = weight;
  return c;
}

let made = 0;
async function newSet(who: Who = "analyst", content: WeightSetContent = defaultWeightSetContent()) {
  const res = await list(who, "POST", { name: `Set ${++made}`, content, note: "first try" });
  expect(res.status).toBe(201);
  return (await res.json()).weightSet as { id: number; name: string; currentVersion: number; version: { id: number; version: number; contentHash: string } };
}

describe("the content hash", () => {
  it("is the SHA-256 of JSON with sorted keys, whatever order the keys came in", () => {
    expect(canonicalJson({ b: 2, a: 1 })).toBe('{"a":1,"b":2}');
    // Reference value from `printf '{"a":1,"b":2}' | sha256sum` (coreutils), not from this code.
    expect(contentHash({ b: 2, a: 1 })).toBe("43258cff783fe7036d8a43033f830adfc60ec037382473548ac742b888292777");
    expect(canonicalJson({ z: [{ y: 1, x: null }], a: "s" })).toBe('{"a":"s","z":[{"x":null,"y":1}]}');
  });
});

describe("creating and saving", () => {
  it("creates version 1 with content, hash, note, who and when, and audits it", async () => {
    const content = withWeight("slope", 4);
    const res = await list("analyst", "POST", { name: "Estuary foragers", description: "Coastal camps", content, note: "from the team meeting" });
    expect(res.status).toBe(201);
    const { weightSet } = await res.json();
    expect(weightSet).toMatchObject({ name: "Estuary foragers", description: "Coastal camps", currentVersion: 1, adopted: null, forkedFrom: null, createdBy: { name: "Analyst Person" } });
    expect(weightSet.version).toMatchObject({ version: 1, note: "from the team meeting", createdBy: { name: "Analyst Person" }, contentHash: contentHash(content) });
    expect(weightSet.version.content).toEqual(content);
    expect(weightSet.version.createdAt).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/);
    expect(weightSet.history).toHaveLength(1);
    const audits = await auditOf("weight_set.created");
    expect(audits.some((a) => a.detail.weightSetId === weightSet.id && a.actorUserId === world.userIds.analyst)).toBe(true);
    // Listed for every member, viewers included, with the current content.
    const listed = await (await list("viewer")).json();
    expect(listed.weightSets.map((s: { name: string }) => s.name)).toContain("Estuary foragers");
  });

  it("starts from the catalogue's set when no content is sent", async () => {
    const res = await list("lead", "POST", { name: "Plain start" });
    expect(res.status).toBe(201);
    const { weightSet } = await res.json();
    expect(weightSet.version.content).toEqual(defaultWeightSetContent());
  });

  it("saves a new version on every PATCH; history lists them newest first; an old version stays readable", async () => {
    const set = await newSet();
    const v2 = withWeight("dist_stream", 5);
    const res = await one("lead", set.id, "PATCH", { version: 1, content: v2, note: "streams matter more" });
    expect(res.status).toBe(200);
    const { weightSet } = await res.json();
    expect(weightSet.currentVersion).toBe(2);
    expect(weightSet.version).toMatchObject({ version: 2, note: "streams matter more", createdBy: { name: "Lead Person" }, contentHash: contentHash(v2) });
    expect(weightSet.history.map((h: { version: number }) => h.version)).toEqual([2, 1]);
    expect(weightSet.history[1]).toMatchObject({ note: "first try", createdBy: { name: "Analyst Person" }, contentHash: set.version.contentHash });
    const old = await (await one("viewer", set.id, "GET", undefined, "?version=1")).json();
    expect(old.weightSet.version.version).toBe(1);
    expect(old.weightSet.version.content).toEqual(defaultWeightSetContent());
    expect(old.weightSet.currentVersion).toBe(2);
    const missing = await one("viewer", set.id, "GET", undefined, "?version=9");
    expect(missing.status).toBe(404);
    expect((await missing.json()).error.message).toMatch(/no version 9.*1 to 2/);
    expect((await one("viewer", set.id, "GET", undefined, "?version=two")).status).toBe(400);
    expect((await auditOf("weight_set.saved")).some((a) => a.detail.weightSetId === set.id && a.detail.version === 2 && a.detail.note === "streams matter more")).toBe(true);
  });

  it("renames in a save, keeping the content", async () => {
    const set = await newSet();
    const res = await one("analyst", set.id, "PATCH", { version: 1, name: `Renamed ${set.id}`, note: "clearer name" });
    expect(res.status).toBe(200);
    const { weightSet } = await res.json();
    expect(weightSet).toMatchObject({ name: `Renamed ${set.id}`, currentVersion: 2 });
    expect(weightSet.version.contentHash).toBe(set.version.contentHash);
  });

  it("refuses a stale save with 409 naming who saved which version when, and saves nothing", async () => {
    const set = await newSet();
    expect((await one("lead", set.id, "PATCH", { version: 1, content: withWeight("slope", 1), note: "lead's change" })).status).toBe(200);
    const before = await counts();
    const res = await one("analyst", set.id, "PATCH", { version: 1, content: withWeight("slope", 3), note: "analyst's change" });
    expect(res.status).toBe(409);
    const { error } = await res.json();
    expect(error.code).toBe("stale_version");
    expect(error.message).toMatch(/version 2 was saved by Lead Person at \d{4}-\d\d-\d\d \d\d:\d\d UTC/);
    expect(error.message).toMatch(/version 1 you edited/);
    expect(error.message).toMatch(/Reload/);
    expect(await counts()).toEqual(before);
    const now = await getWeightSet(set.id);
    expect(now!.currentVersion).toBe(2);
    expect(now!.version.note).toBe("lead's change");
    // A version from the future is refused too.
    const ahead = await one("analyst", set.id, "PATCH", { version: 7, note: "?" });
    expect(ahead.status).toBe(409);
    expect((await ahead.json()).error.message).toMatch(/at version 2; there is no version 7/);
  });

  it("lets exactly one of two saves of the same version win when they race", async () => {
    const set = await newSet();
    const before = await counts();
    const [a, b] = await Promise.all([
      one("analyst", set.id, "PATCH", { version: 1, content: withWeight("tpi", 2), note: "A" }),
      one("lead", set.id, "PATCH", { version: 1, content: withWeight("tpi", 3), note: "B" }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
    const after = await counts();
    expect(after.versions).toBe(before.versions + 1);
    const now = await getWeightSet(set.id);
    expect(now!.currentVersion).toBe(2);
    expect(now!.history).toHaveLength(2);
    const winner = a.status === 200 ? "A" : "B";
    expect(now!.version.note).toBe(winner);
  });
});

describe("restore and fork", () => {
  it("restores an old version as a new version with its content and a note", async () => {
    const set = await newSet();
    await one("analyst", set.id, "PATCH", { version: 1, content: withWeight("slope", 0), note: "no slope" });
    const res = await restore("analyst", set.id, { version: 1, expectedVersion: 2, note: "slope was right" });
    expect(res.status).toBe(200);
    const { weightSet } = await res.json();
    expect(weightSet.currentVersion).toBe(3);
    expect(weightSet.version).toMatchObject({ version: 3, note: "Restored from version 1. slope was right", contentHash: set.version.contentHash });
    expect(weightSet.version.content).toEqual(defaultWeightSetContent());
    expect((await auditOf("weight_set.restored")).some((a) => a.detail.weightSetId === set.id && a.detail.restoredVersion === 1)).toBe(true);
    // Stale, and a version that does not exist: refused, nothing saved.
    const before = await counts();
    const stale = await restore("analyst", set.id, { version: 1, expectedVersion: 2 });
    expect(stale.status).toBe(409);
    expect((await stale.json()).error.message).toMatch(/version 3 was saved by Analyst Person/);
    const none = await restore("analyst", set.id, { version: 12, expectedVersion: 3 });
    expect(none.status).toBe(422);
    expect((await none.json()).error.message).toMatch(/no version 12 to restore/);
    expect(await counts()).toEqual(before);
  });

  it("forks a version into a new set whose version 1 copies it", async () => {
    const set = await newSet();
    const v2content = withWeight("dist_confluence", 4);
    await one("analyst", set.id, "PATCH", { version: 1, content: v2content, note: "confluences" });
    const src = await getWeightSet(set.id);
    const res = await list("analyst", "POST", { name: `Fork of ${set.id}`, forkFromVersionId: src!.version.id, note: "valley variant" });
    expect(res.status).toBe(201);
    const { weightSet } = await res.json();
    expect(weightSet).toMatchObject({ currentVersion: 1, forkedFrom: { weightSetId: set.id, version: 2, versionId: src!.version.id, name: set.name } });
    expect(weightSet.version.content).toEqual(v2content);
    expect(weightSet.version.contentHash).toBe(contentHash(v2content));
    expect(weightSet.version.note).toBe(`Forked from “${set.name}” version 2. valley variant`);
    expect((await auditOf("weight_set.forked")).some((a) => a.detail.weightSetId === weightSet.id && a.detail.fromVersion === 2)).toBe(true);
  });

  it("refuses to fork another project's version, or fork and send content at once", async () => {
    const { version: foreign } = await createWeightSet({ projectId: world.otherProjectId, name: "Tessel set", userId: world.userIds.outsider });
    const before = await counts();
    const res = await list("analyst", "POST", { name: "Stolen fork", forkFromVersionId: foreign.id });
    expect(res.status).toBe(422);
    expect((await res.json()).error.message).toMatch(/not a version of this project's weight sets/);
    const both = await list("analyst", "POST", { name: "Both", forkFromVersionId: foreign.id, content: defaultWeightSetContent() });
    expect(both.status).toBe(422);
    expect((await both.json()).error.message).toMatch(/content or forkFromVersionId, not both/);
    expect(await counts()).toEqual(before);
  });
});

describe("adoption", () => {
  it("lets a lead adopt a version with a rationale, audited; GET shows the current one and the history", async () => {
    const first = await newSet();
    const second = await newSet();
    const r1 = await adopted("lead", "POST", { versionId: first.version.id, rationale: "agreed at the March review" });
    expect(r1.status).toBe(201);
    const r2 = await adopted("owner", "POST", { versionId: second.version.id, rationale: "better fit to the cores" });
    expect(r2.status).toBe(201);
    const state = await (await adopted("viewer")).json();
    expect(state.adopted).toMatchObject({ weightSetId: second.id, versionId: second.version.id, version: 1, rationale: "better fit to the cores", adoptedBy: { name: "Owner Person" } });
    expect(state.adopted.content).toEqual(defaultWeightSetContent());
    expect(state.history.map((h: { versionId: number }) => h.versionId).slice(0, 2)).toEqual([second.version.id, first.version.id]);
    const audit = (await auditOf("weight_set.adopted")).find((a) => a.detail.versionId === first.version.id);
    expect(audit).toBeDefined();
    expect(audit!.actorUserId).toBe(world.userIds.lead);
    expect(audit!.detail).toMatchObject({ weightSetId: first.id, name: first.name, version: 1, rationale: "agreed at the March review" });
    // The adopted marker on the set.
    const sets = await listWeightSets(world.projectId);
    expect(sets.find((s) => s.id === second.id)!.adopted).toMatchObject({ version: 1, rationale: "better fit to the cores" });
    expect(sets.find((s) => s.id === first.id)!.adopted).toBeNull();
    // Adopting what is already adopted changes nothing.
    const again = await adopted("lead", "POST", { versionId: second.version.id, rationale: "again" });
    expect(again.status).toBe(409);
  });

  it("needs a rationale, a version of this project, and a lead or owner", async () => {
    const set = await newSet();
    const { version: foreign } = await createWeightSet({ projectId: world.otherProjectId, name: "Tessel adopt", userId: world.userIds.outsider });
    const before = await counts();
    const empty = await adopted("lead", "POST", { versionId: set.version.id, rationale: "  " });
    expect(empty.status).toBe(422);
    expect((await empty.json()).error.message).toMatch(/rationale is required/);
    const long = await adopted("lead", "POST", { versionId: set.version.id, rationale: "x".repeat(1001) });
    expect(long.status).toBe(422);
    expect((await long.json()).error.message).toMatch(/at most 1000/);
    const other = await adopted("lead", "POST", { versionId: foreign.id, rationale: "theirs" });
    expect(other.status).toBe(422);
    for (const who of ["analyst", "reviewer", "viewer"] as const) {
      const res = await adopted(who, "POST", { versionId: set.version.id, rationale: "I like it" });
      expect(res.status, who).toBe(403);
      expect(isRefusal(res)).toBe(true);
    }
    expect(await counts()).toEqual(before);
  });
});

describe("deleting", () => {
  it("deletes an unused set, audited", async () => {
    const set = await newSet();
    const res = await one("analyst", set.id, "DELETE");
    expect(res.status).toBe(204);
    expect((await one("analyst", set.id)).status).toBe(404);
    expect((await auditOf("weight_set.deleted")).some((a) => a.detail.weightSetId === set.id && a.detail.name === set.name)).toBe(true);
  });

  it("refuses while a version is the adopted one, or was adopted, saying which", async () => {
    const set = await newSet();
    await one("analyst", set.id, "PATCH", { version: 1, content: withWeight("slope", 1), note: "v2" });
    const v2 = (await getWeightSet(set.id))!.version;
    expect((await adopted("lead", "POST", { versionId: v2.id, rationale: "for the delete test" })).status).toBe(201);
    const before = await counts();
    const res = await one("analyst", set.id, "DELETE");
    expect(res.status).toBe(409);
    expect((await res.json()).error.message).toMatch(/its version 2 is the project's adopted weight set/);
    // Adopting another keeps this one in the history: still refused, for that reason.
    const other = await newSet();
    expect((await adopted("lead", "POST", { versionId: other.version.id, rationale: "moved on" })).status).toBe(201);
    const res2 = await one("analyst", set.id, "DELETE");
    expect(res2.status).toBe(409);
    expect((await res2.json()).error.message).toMatch(/version 2 was adopted for the project before/);
    expect((await counts()).sets).toBe(before.sets + 1);
    expect(await getWeightSet(set.id)).not.toBeNull();
  });

  it("refuses while a scoring used one of its versions, naming the scoring", async () => {
    const set = await newSet();
    const [r] = await db().insert(reconstructions).values({ projectId: world.projectId, inputsHash: `ws-${set.id}`, params: {}, engineVersion: "test" }).returning({ id: reconstructions.id });
    const [s] = await db()
      .insert(scorings)
      .values({ projectId: world.projectId, reconstructionId: r.id, weightSetVersionId: set.version.id, target: { kind: "age", ageKa: 12 }, inputsHash: `ws-${set.id}` })
      .returning({ id: scorings.id });
    const before = await counts();
    const res = await one("analyst", set.id, "DELETE");
    expect(res.status).toBe(409);
    expect((await res.json()).error.message).toContain(`scoring (#${s.id}) used its version 1`);
    expect(await counts()).toEqual(before);
  });
});

describe("who may", () => {
  it("lets viewers and API tokens read but not create, save, restore or delete", async () => {
    const set = await newSet();
    for (const who of ["viewer", "viewerToken", "reviewer"] as const) {
      expect((await one(who, set.id)).status, who).toBe(200);
      expect((await list(who)).status, who).toBe(200);
    }
    const before = await counts();
    for (const who of ["viewer", "viewerToken", "reviewer"] as const) {
      const refused = [
        await list(who, "POST", { name: "Viewer's set" }),
        await one(who, set.id, "PATCH", { version: 1, content: withWeight("slope", 9), note: "x" }),
        await one(who, set.id, "DELETE"),
        await restore(who, set.id, { version: 1, expectedVersion: 1 }),
      ];
      for (const res of refused) {
        expect(res.status, who).toBe(403);
        expect(isRefusal(res)).toBe(true);
      }
    }
    expect(await counts()).toEqual(before);
  });

  it("answers another project's member with the 404 refusal, and a member of this project for the other project's set too", async () => {
    const set = await newSet();
    const before = await counts();
    for (const res of [
      await one("outsider", set.id),
      await one("outsider", set.id, "PATCH", { version: 1, note: "x" }),
      await one("outsider", set.id, "DELETE"),
      await restore("outsider", set.id, { version: 1, expectedVersion: 1 }),
      await list("outsider"),
      await list("outsider", "POST", { name: "Outside" }),
    ]) {
      expect(res.status).toBe(404);
      expect(isRefusal(res)).toBe(true);
    }
    const { set: foreign } = await createWeightSet({ projectId: world.otherProjectId, name: "Tessel private", userId: world.userIds.outsider });
    const res = await one("owner", foreign.id);
    expect(res.status).toBe(404);
    expect(isRefusal(res)).toBe(true);
    expect((await one("owner", 999_999)).status).toBe(404);
    expect((await list("owner", "GET", undefined, String(world.otherProjectId))).status).toBe(404);
    expect((await counts()).versions).toBe(before.versions + 1);
  });
});

describe("bad input", () => {
  const bad: Array<[string, (c: WeightSetContent) => unknown, RegExp]> = [
    ["a negative weight", (c) => withWeight("slope", -1, c), /weight of a factor must be 0 or more/],
    ["a weight that is not a number (NaN travels as null in JSON)", (c) => withWeight("slope", NaN, c), /must be a number/],
    ["a weight sent as text", (c) => ({ ...c, factors: c.factors.map((f, i) => (i === 0 ? { ...f, weight: "NaN" } : f)) }), /must be a number/],
    ["all weights zero", (c) => ({ ...c, factors: c.factors.map((f) => ({ ...f, weight: 0 })) }), /All weights are zero/],
    [
      "control points out of order",
      (c) => ({ ...c, factors: c.factors.map((f) => (f.factor === "slope" ? { ...f, curve: { kind: "linear", direction: "decreasing", fullUntil: 20, zeroAt: 5 } } : f)) }),
      /Slope: The linear curve's control point "zeroAt" \(5\) must be greater than "fullUntil" \(20\)/,
    ],
    ["an unknown factor", (c) => ({ ...c, factors: [...c.factors.slice(1), { ...c.factors[0], factor: "dist_volcano" }] }), /A factor is one of/],
    ["an AHP judgement above 9", (c) => ({ ...c, ahp: { factors: ["dist_stream", "slope"], upper: [12] } }), /outside Saaty's scale 1\/9 to 9/],
    ["an AHP judgement below 1/9", (c) => ({ ...c, ahp: { factors: ["dist_stream", "slope"], upper: [1 / 20] } }), /outside Saaty's scale 1\/9 to 9/],
    // Judgements are stored as the upper triangle (the lower is its reciprocal by construction), so a
    // non-reciprocal matrix shows up as the wrong number of judgements for the factors compared.
    ["AHP judgements that do not fill the triangle", (c) => ({ ...c, ahp: { factors: ["dist_stream", "slope", "tpi"], upper: [3, 5] } }), /3 factors need 3 judgements above the diagonal \(got 2\)/],
    ["a period with its ends swapped", (c) => ({ ...c, periods: [{ name: "Late glacial coast", youngKa: 16, oldKa: 12, rule: "zero" }] }), /young end must be a smaller age/],
  ];

  for (const [what, make, message] of bad) {
    it(`refuses ${what} on create and on save, naming it, and stores nothing`, async () => {
      const set = await newSet();
      const before = await counts();
      const created = await list("analyst", "POST", { name: `Bad ${what}`, content: make(defaultWeightSetContent()) });
      expect(created.status).toBe(422);
      expect((await created.json()).error.message).toMatch(message);
      const saved = await one("analyst", set.id, "PATCH", { version: 1, content: make(defaultWeightSetContent()), note: "bad" });
      expect(saved.status).toBe(422);
      expect((await saved.json()).error.message).toMatch(message);
      expect(await counts()).toEqual(before);
      expect((await getWeightSet(set.id))!.currentVersion).toBe(1);
    });
  }

  it("refuses bad names and notes, and a name already taken (whatever its case)", async () => {
    const set = await newSet();
    const before = await counts();
    const cases: Array<[unknown, number, RegExp]> = [
      [{ name: "" }, 422, /needs a name/],
      [{ name: "   " }, 422, /needs a name/],
      [{ name: "x".repeat(81) }, 422, /at most 80 characters/],
      [{ name: "<b>bold</b>" }, 422, /cannot contain < or >/],
      [{ name: "Fine", note: "n".repeat(501) }, 422, /at most 500 characters/],
      [{ name: set.name.toUpperCase() }, 409, new RegExp(`already has a weight set called “${set.name}”`)],
      [{ name: "Fine", colour: "red" }, 422, /colour/],
    ];
    for (const [body, status, message] of cases) {
      const res = await list("analyst", "POST", body);
      expect(res.status, JSON.stringify(body).slice(0, 60)).toBe(status);
      expect((await res.json()).error.message).toMatch(message);
    }
    const other = await newSet();
    const after = await counts();
    const rename = await one("analyst", other.id, "PATCH", { version: 1, name: set.name, note: "take its name" });
    expect(rename.status).toBe(409);
    expect((await rename.json()).error.message).toMatch(/already has a weight set called/);
    const noVersion = await one("analyst", other.id, "PATCH", { content: defaultWeightSetContent() });
    expect(noVersion.status).toBe(422);
    expect((await noVersion.json()).error.message).toMatch(/version/);
    expect(await counts()).toEqual(after);
    expect(after.sets).toBe(before.sets + 1);
  });
});
