// The demo's weight sets (scripts/demo/demo-weight-sets.ts) seed through the server functions into
// a project with the demo users, and seeding again, or after the team deleted them, adds nothing.
import { describe, expect, it } from "vitest";
import { sql } from "drizzle-orm";
import { db } from "~/db.server";
import { memberships, projects, weightSets } from "~/db/schema";
import { adoptionHistory, getWeightSet, listWeightSets } from "~/weight-sets.server";
import { checkPeriodAgainstAges } from "~/scoring/weight-set";
import { demoProject, demoUsers } from "../scripts/demo/demo-data";
import { estuaryForagersV2, seedDemoWeightSets, valleyHuntersV2 } from "../scripts/demo/demo-weight-sets";
import { makeUser } from "../tests/support/world";

describe("the demo weight sets", () => {
  it("seed two sets, a fork and an adoption once, and never again", async () => {
    const [p] = await db().insert(projects).values({ ...demoProject }).returning();
    for (const u of demoUsers) await db().insert(memberships).values({ projectId: p.id, userId: await makeUser(u.email, u.name), role: u.role });
    expect(await seedDemoWeightSets(p.id)).toMatch(/Estuary foragers/);

    const sets = await listWeightSets(p.id);
    expect(sets.map((s) => s.name)).toEqual(["Estuary foragers", "Valley hunters"]);
    const estuary = (await getWeightSet(sets[0].id))!;
    expect(estuary.history.map((h) => [h.version, h.createdBy?.name])).toEqual([[2, "Ilsa Marrowby"], [1, "Teo Vantrell"]]);
    expect(estuary.history[0].note).not.toBe("");
    expect(estuary.version.content).toEqual(estuaryForagersV2());
    expect(estuary.version.content.periods.map((x) => x.name)).toEqual(["Late glacial coast", "Early Holocene coast"]);
    // The demo reconstruction's ages (scripts/seed.ts) fall in both periods.
    for (const period of estuary.version.content.periods) expect(() => checkPeriodAgainstAges(period, [20, 16, 14, 12, 10, 8])).not.toThrow();
    const valley = (await getWeightSet(sets[1].id))!;
    expect(valley.forkedFrom).toMatchObject({ name: "Estuary foragers", version: 2 });
    expect(valley.version.content).toEqual(valleyHuntersV2());
    const weight = (c: typeof valley.version.content, f: string) => c.factors.find((x) => x.factor === f)!.weight;
    expect(weight(valley.version.content, "dist_stream")).toBeGreaterThan(weight(estuary.version.content, "dist_stream"));
    expect(weight(valley.version.content, "dist_confluence")).toBeGreaterThan(weight(estuary.version.content, "dist_confluence"));
    expect(weight(valley.version.content, "dist_shoreline")).toBeLessThan(weight(estuary.version.content, "dist_shoreline"));
    const [adoption] = await adoptionHistory(p.id);
    expect(adoption).toMatchObject({ name: "Estuary foragers", version: 2, adoptedBy: { name: "Ilsa Marrowby" } });
    expect(adoption.rationale.length).toBeGreaterThan(0);
    expect(sets[0].adopted).toMatchObject({ version: 2 });

    const count = async () => Number((await db().execute<{ n: number }>(sql`select count(*)::int as n from weight_set_versions`)).rows[0].n);
    const before = await count();
    expect(await seedDemoWeightSets(p.id)).toMatch(/none seeded/);
    expect(await count()).toBe(before);
    // A team that deleted its sets does not get them back on the next start.
    await db().execute(sql`delete from weight_set_adoptions where project_id = ${p.id}`);
    await db().delete(weightSets);
    expect(await seedDemoWeightSets(p.id)).toMatch(/none seeded/);
    expect(await listWeightSets(p.id)).toEqual([]);
  });
});
