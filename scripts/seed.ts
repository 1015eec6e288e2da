// Seeds the invented demonstration (design §11) into an empty database; does nothing otherwise.
// Everything here is made up: the shelf, the coast, the people.
import { sql } from "drizzle-orm";
import { db, pool } from "../app/db.server";
import { memberships, projects, users } from "../app/db/schema";
import { hashPassword } from "../app/auth.server";
import { recordAudit } from "../app/audit.server";
import { demoProject, demoUsers } from "./demo/demo-data";

if (!process.env.DATABASE_URL) {
  console.error("seed: DATABASE_URL is not set");
  process.exit(2);
}
try {
  const [{ n }] = await db().select({ n: sql<number>`(select count(*) from ${projects}) + (select count(*) from ${users})` }).from(sql`(select 1) as one`);
  if (Number(n) > 0) {
    console.log("[seed] the database already holds projects or users: nothing seeded");
  } else {
    const hashes = await Promise.all(demoUsers.map((u) => hashPassword(u.password)));
    await db().transaction(async (tx) => {
      const inserted = await tx
        .insert(users)
        .values(demoUsers.map((u, i) => ({ email: u.email, name: u.name, passwordHash: hashes[i], mayCreateProjects: u.mayCreateProjects })))
        .returning({ id: users.id, email: users.email });
      const idOf = new Map(inserted.map((r) => [r.email, r.id]));
      const [project] = await tx.insert(projects).values({ ...demoProject, createdBy: idOf.get(demoUsers[0].email) }).returning();
      await tx.insert(memberships).values(demoUsers.map((u) => ({ projectId: project.id, userId: idOf.get(u.email)!, role: u.role })));
      await recordAudit(tx, { actorUserId: null, projectId: project.id, action: "project.seeded", detail: { demo: true } });
    });
    console.log(`[seed] seeded the demo project "${demoProject.name}" and ${demoUsers.length} demo users`);
  }
} finally {
  await pool().end();
}
