import { describe, expect, it } from "vitest";
import { db } from "~/db.server";
import { projects } from "~/db/schema";
import { loader } from "./home";

describe("home loader", () => {
  it("lists projects from the database by name", async () => {
    await db().insert(projects).values([
      { slug: "b-test", name: "Brenlow Flats", crsEpsg: 32733 },
      { slug: "a-test", name: "Alder Reach", crsEpsg: 32733, isDemo: true },
    ]);
    const data = await loader();
    expect(data.projects.map((p) => p.name)).toEqual(["Alder Reach", "Brenlow Flats"]);
    expect(data.projects[0]).toMatchObject({ isDemo: true, crsEpsg: 32733 });
  });

  it("refuses a second project with the same slug", async () => {
    await db().insert(projects).values({ slug: "dup", name: "One", crsEpsg: 32733 });
    await expect(db().insert(projects).values({ slug: "dup", name: "Two", crsEpsg: 32733 })).rejects.toThrow();
  });
});
