// PATCH /api/targets/:id (JSON; analysts and up: data.upload — recording a core is data entry) —
// move a target of a published list forward: { status: "cored", core: {...} } then { status:
// "result", result: {...} } (or both at once); the core record of design §2 (app/evidence/README.md
// cores columns) and the result. Never backwards (409); drafts refused (409); audit-logged.
import { requireTargetAccess } from "~/resource-access.server";
import { targetPatch, updateTarget } from "~/target-lists.server";
import { readJson } from "~/api.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.target";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireTargetAccess(request, params.id, "project.read");
  return methodNotAllowed(["PATCH"]);
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, targetId } = await requireTargetAccess(request, params.id, "data.upload");
  if (request.method !== "PATCH") return methodNotAllowed(["PATCH"]);
  return apiAction(async () => {
    const body = await readJson(request, targetPatch);
    const row = await updateTarget(targetId, project.id, identity.user.id, body, { clientAddress: context?.clientAddress });
    return Response.json({ target: { id: row.id, waypoint: row.waypoint, status: row.status, core: row.core, updatedAt: row.updatedAt.toISOString() } });
  });
}
