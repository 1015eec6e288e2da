// Vitest setup for integration tests (*.int.test.ts): each test file gets its own database cloned
// from the migrated template, so files run in parallel without seeing each other's rows, and its
// own storage and upload folders.
import { afterAll } from "vitest";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { createTestDatabase, dropTestDatabase } from "./test-db";

const { name, url } = await createTestDatabase("int");
process.env.DATABASE_URL = url;
// Links in e-mails are built from PUBLIC_URL; tests use a fixed, unroutable origin.
process.env.PUBLIC_URL = "http://lowstand.test";
const scratch = await fs.mkdtemp(path.join(os.tmpdir(), "lowstand-int-"));
process.env.STORAGE_DRIVER = "fs";
process.env.STORAGE_DIR = path.join(scratch, "storage");
process.env.UPLOAD_TMP_DIR = path.join(scratch, "tmp");

afterAll(async () => {
  const g = globalThis as unknown as { lowstandPool?: import("pg").Pool };
  if (g.lowstandPool) {
    await g.lowstandPool.end();
    g.lowstandPool = undefined;
  }
  await dropTestDatabase(name);
  await fs.rm(scratch, { recursive: true, force: true });
});

// Mail goes nowhere unless a test starts its own catcher (tests/support/mail.ts): never to a
// catcher that a running `npm start` has on the default port.
process.env.SMTP_URL = "smtp://127.0.0.1:9";
