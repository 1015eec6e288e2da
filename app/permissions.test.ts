import { describe, expect, it } from "vitest";
import { ROLES, can, mayAssignRole } from "./permissions";

describe("role grants (design §9 table)", () => {
  it("lets every role read, and nobody without a role", () => {
    for (const r of ROLES) expect(can(r, "project.read")).toBe(true);
    expect(can(null, "project.read")).toBe(false);
  });
  it("keeps exact site positions from viewers (design §9: generalised for viewers)", () => {
    expect(ROLES.filter((r) => can(r, "sites.readExact"))).toEqual(["owner", "lead", "analyst", "reviewer"]);
  });
  it("gives member management to owners and leads only (design §9: lead manages members)", () => {
    expect(ROLES.filter((r) => can(r, "members.manage"))).toEqual(["owner", "lead"]);
  });
  it("gives uploads and runs to analysts and above, never reviewers or viewers", () => {
    expect(ROLES.filter((r) => can(r, "data.upload"))).toEqual(["owner", "lead", "analyst"]);
  });
  it("keeps deleting the project to owners (design §9)", () => {
    expect(ROLES.filter((r) => can(r, "project.delete"))).toEqual(["owner"]);
  });
});

describe("mayAssignRole", () => {
  it("lets a lead manage non-owners but never make or touch an owner", () => {
    expect(mayAssignRole("lead", "analyst", "viewer")).toBe(true);
    expect(mayAssignRole("lead", "owner", "viewer")).toBe(false);
    expect(mayAssignRole("lead", "viewer", "owner")).toBe(false);
    expect(mayAssignRole("owner", "owner", "lead")).toBe(true);
    expect(mayAssignRole("analyst", "viewer", null)).toBe(false);
  });
});
