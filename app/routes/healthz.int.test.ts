import { afterEach, describe, expect, it } from "vitest";
import { loader } from "./healthz";

const g = globalThis as unknown as { lowstandPool?: import("pg").Pool };

describe("GET /healthz", () => {
  const realUrl = process.env.DATABASE_URL;
  afterEach(async () => {
    await g.lowstandPool?.end();
    g.lowstandPool = undefined;
    process.env.DATABASE_URL = realUrl;
  });

  it("answers 200 when the database answers", async () => {
    const res = await loader();
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ status: "ok", database: "up" });
  });

  it("answers 503 when the database does not", async () => {
    // A port nothing listens on: the probe must fail fast and say so, not hang or throw.
    process.env.DATABASE_URL = "postgres://lowstand:x@127.0.0.1:9/lowstand";
    const res = await loader();
    expect(res.status).toBe(503);
    expect(await res.json()).toMatchObject({ status: "unavailable", database: "down" });
  });
});
