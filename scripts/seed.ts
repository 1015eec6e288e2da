// Seeds the invented demonstration (design §11) into an empty database; does nothing otherwise:
// the demo users and project, the demo evidence (through the same readers as any upload), and a
// first reconstruction queued for the worker. Everything here is made up.
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { and, eq, sql } from "drizzle-orm";
import { db, pool } from "../app/db.server";
import { auditLog, memberships, projects, siteRecords, users } from "../app/db/schema";
import { hashPassword } from "../app/auth.server";
import { recordAudit } from "../app/audit.server";
import { ingestUpload } from "../app/datasets.server";
import { startReconstruction } from "../app/reconstructions.server";
import { stopBoss } from "../jobs/boss.server";
import { demoProject, demoUsers } from "./demo/demo-data";
import { demoFiles, type DemoFile } from "./demo/demo-files";
import { seedDemoWeightSets } from "./demo/demo-weight-sets";

if (!process.env.DATABASE_URL) {
  console.error("seed: DATABASE_URL is not set");
  process.exit(2);
}

/** Ingests one demo file through the same reader and storage as any upload. */
async function ingestDemoFile(project: typeof projects.$inferSelect, userId: number, f: DemoFile) {
  const tmp = await fs.mkdtemp(path.join(os.tmpdir(), "lowstand-demo-"));
  try {
    const filePath = path.join(tmp, f.fileName);
    await fs.writeFile(filePath, f.bytes);
    return await ingestUpload(project, userId, {
      fields: { kind: f.kind, name: f.name, ...f.fields },
      file: { path: filePath, size: f.bytes.byteLength, originalName: f.fileName, mimeType: "application/octet-stream" },
      discard: () => fs.rm(filePath, { force: true }),
    });
  } finally {
    await fs.rm(tmp, { recursive: true, force: true });
  }
}

/**
 * Demo files added after an installation was seeded (the 2026 sites): uploaded as the demo analyst
 * into a demo project that has never had a dataset of that name (none now, none in its audit log),
 * so a team that deleted one does not get it back. Returns what it did, in words for the log.
 */
async function seedLaterDemoFiles(projectId: number): Promise<string> {
  const [project] = await db().select().from(projects).where(eq(projects.id, projectId));
  const [analyst] = await db().select({ id: users.id }).from(users).where(eq(users.email, demoUsers.find((u) => u.role === "analyst")!.email));
  const added: string[] = [];
  for (const f of demoFiles().filter((d) => d.addedLater)) {
    const [trace] = await db()
      .select({ id: auditLog.id })
      .from(auditLog)
      .where(and(eq(auditLog.projectId, projectId), eq(auditLog.action, "dataset.uploaded"), sql`${auditLog.detail}->>'name' = ${f.name}`))
      .limit(1);
    if (trace || !analyst) continue;
    await ingestDemoFile(project, analyst.id, f);
    added.push(`"${f.name}"`);
  }
  return added.length ? `added ${added.join(", ")}` : "no demo files to add";
}

try {
  const [{ n }] = await db().select({ n: sql<number>`(select count(*) from ${projects}) + (select count(*) from ${users})` }).from(sql`(select 1) as one`);
  if (Number(n) > 0) {
    console.log("[seed] the database already holds projects or users: nothing seeded");
    // Parts of the demo added since an installation was seeded (each checks for itself).
    const [demo] = await db().select({ id: projects.id }).from(projects).where(and(eq(projects.slug, demoProject.slug), eq(projects.isDemo, true)));
    if (demo) console.log(`[seed] demo project: ${await seedDemoWeightSets(demo.id)}; ${await seedLaterDemoFiles(demo.id)}`);
  } else {
    const t0 = Date.now();
    const hashes = await Promise.all(demoUsers.map((u) => hashPassword(u.password)));
    const { project, analystId } = await db().transaction(async (tx) => {
      const inserted = await tx
        .insert(users)
        .values(demoUsers.map((u, i) => ({ email: u.email, name: u.name, passwordHash: hashes[i], mayCreateProjects: u.mayCreateProjects })))
        .returning({ id: users.id, email: users.email });
      const idOf = new Map(inserted.map((r) => [r.email, r.id]));
      const [p] = await tx.insert(projects).values({ ...demoProject, createdBy: idOf.get(demoUsers[0].email) }).returning();
      await tx.insert(memberships).values(demoUsers.map((u) => ({ projectId: p.id, userId: idOf.get(u.email)!, role: u.role })));
      await recordAudit(tx, { actorUserId: null, projectId: p.id, action: "project.seeded", detail: { demo: true } });
      return { project: p, analystId: idOf.get(demoUsers.find((u) => u.role === "analyst")!.email)! };
    });

    // The demo evidence goes through the same readers and storage as any upload.
    const ids: Record<string, number> = {};
    const files = demoFiles();
    for (const f of files) {
      const d = await ingestDemoFile(project, analystId, f);
      ids[f.kind] ??= d.id;
    }

    // The lead keeps one in-situ site back as the hold-out, hidden from the team's validation
    // until it is revealed on the Validation page (issue 10).
    await db().update(siteRecords).set({ heldOut: true }).where(and(eq(siteRecords.projectId, project.id), eq(siteRecords.label, "VEL-002")));

    const { reconstruction } = await startReconstruction(project, analystId, {
      name: "Demo: last deglaciation",
      bathymetryDatasetId: ids.bathymetry,
      horizonDatasetId: ids.horizon_picks,
      surveyLinesDatasetId: ids.survey_lines,
      curveId: null,
      agesKa: [20, 16, 14, 12, 10, 8],
      oceanSides: ["east"],
      tidalRangeM: 2,
      streamThresholdKm2: 0.5,
      unassessedBeyondM: 600,
      verticalResolutionM: 0.3,
    });
    const weights = await seedDemoWeightSets(project.id);
    console.log(`[seed] seeded the demo project "${demoProject.name}", ${demoUsers.length} demo users and ${files.length} datasets; reconstruction ${reconstruction.id} queued; ${weights} (${Date.now() - t0} ms)`);
  }
} finally {
  await stopBoss();
  await pool().end();
}
