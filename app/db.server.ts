// The one PostgreSQL pool of this process, and the Drizzle handle over it.
import { drizzle } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "./db/schema";

function databaseUrl(): string {
  const url = process.env.DATABASE_URL;
  if (!url) {
    throw new Error("DATABASE_URL is not set: start the product with `npm start`, which sets it, or export it.");
  }
  return url;
}

const globalForDb = globalThis as unknown as { lowstandPool?: pg.Pool };

/** Created on first use and reused (also across dev-server module reloads). */
export function pool(): pg.Pool {
  if (!globalForDb.lowstandPool) {
    const p = new pg.Pool({
      connectionString: databaseUrl(),
      max: Number(process.env.DB_POOL_MAX ?? 10),
      connectionTimeoutMillis: 5_000,
      idleTimeoutMillis: 30_000,
      application_name: "lowstand-web",
    });
    // An idle client losing its connection must not crash the process; the next query reconnects.
    p.on("error", (err) => console.error("[db] idle client error:", err.message));
    globalForDb.lowstandPool = p;
  }
  return globalForDb.lowstandPool;
}

export function db() {
  return drizzle(pool(), { schema });
}

export type Db = ReturnType<typeof db>;

/** True when the database answers a trivial query within `timeoutMs`. */
export async function databaseAnswers(timeoutMs = 2_000): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  try {
    const probe = pool().query("select 1");
    const timeout = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error("timeout")), timeoutMs);
    });
    await Promise.race([probe, timeout]);
    return true;
  } catch {
    return false;
  } finally {
    clearTimeout(timer);
  }
}
