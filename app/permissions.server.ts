// The one place a request's right to act on a project is decided. Every project loader, action
// and API route calls requireProjectAccess with the capability it needs.
import { and, eq } from "drizzle-orm";
import { db } from "./db.server";
import { memberships, projects } from "./db/schema";
import { can, ROLE_LABELS, type Capability, type Role } from "./permissions";
import { requireIdentity, type Identity } from "./auth.server";
import { refusal } from "./security.server";

export interface ProjectAccess {
  identity: Identity;
  project: typeof projects.$inferSelect;
  role: Role;
}

const CAPABILITY_WORDS: Record<Capability, string> = {
  "project.read": "read this project",
  "project.edit": "edit this project",
  "project.delete": "delete this project",
  "members.read": "see the members",
  "members.manage": "manage members",
  "audit.read": "read the audit log",
  "data.upload": "upload data",
  "runs.start": "start runs",
  "sites.readExact": "see exact site positions",
  "sites.export": "export site locations",
  "reviews.sign": "sign reviews",
  "weights.edit": "edit weight sets",
  "weights.adopt": "adopt a weight set for the project",
  "models.read": "see trained-model results",
  "uncertainty.run": "run uncertainty analyses",
  "discussion.comment": "comment",
};

/**
 * Resolves the signed-in identity, the project named by `projectIdParam` and the caller's role.
 * Not signed in: redirect to sign-in (pages) or 401 (API). Not a member, or no such project: 404
 * (whether a project exists is itself not disclosed). A member without the capability: 403.
 */
export async function requireProjectAccess(request: Request, projectIdParam: string | undefined, capability: Capability): Promise<ProjectAccess> {
  const identity = await requireIdentity(request);
  const notFound = () => refusal(request, 404, "no_such_project", "There is no project here, or you are not a member of it.");
  if (!projectIdParam || !/^\d{1,9}$/.test(projectIdParam)) throw notFound();
  const [row] = await db()
    .select({ project: projects, role: memberships.role })
    .from(projects)
    .innerJoin(memberships, and(eq(memberships.projectId, projects.id), eq(memberships.userId, identity.user.id)))
    .where(eq(projects.id, Number(projectIdParam)))
    .limit(1);
  if (!row) throw notFound();
  if (!can(row.role, capability)) {
    throw refusal(request, 403, "role_may_not", `As ${ROLE_LABELS[row.role].toLowerCase()} you may not ${CAPABILITY_WORDS[capability]}. Ask a lead of the project.`);
  }
  return { identity, project: row.project, role: row.role };
}
