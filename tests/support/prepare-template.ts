// Run by scripts/test.sh before the tests: a freshly migrated template database, and stale test
// databases from interrupted runs removed (older than an hour, so a parallel run is left alone).
import pg from "pg";
import { execFileSync } from "node:child_process";
import path from "node:path";
import { TEMPLATE_DB, clusterUrl } from "./test-db";

const c = new pg.Client({ connectionString: clusterUrl("postgres") });
await c.connect();
try {
  await c.query(`DROP DATABASE IF EXISTS "${TEMPLATE_DB}" WITH (FORCE)`);
  await c.query(`CREATE DATABASE "${TEMPLATE_DB}"`);
  const stale = await c.query<{ datname: string }>(
    `SELECT datname FROM pg_database
      WHERE datname LIKE 'lowstand\\_%\\_%\\_%' AND datname <> $1
        AND (pg_stat_file('base/' || oid || '/PG_VERSION')).modification < now() - interval '1 hour'`,
    [TEMPLATE_DB],
  ).catch(() => ({ rows: [] as { datname: string }[] }));
  for (const { datname } of stale.rows) await c.query(`DROP DATABASE IF EXISTS "${datname}" WITH (FORCE)`);
} finally {
  await c.end();
}
execFileSync(process.execPath, [path.resolve(import.meta.dirname, "../../scripts/run-ts.mjs"), "scripts/migrate.ts", clusterUrl(TEMPLATE_DB)], {
  stdio: "inherit",
  cwd: path.resolve(import.meta.dirname, "../.."),
});
// pg-boss keeps its queue in schema "pgboss", which it creates on first start: do it once here, so
// every cloned test database has it (workers and the app would otherwise each install it).
const { default: PgBoss } = await import("pg-boss");
const queueBoss = new PgBoss({ connectionString: clusterUrl(TEMPLATE_DB), max: 1, supervise: false, schedule: false });
await queueBoss.start();
await queueBoss.stop({ graceful: false, wait: true });
