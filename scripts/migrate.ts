// Applies the SQL migrations in drizzle/ to DATABASE_URL (or the URL given as the first argument).
import { drizzle } from "drizzle-orm/node-postgres";
import { migrate } from "drizzle-orm/node-postgres/migrator";
import pg from "pg";
import path from "node:path";

const url = process.argv[2] ?? process.env.DATABASE_URL;
if (!url) {
  console.error("migrate: DATABASE_URL is not set");
  process.exit(2);
}
const client = new pg.Client({ connectionString: url, application_name: "lowstand-migrate" });
await client.connect();
try {
  // One migrator at a time per database, even when several processes start together.
  await client.query("select pg_advisory_lock(7310001)");
  await migrate(drizzle(client), { migrationsFolder: path.resolve(import.meta.dirname, "../drizzle") });
  await client.query("select pg_advisory_unlock(7310001)");
} finally {
  await client.end();
}
console.log(`[migrate] ${new URL(url).pathname.slice(1)} is up to date`);
