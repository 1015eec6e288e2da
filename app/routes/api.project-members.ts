// GET /api/projects/:projectId/members — members (and, for owners and leads, pending invitations).
// POST — invite: { "email": "…", "role": "analyst" } (owners and leads).
import { requireProjectAccess } from "~/permissions.server";
import { inviteMember } from "~/projects.server";
import { memberListing } from "~/members.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { invitationFields } from "~/validation";
import type { Route } from "./+types/api.project-members";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "members.read");
  return Response.json(await memberListing(project.id, role));
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "members.manage");
  if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
  return apiAction(async () => {
    const f = await readJson(request, invitationFields.strict());
    await inviteMember(identity.user, role, project, f, { clientAddress: context?.clientAddress });
    return Response.json({ invited: { email: f.email, role: f.role } }, { status: 201 });
  });
}
