// Where a project stands (app/overview.server.ts) with the real database: an empty project teaches
// the first step by role; a bathymetry upload moves the next step on to reconstructing; known sites
// are counted only for roles that see them exactly, never counting records their community withheld;
// the trained model's stage is never shown below analyst.
import { beforeAll, describe, expect, it } from "vitest";
import { db } from "~/db.server";
import { siteRecords } from "~/db/schema";
import { createApiToken } from "~/auth.server";
import { projectStanding } from "~/overview.server";
import { shelfTiff, uploadDataset } from "../tests/support/small-shelf";
import { buildWorld, type World } from "../tests/support/world";

let world: World;
const stage = async (role: Parameters<typeof projectStanding>[1], key: string) => (await projectStanding(world.projectId, role)).find((s) => s.key === key);

beforeAll(async () => {
  world = await buildWorld("ov");
});

describe("where the project stands", () => {
  it("teaches the first step of an empty project, in words that fit the role", async () => {
    const lead = await projectStanding(world.projectId, "lead");
    expect(lead.map((s) => s.key)).toEqual(["evidence", "landscape", "weights", "scoring", "models", "uncertainty", "targets", "review"]);
    expect(lead.every((s) => s.state === "to-do")).toBe(true);
    expect(lead[0].next).toMatch(/^Upload a bathymetry grid/);
    expect((await stage("viewer", "evidence"))!.next).toMatch(/An analyst or lead .* uploads the bathymetry grid/);
    // later stages name no step before their inputs exist
    expect(lead.find((s) => s.key === "landscape")!.next).toBeNull();
  });

  it("never shows the trained model's stage below analyst", async () => {
    expect((await projectStanding(world.projectId, "viewer")).some((s) => s.key === "models")).toBe(false);
    expect((await projectStanding(world.projectId, "reviewer")).some((s) => s.key === "models")).toBe(true);
  });

  it("moves on to reconstructing once a bathymetry grid is in, and counts known sites only for those who see them, without withheld ones", async () => {
    const token = (await createApiToken(world.userIds.analyst, "overview")).token;
    const datasetId = await uploadDataset(world, token, "bathymetry", shelfTiff(), "ov-shelf.tif", { sign: "elevation_positive_up", datum: "MSL", offset_to_msl_m: "0" });
    await db().insert(siteRecords).values([
      { projectId: world.projectId, datasetId, rowNumber: 1, label: "open place", x: 480_100, y: 5_029_900, precisionM: 5, context: "in_situ" },
      { projectId: world.projectId, datasetId, rowNumber: 2, label: "withheld place", x: 480_200, y: 5_029_800, precisionM: 5, context: "in_situ", visibility: "withheld", community: "Test shore families" },
    ]);
    const evidence = (await stage("analyst", "evidence"))!;
    expect(evidence.state).toBe("ready");
    expect(evidence.summary).toMatch(/^1 dataset; 1 known-site record;/);
    expect((await stage("viewer", "evidence"))!.summary).toMatch(/known sites shown generalised/);
    expect((await stage("viewer", "evidence"))!.summary).not.toMatch(/known-site record/);
    const landscape = (await stage("analyst", "landscape"))!;
    expect(landscape).toMatchObject({ state: "to-do", path: "reconstructions" });
    expect(landscape.next).toMatch(/^Reconstruct the shelf/);
    expect((await stage("viewer", "landscape"))!.next).toBeNull(); // a viewer cannot start one
  });
});
