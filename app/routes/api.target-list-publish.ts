// POST /api/target-lists/:id/publish — a lead or owner (project.edit: design §9 "publish target
// lists") freezes the list: status published, publishedHash = SHA-256 of the canonical JSON of the
// targets and the plan; audit-logged. 409 when already published.
import { requireTargetListAccess } from "~/resource-access.server";
import { publishTargetList } from "~/target-lists.server";
import { apiAction, methodNotAllowed } from "~/route-helpers.server";
import type { Route } from "./+types/api.target-list-publish";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireTargetListAccess(request, params.id, "project.read");
  return methodNotAllowed(["POST"]);
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, identity, listId } = await requireTargetListAccess(request, params.id, "project.edit");
  if (request.method !== "POST") return methodNotAllowed(["POST"]);
  return apiAction(async () => {
    const row = await publishTargetList(listId, project.id, identity.user.id, { clientAddress: context?.clientAddress });
    return Response.json({ targetList: { id: row.id, status: row.status, publishedHash: row.publishedHash, publishedAt: row.publishedAt?.toISOString() ?? null } });
  });
}
