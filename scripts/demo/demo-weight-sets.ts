// The demo's weight sets (design §11): two invented ways a team might weigh the Corrastan Shelf,
// saved, forked and adopted through the same server functions as the API, so the demo history
// reads like a team's. Everything here is made up: the names, the notes and the reasons.
import { and, eq, inArray, like } from "drizzle-orm";
import { db } from "../../app/db.server";
import { auditLog, users, weightSets } from "../../app/db/schema";
import { defaultWeightSetContent, type WeightSetContent } from "../../app/scoring/weight-set";
import type { FactorCurve } from "../../app/scoring/factor-curves";
import type { FactorId } from "../../app/scoring/factors";
import { adoptVersion, createWeightSet, saveWeightSetVersion } from "../../app/weight-sets.server";
import { demoUsers } from "./demo-data";

function edit(base: WeightSetContent, changes: Partial<Record<FactorId, { weight?: number; curve?: FactorCurve }>>): WeightSetContent {
  const c = structuredClone(base);
  for (const f of c.factors) {
    const ch = changes[f.factor];
    if (ch?.weight !== undefined) f.weight = ch.weight;
    if (ch?.curve) f.curve = ch.curve;
  }
  return c;
}

/** Version 1 of "Estuary foragers": the catalogue's starting set with the two demo periods. */
export function estuaryForagersV1(): WeightSetContent {
  const c = defaultWeightSetContent();
  c.periods = [
    { name: "Late glacial coast", youngKa: 12, oldKa: 16, rule: "zero" },
    { name: "Early Holocene coast", youngKa: 8, oldKa: 12, rule: "zero" },
  ];
  return c;
}

/** Version 2: river mouths and the intertidal band weigh more. */
export function estuaryForagersV2(): WeightSetContent {
  return edit(estuaryForagersV1(), {
    dist_river_mouth: { weight: 3 },
    dist_intertidal: { weight: 1 },
  });
}

/** "Valley hunters": the fork's second version — streams and confluences up, the shoreline down. */
export function valleyHuntersV2(): WeightSetContent {
  return edit(estuaryForagersV2(), {
    dist_stream: { weight: 4, curve: { kind: "j-shaped", direction: "decreasing", fullUntil: 150, halfAt: 1200 } },
    dist_confluence: { weight: 3, curve: { kind: "j-shaped", direction: "decreasing", fullUntil: 200, halfAt: 1500 } },
    dist_shoreline: { weight: 1, curve: { kind: "sigmoid", direction: "decreasing", fullUntil: 500, zeroAt: 6000 } },
    dist_river_mouth: { weight: 1 },
    dist_intertidal: { weight: 0 },
    slope: { weight: 2, curve: { kind: "linear", direction: "decreasing", fullUntil: 3, zeroAt: 20 } },
  });
}

/**
 * Seeds the two demo weight sets into the demo project — only into a project that has never had a
 * weight set (none now, none in its audit log), so an installation seeded before weight sets
 * existed gets them on its next start, and a team that deleted them does not get them back.
 * Returns what it did, in words for the seed's log.
 */
export async function seedDemoWeightSets(projectId: number): Promise<string> {
  const [set] = await db().select({ id: weightSets.id }).from(weightSets).where(eq(weightSets.projectId, projectId)).limit(1);
  const [trace] = await db().select({ id: auditLog.id }).from(auditLog).where(and(eq(auditLog.projectId, projectId), like(auditLog.action, "weight\\_set.%"))).limit(1);
  if (set || trace) return "the demo project has (or had) weight sets: none seeded";
  const emailOf = (role: string) => demoUsers.find((u) => u.role === role)!.email;
  const rows = await db().select({ id: users.id, email: users.email }).from(users).where(inArray(users.email, [emailOf("analyst"), emailOf("lead")]));
  const idOf = (role: string) => rows.find((r) => r.email === emailOf(role))!.id;
  const analyst = idOf("analyst");
  const lead = idOf("lead");

  const { set: estuary } = await createWeightSet({
    projectId,
    name: "Estuary foragers",
    description: "Camps on the coast of the time, by river mouths and sheltered water.",
    content: estuaryForagersV1(),
    note: "The catalogue's starting weights, with the two coastal periods we agreed on.",
    userId: analyst,
  });
  const estuaryV2 = await saveWeightSetVersion({
    weightSetId: estuary.id,
    expectedVersion: 1,
    content: estuaryForagersV2(),
    note: "River mouths and the intertidal band up: the outer-valley cores put shell middens at the old estuary.",
    userId: lead,
  });
  const { set: valley } = await createWeightSet({
    projectId,
    name: "Valley hunters",
    description: "Inland camps along the drowned valleys, by streams and where they meet.",
    forkFromVersionId: estuaryV2.id,
    note: "An inland alternative to compare against.",
    userId: analyst,
  });
  await saveWeightSetVersion({
    weightSetId: valley.id,
    expectedVersion: 1,
    content: valleyHuntersV2(),
    note: "Streams and confluences up, the shoreline down; steeper valley sides allowed.",
    userId: analyst,
  });
  await adoptVersion({
    projectId,
    versionId: estuaryV2.id,
    rationale: "Version 2 fits the in-situ finds and the positive cores best; we score the lease blocks with it until the next survey season.",
    userId: lead,
  });
  return `weight sets "Estuary foragers" (2 versions, version 2 adopted) and "Valley hunters" (a fork, 2 versions)`;
}
