// PATCH /api/projects/:projectId/members/:userId — change role and/or custodianship:
//   { "role": "reviewer" }, { "custodianFor": "Velmar shore families" } (null clears it).
// DELETE — remove the member (their sessions end). The last owner can be neither demoted nor removed.
import { z } from "zod";
import { requireProjectAccess } from "~/permissions.server";
import { changeMemberRole, removeMember, setCustodian } from "~/projects.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import { apiError } from "~/security.server";
import { communityName, role as roleRule } from "~/validation";
import type { Route } from "./+types/api.project-member";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireProjectAccess(request, params.projectId, "members.read");
  return methodNotAllowed(["PATCH", "DELETE"]);
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "members.manage");
  if (!/^\d{1,9}$/.test(params.userId)) return apiError(404, "not_a_member", "That person is not a member of this project.");
  const userId = Number(params.userId);
  const meta = { clientAddress: context?.clientAddress };
  return apiAction(async () => {
    if (request.method === "PATCH") {
      const f = await readJson(
        request,
        z
          .object({ role: roleRule.optional(), custodianFor: communityName.nullable().optional() })
          .strict()
          .refine((v) => v.role !== undefined || v.custodianFor !== undefined, "Send role, custodianFor or both."),
      );
      if (f.role) await changeMemberRole(identity.user, role, project.id, userId, f.role, meta);
      if (f.custodianFor !== undefined) await setCustodian(identity.user, project.id, userId, f.custodianFor ?? null, meta);
      return Response.json({ member: { userId, ...f } });
    }
    if (request.method === "DELETE") {
      await removeMember(identity.user, role, project.id, userId, meta);
      return new Response(null, { status: 204 });
    }
    return methodNotAllowed(["PATCH", "DELETE"]);
  });
}
