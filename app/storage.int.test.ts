// Both storage drivers do the same thing byte for byte. The S3 driver runs against a local fake
// S3 server started here (in place of a hosted service).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { randomBytes } from "node:crypto";
import { FsStore, makeKey, ObjectNotFound, readAll, S3Store, type ObjectStore } from "./storage.server";
import { startFakeS3, type FakeS3 } from "../tests/support/fake-s3";

let fake: FakeS3;
let dir: string;
const stores: Record<string, () => ObjectStore> = {};

beforeAll(async () => {
  fake = await startFakeS3();
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "lowstand-store-"));
  stores.fs = () => new FsStore(dir);
  stores.s3 = () => new S3Store(fake.bucket, { endpoint: fake.endpoint, accessKeyId: "test", secretAccessKey: "test" });
});
afterAll(async () => {
  await fake.close();
  await fs.rm(dir, { recursive: true, force: true });
});

for (const name of ["fs", "s3"]) {
  describe(`the ${name} driver`, () => {
    it("stores bytes and gives back exactly the same bytes, from a buffer and from a file", async () => {
      const s = stores[name]();
      const bytes = randomBytes(3 * 1024 * 1024 + 17); // not a multiple of any chunk size
      const k1 = makeKey("test", 1, "bin");
      await s.put(k1, new Uint8Array(bytes));
      expect(Buffer.compare(Buffer.from(await s.getBytes(k1)), bytes)).toBe(0);
      expect(Buffer.compare(await readAll(await s.get(k1)), bytes)).toBe(0);

      const file = path.join(dir, "upload.tmp");
      await fs.writeFile(file, bytes.subarray(0, 1_000_003));
      const k2 = makeKey("test", 1, "bin");
      await s.put(k2, { filePath: file });
      expect(Buffer.compare(Buffer.from(await s.getBytes(k2)), bytes.subarray(0, 1_000_003))).toBe(0);
    });

    it("says whether a key exists, deletes, and lists by prefix", async () => {
      const s = stores[name]();
      const k = makeKey("listing", 7, "txt");
      expect(await s.exists(k)).toBe(false);
      await s.put(k, new TextEncoder().encode("hello"));
      expect(await s.exists(k)).toBe(true);
      const listed = [];
      for await (const o of s.list("listing/p7/")) listed.push(o.key);
      expect(listed).toContain(k);
      await s.delete(k);
      expect(await s.exists(k)).toBe(false);
      await expect(s.get(k)).rejects.toBeInstanceOf(ObjectNotFound);
    });

    it("refuses keys that could escape the store", async () => {
      const s = stores[name]();
      await expect(s.put("../../etc/passwd", new Uint8Array(1))).rejects.toThrow(/unsafe storage key/);
      await expect(s.put("a/../../b", new Uint8Array(1))).rejects.toThrow(/unsafe storage key/);
    });
  });
}

it("makes keys from the server's randomness only", () => {
  const a = makeKey("uploads", 3, "tif");
  expect(a).toMatch(/^uploads\/p3\/\d{4}-\d\d-\d\d\/[0-9a-f]{24}\.tif$/);
  expect(makeKey("uploads", 3, "../../x")).toMatch(/\.x$/);
});
