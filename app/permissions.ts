// Who may do what in a project (design §9). Pure: used by the server to decide and by pages to
// show or hide controls. Every loader, action and API route asks `can` through
// permissions.server.ts; nothing else decides.

export const ROLES = ["owner", "lead", "analyst", "reviewer", "viewer"] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
  owner: "Owner",
  lead: "Lead",
  analyst: "Analyst",
  reviewer: "Reviewer",
  viewer: "Viewer",
};

export const ROLE_DUTIES: Record<Role, string> = {
  owner: "everything, including deleting the project and transferring ownership",
  lead: "manage members, adopt weight sets, publish target lists, export site locations",
  analyst: "upload data, run reconstructions, scorings and models, edit weight sets",
  reviewer: "read everything, comment, open and sign reviews",
  viewer: "read maps and published results; sees known sites only generalised",
};

export type Capability =
  | "project.read"
  | "project.edit"
  | "project.delete"
  | "members.read"
  | "members.manage"
  | "audit.read"
  | "data.upload"
  | "runs.start"
  | "sites.readExact"
  | "sites.export"
  | "reviews.sign"
  | "weights.edit"
  | "weights.adopt"
  | "models.read"
  | "uncertainty.run"
  | "discussion.comment";

const GRANTS: Record<Capability, readonly Role[]> = {
  "project.read": ROLES,
  "project.edit": ["owner", "lead"],
  "project.delete": ["owner"],
  "members.read": ROLES,
  "members.manage": ["owner", "lead"],
  "audit.read": ["owner", "lead", "reviewer"],
  "data.upload": ["owner", "lead", "analyst"],
  "runs.start": ["owner", "lead", "analyst"],
  "sites.readExact": ["owner", "lead", "analyst", "reviewer"],
  "sites.export": ["owner", "lead"],
  "reviews.sign": ["owner", "reviewer"],
  /** create, edit, fork, restore and delete weight sets (design §9: analysts edit weight sets) */
  "weights.edit": ["owner", "lead", "analyst"],
  /** choose the project's adopted weight-set version */
  "weights.adopt": ["owner", "lead"],
  /** trained-model rasters peak on exact site positions: never below analyst (design §9) */
  "models.read": ["owner", "lead", "analyst", "reviewer"],
  /** a regulator tests how sure the potential is (issue 12): reviewers run uncertainty analyses too */
  "uncertainty.run": ["owner", "lead", "analyst", "reviewer"],
  /** comment on reviews and in weighing sessions (reviewer, lead, analyst; viewers read) */
  "discussion.comment": ["owner", "lead", "analyst", "reviewer"],
};

export function can(role: Role | null | undefined, capability: Capability): boolean {
  return !!role && GRANTS[capability].includes(role);
}

/**
 * May `actor` give `target` role to someone, or change/remove someone who holds `current`?
 * Owners may do anything; leads manage everyone except owners and may not make owners.
 */
export function mayAssignRole(actor: Role, target: Role, current?: Role | null): boolean {
  if (actor === "owner") return true;
  if (actor === "lead") return target !== "owner" && current !== "owner";
  return false;
}

export function isRole(v: unknown): v is Role {
  return typeof v === "string" && (ROLES as readonly string[]).includes(v);
}
