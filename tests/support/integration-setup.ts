// Vitest setup for integration tests (*.int.test.ts): each test file gets its own database cloned
// from the migrated template, so files run in parallel without seeing each other's rows.
import { afterAll } from "vitest";
import { createTestDatabase, dropTestDatabase } from "./test-db";

const { name, url } = await createTestDatabase("int");
process.env.DATABASE_URL = url;

afterAll(async () => {
  const g = globalThis as unknown as { lowstandPool?: import("pg").Pool };
  if (g.lowstandPool) {
    await g.lowstandPool.end();
    g.lowstandPool = undefined;
  }
  await dropTestDatabase(name);
});

// Links in e-mails are built from PUBLIC_URL; tests use a fixed, unroutable origin.
process.env.PUBLIC_URL = "http://lowstand.test";
