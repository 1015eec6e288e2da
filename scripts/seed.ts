// Seeds the invented demonstration (design §11) into an empty database; does nothing otherwise.
// Everything here is made up: the shelf, the coast, the people. It sits in UTM zone 33S over open
// Southern Ocean, far from any real coast.
import pg from "pg";
import { drizzle } from "drizzle-orm/node-postgres";
import { sql } from "drizzle-orm";
import { projects } from "../app/db/schema";
import { demoProject } from "./demo/demo-data";

const url = process.env.DATABASE_URL;
if (!url) {
  console.error("seed: DATABASE_URL is not set");
  process.exit(2);
}
const pool = new pg.Pool({ connectionString: url, max: 2 });
const db = drizzle(pool);
try {
  const [{ count }] = await db.select({ count: sql<number>`count(*)::int` }).from(projects);
  if (count > 0) {
    console.log("[seed] the database already holds projects: nothing seeded");
  } else {
    await db.insert(projects).values(demoProject);
    console.log(`[seed] seeded the demo project "${demoProject.name}"`);
  }
} finally {
  await pool.end();
}
