// Seeds the invented demonstration (design §11) into an empty database; does nothing otherwise:
// the demo users and project, the demo evidence (through the same readers as any upload), and a
// first reconstruction queued for the worker. Everything here is made up.
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { and, eq, sql } from "drizzle-orm";
import { db, pool } from "../app/db.server";
import { memberships, projects, siteRecords, users } from "../app/db/schema";
import { hashPassword } from "../app/auth.server";
import { recordAudit } from "../app/audit.server";
import { ingestUpload } from "../app/datasets.server";
import { startReconstruction } from "../app/reconstructions.server";
import { stopBoss } from "../jobs/boss.server";
import { demoProject, demoUsers } from "./demo/demo-data";
import { demoFiles } from "./demo/demo-files";
import { seedDemoWeightSets } from "./demo/demo-weight-sets";

if (!process.env.DATABASE_URL) {
  console.error("seed: DATABASE_URL is not set");
  process.exit(2);
}

try {
  const [{ n }] = await db().select({ n: sql<number>`(select count(*) from ${projects}) + (select count(*) from ${users})` }).from(sql`(select 1) as one`);
  if (Number(n) > 0) {
    console.log("[seed] the database already holds projects or users: nothing seeded");
    // Parts of the demo added since an installation was seeded (each checks for itself).
    const [demo] = await db().select({ id: projects.id }).from(projects).where(and(eq(projects.slug, demoProject.slug), eq(projects.isDemo, true)));
    if (demo) console.log(`[seed] demo project: ${await seedDemoWeightSets(demo.id)}`);
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
    const tmp = await fs.mkdtemp(path.join(os.tmpdir(), "lowstand-demo-"));
    const ids: Record<string, number> = {};
    try {
      for (const f of demoFiles()) {
        const filePath = path.join(tmp, f.fileName);
        await fs.writeFile(filePath, f.bytes);
        const d = await ingestUpload(project, analystId, {
          fields: { kind: f.kind, name: f.name, ...f.fields },
          file: { path: filePath, size: f.bytes.byteLength, originalName: f.fileName, mimeType: "application/octet-stream" },
          discard: () => fs.rm(filePath, { force: true }),
        });
        ids[f.kind] = d.id;
      }
    } finally {
      await fs.rm(tmp, { recursive: true, force: true });
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
    console.log(`[seed] seeded the demo project "${demoProject.name}", ${demoUsers.length} demo users and ${Object.keys(ids).length} datasets; reconstruction ${reconstruction.id} queued; ${weights} (${Date.now() - t0} ms)`);
  }
} finally {
  await stopBoss();
  await pool().end();
}
