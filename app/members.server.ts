// The shape of a project's member list as pages and the API show it.
import { listMembers, listPendingInvitations } from "./projects.server";
import { can, type Role } from "./permissions";

export async function memberListing(projectId: number, role: Role) {
  const members = (await listMembers(projectId)).map((m) => ({ ...m, since: m.since.toISOString() }));
  const invitations = can(role, "members.manage")
    ? (await listPendingInvitations(projectId)).map((i) => ({ ...i, createdAt: i.createdAt.toISOString(), expiresAt: i.expiresAt.toISOString() }))
    : [];
  return { members, invitations };
}

export type MemberListing = Awaited<ReturnType<typeof memberListing>>;
